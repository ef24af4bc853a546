/**
 * GET /api/programs/:programId/sweeps/:sweepId/fronts[?fastestWithinEnergy_Wh=500]
 * → { sweepId, status, scenarios: [{ axes, baseline, front, knee, rule, … }] }.
 * fastestWithinEnergy_Wh re-picks the "fastest within" rule for this request only.
 */
import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { requireProgramRole } from '$lib/server/auth/guard';
import { apiHandler, numberParam } from '$lib/server/sweeps/api';
import { getProgramSweep, sweepFronts } from '$lib/server/sweeps/results';

export const GET: RequestHandler = ({ locals, params, url }) =>
	apiHandler(async () => {
		const { program } = await requireProgramRole(locals, params.programId, 'read');
		const sweep = await getProgramSweep(program.id, params.sweepId);
		const budget = numberParam(url, 'fastestWithinEnergy_Wh', { min: 0 });
		return json(await sweepFronts(sweep, { fastestWithinEnergy_Wh: budget }));
	});
