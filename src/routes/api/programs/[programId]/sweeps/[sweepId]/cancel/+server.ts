/** POST /api/programs/:programId/sweeps/:sweepId/cancel → { id, status } | 409 when it already ended. Edit role. */
import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { requireProgramRole } from '$lib/server/auth/guard';
import { apiHandler } from '$lib/server/sweeps/api';
import { SweepInputError } from '$lib/server/sweeps/request';
import { getProgramSweep } from '$lib/server/sweeps/results';
import { cancelSweep } from '$lib/server/sweeps/service';

export const POST: RequestHandler = ({ locals, params }) =>
	apiHandler(async () => {
		const { program } = await requireProgramRole(locals, params.programId, 'edit');
		const sweep = await getProgramSweep(program.id, params.sweepId);
		if (!(await cancelSweep(sweep.id))) {
			await sweep.reload();
			throw new SweepInputError(`Sweep ${sweep.id} is already ${sweep.status}; only queued or running sweeps can be cancelled.`, 'sweepId', 409);
		}
		return json({ id: sweep.id, status: 'cancelled' });
	});
