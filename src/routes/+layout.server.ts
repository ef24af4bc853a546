import type { LayoutServerLoad } from './$types';
import { programsFor } from '$lib/server/auth/guard';

export const load: LayoutServerLoad = async ({ locals }) => {
	if (!locals.user) return { user: null, programs: [] };
	const { id, name, email, isAdmin } = locals.user;
	return { user: { id, name, email, isAdmin }, programs: await programsFor(locals.user) };
};
