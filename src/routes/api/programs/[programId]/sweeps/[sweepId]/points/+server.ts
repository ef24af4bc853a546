/**
 * GET /api/programs/:programId/sweeps/:sweepId/points[?scenario=0&front=1&limit=1000&offset=0]
 * → { total, points: PointView[] } (each with the engine's full summary). limit is 1 to 5000
 * (default 1000); page through larger sweeps with offset.
 */
import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { requireProgramRole } from '$lib/server/auth/guard';
import { apiHandler, numberParam } from '$lib/server/sweeps/api';
import { SweepInputError } from '$lib/server/sweeps/request';
import { getProgramSweep, sweepPoints } from '$lib/server/sweeps/results';

/** Largest page: about 5 MB of JSON; the sweep page reads one page of this size. */
const MAX_PAGE = 5000;

export const GET: RequestHandler = ({ locals, params, url }) =>
	apiHandler(async () => {
		const { program } = await requireProgramRole(locals, params.programId, 'read');
		const sweep = await getProgramSweep(program.id, params.sweepId);
		const front = url.searchParams.get('front');
		if (front !== null && !['0', '1', 'true', 'false'].includes(front))
			throw new SweepInputError('Query parameter front must be 1 or 0.', 'front');
		return json(
			await sweepPoints(sweep, {
				scenarioIndex: numberParam(url, 'scenario', { integer: true, min: 0 }),
				frontOnly: front === '1' || front === 'true',
				limit: numberParam(url, 'limit', { integer: true, min: 1, max: MAX_PAGE }),
				offset: numberParam(url, 'offset', { integer: true, min: 0, max: Number.MAX_SAFE_INTEGER })
			})
		);
	});
