/** GET /api/programs/:programId/sweeps/:sweepId → SweepStatusView (status, progress, inputs used). */
import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { requireProgramRole } from '$lib/server/auth/guard';
import { apiHandler } from '$lib/server/sweeps/api';
import { getProgramSweep, sweepStatus } from '$lib/server/sweeps/results';

export const GET: RequestHandler = ({ locals, params }) =>
	apiHandler(async () => {
		const { program } = await requireProgramRole(locals, params.programId, 'read');
		const sweep = await getProgramSweep(program.id, params.sweepId);
		return json(sweepStatus(sweep));
	});
