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
	const budgetRaw = (url.searchParams.get('budget_kWh') ?? '').trim().replace(',', '.');
	const ruleAsked: 'knee' | 'fastest-within' = url.searchParams.get('rule') === 'fastest-within' || (url.searchParams.get('rule') === null && budgetRaw !== '') ? 'fastest-within' : 'knee';
	const budgetValid = budgetRaw !== '' && Number.isFinite(Number(budgetRaw)) && Number(budgetRaw) >= 0;
	const budgetError =
		ruleAsked === 'fastest-within' && !budgetValid
			? budgetRaw === ''
				? 'Enter the energy budget in kWh for “fastest within”; the table below uses the knee rule until then.'
				: `Energy budget “${budgetRaw.slice(0, 20)}” is not a number of kWh (0 or more); the table below uses the knee rule until it is.`
			: null;
	const budget_kWh = ruleAsked === 'fastest-within' && budgetValid ? Number(budgetRaw) : null;
	let doc: CalibrationJsonDocument | null = null;
	if (sweep) {
		const rule = budget_kWh != null ? { kind: 'fastest-within' as const, maxEnergy_Wh: budget_kWh * 1000 } : { kind: 'knee' as const };
		doc = JSON.parse(await apiError(() => cachedSweepCalibration(sweep, rule, 'json')));
	}
	return {
		sweeps: finished.map((s) => ({ id: s.id, name: s.name })),
		sweepId: sweep?.id ?? null,
		budget_kWh,
		budgetText: budgetRaw,
		ruleAsked,
		budgetError,
		rows: doc?.rows ?? [],
		rule: doc?.rule ?? null,
		provenance: doc?.provenance ?? null,
		units: doc?.units ?? null
	};
};
