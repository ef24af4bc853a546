/**
 * GET /api/programs/:programId/sweeps/:sweepId/fronts[?fastestWithinEnergy_Wh=500]
 * → { sweepId, status, scenarios: [{ axes, baseline, front, knee, rule, … }] }.
 * fastestWithinEnergy_Wh re-picks the "fastest within" rule for this request only.
 * A finished sweep's answer is cached and carries an ETag (304 when unchanged).
 */
import type { RequestHandler } from './$types';
import { requireProgramRole } from '$lib/server/auth/guard';
import { apiHandler, numberParam } from '$lib/server/sweeps/api';
import { getProgramSweep, sweepFronts } from '$lib/server/sweeps/results';
import { sweepResponse } from '$lib/server/sweeps/http-cache';

export const GET: RequestHandler = ({ locals, params, url, request }) =>
	apiHandler(async () => {
		const { program } = await requireProgramRole(locals, params.programId, 'read');
		const sweep = await getProgramSweep(program.id, params.sweepId);
		const budget = numberParam(url, 'fastestWithinEnergy_Wh', { min: 0 });
		return sweepResponse(request, sweep, `fronts:${budget ?? ''}`, async () => JSON.stringify(await sweepFronts(sweep, { fastestWithinEnergy_Wh: budget })));
	});
