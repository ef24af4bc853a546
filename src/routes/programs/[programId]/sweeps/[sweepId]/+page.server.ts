import { fail } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { requireProgramRole } from '$lib/server/auth/guard';
import { getProgramSweep, sweepStatus } from '$lib/server/sweeps/results';
import { cancelSweep, SweepInputError } from '$lib/server/sweeps/service';
import { apiError } from '$lib/server/page-errors';

export const load: PageServerLoad = async ({ locals, params }) => {
	const { program } = await requireProgramRole(locals, params.programId, 'read');
	const sweep = await apiError(() => getProgramSweep(program.id, params.sweepId));
	return { sweep: sweepStatus(sweep) };
};

export const actions: Actions = {
	cancel: async ({ locals, params }) => {
		const { program } = await requireProgramRole(locals, params.programId, 'edit');
		try {
			const sweep = await getProgramSweep(program.id, params.sweepId);
			if (!(await cancelSweep(sweep.id))) return fail(409, { message: `This sweep has already ended (${sweep.status}); nothing to cancel.` });
			return { done: 'Sweep cancelled. Results already stored are kept.' };
		} catch (e) {
			if (e instanceof SweepInputError) return fail(e.status, { message: e.message });
			throw e;
		}
	}
};
