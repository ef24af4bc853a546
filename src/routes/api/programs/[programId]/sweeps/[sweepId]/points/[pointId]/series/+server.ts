/**
 * GET /api/programs/:programId/sweeps/:sweepId/points/:pointId/series
 * → { pointId, source: 'stored' | 'recomputed', seriesInterval_s, series } (engine TimeSeries columns).
 * Baselines and front points are stored; any other point is recomputed from the sweep's inputs.
 */
import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { requireProgramRole } from '$lib/server/auth/guard';
import { apiHandler } from '$lib/server/sweeps/api';
import { getProgramSweep, pointSeries } from '$lib/server/sweeps/results';

export const GET: RequestHandler = ({ locals, params }) =>
	apiHandler(async () => {
		const { program } = await requireProgramRole(locals, params.programId, 'read');
		const sweep = await getProgramSweep(program.id, params.sweepId);
		return json(await pointSeries(sweep, params.pointId));
	});
