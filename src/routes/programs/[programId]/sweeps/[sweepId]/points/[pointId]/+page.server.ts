import { error, fail, redirect } from '@sveltejs/kit';
import { readForm } from '$lib/server/read-form';
import type { Actions, PageServerLoad } from './$types';
import { parseId, requireProgramRole } from '$lib/server/auth/guard';
import { getProgramSweep, pointView, sweepStatus } from '$lib/server/sweeps/results';
import { planFor } from '$lib/server/sweeps/service';
import { scenarioInputsFor } from '$lib/server/sweeps/inputs';
import { SweepPoint, SweepScenario, Strategy, StrategyEvent } from '$lib/server/db/models/index';
import { apiError } from '$lib/server/page-errors';
import { cleanText, StrategyError } from '$lib/server/strategies';
import { sequelize } from '$lib/server/db/index';
import { scenarioLabel } from '$lib/sweep-labels';

async function loadPoint(programId: number, sweepIdRaw: string, pointIdRaw: string) {
	const sweep = await apiError(() => getProgramSweep(programId, sweepIdRaw));
	const point = await SweepPoint.findOne({ where: { id: parseId(pointIdRaw, 'point'), sweep_id: sweep.id } });
	if (!point) error(404, `No such point in sweep ${sweep.id}.`);
	const scenario = await SweepScenario.findOne({ where: { sweep_id: sweep.id, scenario_index: point.scenario_index } });
	return { sweep, point, scenario };
}

export const load: PageServerLoad = async ({ locals, params }) => {
	const { program } = await requireProgramRole(locals, params.programId, 'read');
	const { sweep, point, scenario } = await loadPoint(program.id, params.sweepId, params.pointId);
	const plan = planFor(sweep);
	const axes = plan.scenarios[point.scenario_index];
	const inputs = scenarioInputsFor(plan.inputs, axes);
	const status = sweepStatus(sweep);
	const names = Object.fromEntries([...status.inputs.cells, ...status.inputs.packs].map((r) => [r.id, r.name]));
	const strategies = await Strategy.findAll({ where: { program_id: program.id, point_id: point.id }, order: [['id', 'DESC']] });
	return {
		sweep: { id: sweep.id, name: sweep.name, status: sweep.status },
		point: pointView(point),
		scenarioLabel: scenarioLabel(axes, names),
		baselineTimeToTarget_s: scenario?.baseline_time_to_target_s ?? null,
		isKnee: scenario?.knee_point_id === point.id,
		limits: {
			chargerMaxCurrent_A: inputs.scenario.charger.maxCurrent_A / inputs.pack.parallelCount,
			maxVoltage_V: inputs.cell.limits.maxVoltage_V,
			maxCellTemp_K: inputs.cell.limits.maxTemp_K,
			anodeMargin_V: inputs.cell.limits.anodePotentialMargin_V
		},
		strategies: strategies.map((s) => ({ id: s.id, title: s.title, state: s.state }))
	};
};

export const actions: Actions = {
	/** Promote this point to a strategy for review (thermal engineers). */
	promote: async ({ locals, params, request }) => {
		const { program, user } = await requireProgramRole(locals, params.programId, 'edit');
		const { sweep, point, scenario } = await loadPoint(program.id, params.sweepId, params.pointId);
		const form = await readForm(request);
		if (point.strategy_index === null) return fail(400, { field: 'title', message: 'The baseline is the pack’s own policy, not a strategy; pick a point of the grid.' });
		if (sweep.status !== 'done') return fail(409, { field: 'title', message: 'Wait until the sweep has finished: time saved is known only then.' });
		let id: number;
		try {
			const title = cleanText(form.get('title'), 'title', 120);
			const rationale = cleanText(form.get('rationale'), 'rationale', 4000, false);
			const plan = planFor(sweep);
			const status = sweepStatus(sweep);
			const names = Object.fromEntries([...status.inputs.cells, ...status.inputs.packs].map((r) => [r.id, r.name]));
			const summary = JSON.parse(point.summary);
			const figures = {
				scenarioLabel: scenarioLabel(plan.scenarios[point.scenario_index], names),
				axes: plan.scenarios[point.scenario_index],
				leadTime_s: point.lead_time_s,
				setpoint_K: point.coolant_setpoint_K,
				heaterPowerCap_W: point.heater_power_cap_W,
				timeSaved_s: point.time_saved_s,
				energy_Wh: point.energy_Wh,
				energyPreArrival_Wh: point.energy_pre_arrival_Wh,
				energyDuringCharge_Wh: point.energy_during_charge_Wh,
				timeToTarget_s: point.time_to_target_s,
				baselineTimeToTarget_s: scenario?.baseline_time_to_target_s ?? null,
				arrivalCellTemp_K: summary.arrivalCellTemp_K ?? null,
				minAnodePotential_V: summary.minAnodePotential_V ?? null
			};
			id = await sequelize.transaction(async (transaction) => {
				const s = await Strategy.create(
					{
						program_id: program.id,
						sweep_id: sweep.id,
						point_id: point.id,
						scenario_key: scenario?.scenario_key ?? String(point.scenario_index),
						title,
						rationale,
						state: 'proposed',
						figures: JSON.stringify(figures),
						created_by: user.id
					},
					{ transaction }
				);
				await StrategyEvent.create({ strategy_id: s.id, user_id: user.id, kind: 'state', from_state: null, to_state: 'proposed', body: rationale }, { transaction });
				return s.id;
			});
		} catch (e) {
			if (e instanceof StrategyError) return fail(e.status, { field: e.field, message: e.message });
			throw e;
		}
		redirect(303, `/programs/${program.id}/strategies/${id}`);
	}
};
