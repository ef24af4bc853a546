/**
 * GET /api/programs/:programId/sweeps/:sweepId/calibration?format=csv|json[&rule=knee|fastest-within&fastestWithinEnergy_Wh=500]
 * The calibration table (scenario axes → recommended lead time and set-point, time saved, energy)
 * as a download. rule defaults to knee; fastest-within uses the given budget or the sweep's own.
 * Cached per rule and format once the sweep is done, with an ETag (304 when unchanged).
 */
import type { RequestHandler } from './$types';
import { requireProgramRole } from '$lib/server/auth/guard';
import { apiHandler, numberParam } from '$lib/server/sweeps/api';
import { SweepInputError } from '$lib/server/sweeps/request';
import { calibrationKey, getProgramSweep, sweepCalibration } from '$lib/server/sweeps/results';
import { sweepResponse } from '$lib/server/sweeps/http-cache';
import type { CalibrationRule } from '$lib/engine/calibration';

export const GET: RequestHandler = ({ locals, params, url, request }) =>
	apiHandler(async () => {
		const { program } = await requireProgramRole(locals, params.programId, 'read');
		const sweep = await getProgramSweep(program.id, params.sweepId);
		const format = url.searchParams.get('format') ?? 'json';
		if (format !== 'csv' && format !== 'json') throw new SweepInputError(`format must be csv or json (got “${format.slice(0, 20)}”).`, 'format');
		const ruleName = url.searchParams.get('rule') ?? 'knee';
		let rule: CalibrationRule;
		if (ruleName === 'knee') rule = { kind: 'knee' };
		else if (ruleName === 'fastest-within') {
			const budget = numberParam(url, 'fastestWithinEnergy_Wh', { min: 0 }) ?? sweep.rule_max_energy_Wh ?? undefined;
			if (budget === undefined)
				throw new SweepInputError('rule=fastest-within needs an energy budget: add fastestWithinEnergy_Wh=… (watt-hours).', 'fastestWithinEnergy_Wh');
			rule = { kind: 'fastest-within', maxEnergy_Wh: budget };
		} else throw new SweepInputError(`rule must be knee or fastest-within (got “${ruleName.slice(0, 30)}”).`, 'rule');
		const filename = `sweep-${sweep.id}-calibration.${format}`;
		return sweepResponse(request, sweep, calibrationKey(rule, format), () => sweepCalibration(sweep, rule, format), {
			'content-type': format === 'csv' ? 'text/csv; charset=utf-8' : 'application/json; charset=utf-8',
			'content-disposition': `attachment; filename="${filename}"`
		});
	});
