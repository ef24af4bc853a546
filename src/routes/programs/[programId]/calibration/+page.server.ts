import type { PageServerLoad } from './$types';
import { requireProgramRole } from '$lib/server/auth/guard';
import { Sweep } from '$lib/server/db/models/index';
import { cachedSweepCalibration } from '$lib/server/sweeps/results';
import { apiError } from '$lib/server/page-errors';
import type { CalibrationJsonDocument } from '$lib/engine/calibration';

export const load: PageServerLoad = async ({ locals, params, url }) => {
	const { program } = await requireProgramRole(locals, params.programId, 'read');
	const finished = await Sweep.findAll({ where: { program_id: program.id, status: 'done' }, order: [['id', 'DESC']], limit: 50 });
	const wanted = Number(url.searchParams.get('sweep'));
	const sweep = finished.find((s) => s.id === wanted) ?? finished[0] ?? null;
	const budgetRaw = url.searchParams.get('budget_kWh');
	const budget_kWh = budgetRaw && Number.isFinite(Number(budgetRaw)) && Number(budgetRaw) >= 0 ? Number(budgetRaw) : null;
	let doc: CalibrationJsonDocument | null = null;
	if (sweep) {
		const rule = budget_kWh != null ? { kind: 'fastest-within' as const, maxEnergy_Wh: budget_kWh * 1000 } : { kind: 'knee' as const };
		doc = JSON.parse(await apiError(() => cachedSweepCalibration(sweep, rule, 'json')));
	}
	return {
		sweeps: finished.map((s) => ({ id: s.id, name: s.name })),
		sweepId: sweep?.id ?? null,
		budget_kWh,
		rows: doc?.rows ?? [],
		units: doc?.units ?? null
	};
};
