import { redirect } from '@sveltejs/kit';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals, parent }) => {
	if (!locals.user) redirect(303, '/login');
	const { programs } = await parent();
	if (programs.length === 1) redirect(303, `/programs/${programs[0].id}`);
	return {};
};
