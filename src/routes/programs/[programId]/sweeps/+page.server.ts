import type { PageServerLoad } from './$types';
import { requireProgramRole } from '$lib/server/auth/guard';
import { listSweeps } from '$lib/server/sweeps/results';

export const load: PageServerLoad = async ({ locals, params }) => {
	const { program } = await requireProgramRole(locals, params.programId, 'read');
	return { sweeps: await listSweeps(program.id) };
};
