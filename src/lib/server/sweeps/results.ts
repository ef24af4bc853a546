/**
 * Read side of sweeps for the JSON API and pages: status and progress, fronts, points, time
 * series (stored for baselines and front points, recomputed on demand otherwise) and the
 * calibration table.
 */
import { Op } from 'sequelize';
import { gunzipSync } from 'node:zlib';
import { Sweep, SweepPoint, SweepScenario, SweepSeries } from '../db/models/index';
import {
	calibrateScenario,
	calibrationCsv,
	calibrationJson,
	calibrationTable,
	fastestWithin,
	type CalibrationProvenance,
	type CalibrationRule,
	type EvaluatedPoint,
	type ScenarioCalibration
} from '../../engine/calibration';
import type { ScenarioKey } from '../../engine/sweep-grid';
import { STORED_SERIES_INTERVAL_S } from '../queue/jobs';
import { chunkJobId } from '../queue/names';
import { SimulationPool } from '../queue/thread-pool';
import { defaultWorkerNice } from '../queue/worker-process';
import { inFlightSimulations } from './registry';
import { sweepBody } from './http-cache';
import { planFor } from './service';
import { scenarioInputsFor, strategyInput, type SweepInputs } from './inputs';
import { SweepInputError } from './request';
import { GENERATOR } from '../version';

// ---------------------------------------------------------------------------------------------
// Lookup

/** The sweep, if it exists and belongs to the program; otherwise a 404 naming the id. */
export async function getProgramSweep(programId: number, sweepIdRaw: string | number): Promise<Sweep> {
	const raw = String(sweepIdRaw);
	if (!/^[1-9][0-9]{0,9}$/.test(raw)) throw new SweepInputError(`No sweep with id “${raw.slice(0, 40)}” in this program.`, 'sweepId', 404);
	const sweep = await Sweep.findOne({ where: { id: Number(raw), program_id: programId } });
	if (!sweep) throw new SweepInputError(`No sweep with id ${raw} in this program.`, 'sweepId', 404);
	return sweep;
}

// ---------------------------------------------------------------------------------------------
// Status

export interface SweepStatusView {
	id: number;
	programId: number;
	name: string;
	status: Sweep['status'];
	failureReason: string | null;
	createdBy: string | null;
	createdAt: string;
	startedAt: string | null;
	finishedAt: string | null;
	gridPoints: number;
	scenarioCount: number;
	strategyCount: number;
	simulationCount: number;
	chunkCount: number;
	chunkSize: number;
	progress: {
		simulationsDone: number;
		simulationCount: number;
		/** Finished inside chunks still running (reported by workers; not stored yet). */
		simulationsInFlight: number;
		chunksDone: number;
		chunkCount: number;
		/** Stored simulations / all simulations, 0–100. Only rises. */
		percent: number;
	};
	scenarioId: string;
	fastestWithinEnergy_Wh: number | null;
	inputs: { baseScenario: RefView; cells: RefView[]; packs: RefView[] };
}

interface RefView {
	id: string;
	parameterSetId: number;
	slug: string;
	version: number;
	name: string;
}

const iso = (d: Date | null | undefined) => (d ? new Date(d).toISOString() : null);

export function sweepStatus(sweep: Sweep, withInputs = true): SweepStatusView {
	const stored = JSON.parse(sweep.definition) as { scenarioId: string; fastestWithinEnergy_Wh: number | null };
	const plan = planFor(sweep);
	const inputs: SweepInputs = plan.inputs;
	const refView = (id: string, r: { parameterSetId: number; slug: string; version: number; name: string }): RefView => ({
		id,
		parameterSetId: r.parameterSetId,
		slug: r.slug,
		version: r.version,
		name: r.name
	});
	const prefix = chunkJobId(sweep.id, sweep.queue_token, 0).replace(/0$/, '');
	const active = sweep.status === 'queued' || sweep.status === 'running';
	return {
		id: sweep.id,
		programId: sweep.program_id,
		name: sweep.name,
		status: sweep.status,
		failureReason: sweep.failure_reason,
		createdBy: sweep.created_by,
		createdAt: iso(sweep.created_at)!,
		startedAt: iso(sweep.started_at),
		finishedAt: iso(sweep.finished_at),
		gridPoints: sweep.grid_points,
		scenarioCount: plan.scenarios.length,
		strategyCount: plan.scenarios.length ? sweep.grid_points / plan.scenarios.length : 0,
		simulationCount: sweep.simulation_count,
		chunkCount: sweep.chunk_count,
		chunkSize: sweep.chunk_size,
		progress: {
			simulationsDone: sweep.simulations_done,
			simulationCount: sweep.simulation_count,
			simulationsInFlight: active ? inFlightSimulations(prefix) : 0,
			chunksDone: sweep.chunks_done,
			chunkCount: sweep.chunk_count,
			percent: sweep.simulation_count ? Math.floor((1000 * sweep.simulations_done) / sweep.simulation_count) / 10 : 0
		},
		scenarioId: stored.scenarioId,
		fastestWithinEnergy_Wh: sweep.rule_max_energy_Wh,
		inputs: withInputs
			? {
					baseScenario: refView(stored.scenarioId, inputs.baseScenario),
					cells: Object.entries(inputs.cells).map(([id, r]) => refView(id, r)),
					packs: Object.entries(inputs.packs).map(([id, r]) => refView(id, r))
				}
			: { baseScenario: refView(stored.scenarioId, inputs.baseScenario), cells: [], packs: [] }
	};
}

/** Newest first; `beforeId` pages back (sweeps with a smaller id). */
export async function listSweeps(programId: number, limit = 100, beforeId?: number): Promise<SweepStatusView[]> {
	const where = beforeId === undefined ? { program_id: programId } : { program_id: programId, id: { [Op.lt]: beforeId } };
	const rows = await Sweep.findAll({ where, order: [['id', 'DESC']], limit });
	return rows.map((s) => sweepStatus(s, false));
}

// ---------------------------------------------------------------------------------------------
// Points and fronts

export interface PointView {
	id: number;
	scenarioIndex: number;
	/** null for the scenario's baseline. */
	strategyIndex: number | null;
	baseline: boolean;
	leadTime_s: number | null;
	coolantSetpoint_K: number | null;
	heaterPowerCap_W: number | null;
	reachedTarget: boolean;
	feasible: boolean;
	timeToTarget_s: number | null;
	/** Baseline time to target minus this point's (null until the sweep is finalised). */
	timeSaved_s: number | null;
	/** Heater + chiller electrical energy attributable to the strategy (minus the baseline's). */
	energy_Wh: number | null;
	energyPreArrival_Wh: number | null;
	energyDuringCharge_Wh: number | null;
	/** The run's own total heater + chiller electrical energy. */
	thermalEnergy_Wh: number | null;
	onFront: boolean;
	summary?: unknown;
}

export function pointView(p: SweepPoint, withSummary = true): PointView {
	return {
		id: p.id,
		scenarioIndex: p.scenario_index,
		strategyIndex: p.strategy_index,
		baseline: p.strategy_index === null,
		leadTime_s: p.lead_time_s,
		coolantSetpoint_K: p.coolant_setpoint_K,
		heaterPowerCap_W: p.heater_power_cap_W,
		reachedTarget: Boolean(p.reached_target),
		feasible: Boolean(p.feasible),
		timeToTarget_s: p.time_to_target_s,
		timeSaved_s: p.time_saved_s,
		energy_Wh: p.energy_Wh,
		energyPreArrival_Wh: p.energy_pre_arrival_Wh,
		energyDuringCharge_Wh: p.energy_during_charge_Wh,
		thermalEnergy_Wh: p.thermal_energy_Wh,
		onFront: Boolean(p.on_front),
		...(withSummary ? { summary: JSON.parse(p.summary) } : {})
	};
}

export interface PointQuery {
	scenarioIndex?: number;
	frontOnly?: boolean;
	limit?: number;
	offset?: number;
}

export async function sweepPoints(sweep: Sweep, q: PointQuery = {}): Promise<{ total: number; points: PointView[] }> {
	const where: Record<string, unknown> = { sweep_id: sweep.id };
	if (q.scenarioIndex !== undefined) where.scenario_index = q.scenarioIndex;
	if (q.frontOnly) where.on_front = true;
	const { count, rows } = await SweepPoint.findAndCountAll({
		where,
		order: [['scenario_index', 'ASC'], ['strategy_index', 'ASC']],
		limit: Math.min(q.limit ?? 1000, 5000),
		offset: q.offset ?? 0
	});
	return { total: count, points: rows.map((p) => pointView(p)) };
}

export interface ScenarioFrontView {
	scenarioIndex: number;
	axes: ScenarioKey;
	baseline: PointView | null;
	baselineTimeToTarget_s: number | null;
	baselineReachedTarget: boolean;
	/** Strategies on the front of {baseline, strategies} (least energy, most time saved), energy ascending; never slower than the baseline. */
	front: PointView[];
	/** True when no strategy dominates the baseline, so the front starts at (0 kWh, 0 min). */
	baselineOnFront: boolean;
	/** Recommended by the knee rule (Kneedle, Satopää et al. 2011, or its stated fallback). */
	knee: PointView | null;
	kneeMethod: string | null;
	/** "Fastest within X Wh": the sweep's own budget, or the one asked for in the request. */
	rule: PointView | null;
	ruleEnergy_Wh: number | null;
	noStrategyBeatsBaseline: boolean;
	seriesStatus: string;
	note: string | null;
}

/** Per scenario: baseline, front, knee pick and rule pick. Empty until the sweep is finalised. */
export async function sweepFronts(sweep: Sweep, opts: { fastestWithinEnergy_Wh?: number } = {}): Promise<{ sweepId: number; status: string; scenarios: ScenarioFrontView[] }> {
	const scenarios = await SweepScenario.findAll({ where: { sweep_id: sweep.id }, order: [['scenario_index', 'ASC']] });
	const ids = new Set<number>();
	for (const s of scenarios) {
		for (const id of JSON.parse(s.front_point_ids) as number[]) ids.add(id);
		for (const id of [s.baseline_point_id, s.knee_point_id, s.rule_point_id]) if (id !== null) ids.add(id);
	}
	const points = new Map((await SweepPoint.findAll({ where: { id: [...ids] } })).map((p) => [p.id, pointView(p)]));
	const budget = opts.fastestWithinEnergy_Wh ?? sweep.rule_max_energy_Wh;
	return {
		sweepId: sweep.id,
		status: sweep.status,
		scenarios: scenarios.map((s) => {
			const front = (JSON.parse(s.front_point_ids) as number[]).map((id) => points.get(id)!).filter(Boolean);
			let rule: PointView | null = s.rule_point_id !== null ? (points.get(s.rule_point_id) ?? null) : null;
			if (opts.fastestWithinEnergy_Wh !== undefined) {
				// Re-pick on the stored front with the budget asked for (the front contains the answer:
				// the fastest point within a budget is never dominated).
				const rated = front.map((p) => ({ ...ratedFromView(p), view: p }));
				const pick = fastestWithin(rated, opts.fastestWithinEnergy_Wh);
				rule = pick ? (pick as (typeof rated)[number]).view : null;
			}
			return {
				scenarioIndex: s.scenario_index,
				axes: JSON.parse(s.axes) as ScenarioKey,
				baseline: s.baseline_point_id !== null ? (points.get(s.baseline_point_id) ?? null) : null,
				baselineTimeToTarget_s: s.baseline_time_to_target_s,
				baselineReachedTarget: Boolean(s.baseline_reached_target),
				front,
				baselineOnFront: !front.some((p) => p.energy_Wh !== null && p.timeSaved_s !== null && p.energy_Wh <= 0 && (p.energy_Wh < 0 || p.timeSaved_s > 0)),
				knee: s.knee_point_id !== null ? (points.get(s.knee_point_id) ?? null) : null,
				kneeMethod: s.knee_method,
				rule,
				ruleEnergy_Wh: budget ?? null,
				noStrategyBeatsBaseline: Boolean(s.no_strategy_beats_baseline),
				seriesStatus: s.series_status,
				note: s.note
			};
		})
	};
}

function ratedFromView(p: PointView) {
	return {
		leadTime_s: p.leadTime_s ?? NaN,
		setpoint_K: p.coolantSetpoint_K ?? NaN,
		...(p.heaterPowerCap_W !== null ? { heaterPowerCap_W: p.heaterPowerCap_W } : {}),
		energy_Wh: p.energy_Wh ?? NaN,
		energyPreArrival_Wh: p.energyPreArrival_Wh ?? NaN,
		energyDuringCharge_Wh: p.energyDuringCharge_Wh ?? NaN,
		timeToTarget_s: p.timeToTarget_s ?? NaN,
		timeSaved_s: p.timeSaved_s ?? NaN,
		feasible: p.feasible
	};
}

// ---------------------------------------------------------------------------------------------
// Time series

let seriesPool: SimulationPool | null = null;

/** Shut down the on-demand series thread (tests, shutdown). */
export async function closeSeriesPool(): Promise<void> {
	await seriesPool?.close();
	seriesPool = null;
}

/**
 * A point's time series: stored (baseline and front points of finished sweeps) or recomputed now
 * from the sweep's input snapshot in a worker thread, so the HTTP event loop stays responsive.
 */
export async function pointSeries(sweep: Sweep, pointIdRaw: string | number): Promise<{ pointId: number; source: 'stored' | 'recomputed'; seriesInterval_s: number; series: unknown }> {
	const raw = String(pointIdRaw);
	if (!/^[1-9][0-9]{0,9}$/.test(raw)) throw new SweepInputError(`No point with id “${raw.slice(0, 40)}” in this sweep.`, 'pointId', 404);
	const point = await SweepPoint.findOne({ where: { id: Number(raw), sweep_id: sweep.id } });
	if (!point) throw new SweepInputError(`No point with id ${raw} in sweep ${sweep.id}.`, 'pointId', 404);
	const stored = await SweepSeries.findOne({ where: { point_id: point.id } });
	if (stored) {
		return {
			pointId: point.id,
			source: 'stored',
			seriesInterval_s: stored.series_interval_s,
			series: JSON.parse(gunzipSync(stored.data).toString('utf8'))
		};
	}
	const plan = planFor(sweep);
	const inputs = scenarioInputsFor(plan.inputs, plan.scenarios[point.scenario_index]);
	const strategy = point.strategy_index === null ? null : strategyInput(plan.definition, point.strategy_index);
	// One thread at the worker's lower priority: a recomputation never delays other requests.
	seriesPool ??= new SimulationPool(1, { nice: defaultWorkerNice() });
	const [one] = await seriesPool.run<{ pointId: number; gzipBase64: string }[]>({
		kind: 'series',
		data: {
			sweepId: sweep.id,
			queueToken: sweep.queue_token,
			scenarioIndex: point.scenario_index,
			inputs,
			tasks: [{ pointId: point.id, strategyIndex: point.strategy_index, strategy }],
			seriesInterval_s: STORED_SERIES_INTERVAL_S
		}
	});
	return {
		pointId: point.id,
		source: 'recomputed',
		seriesInterval_s: STORED_SERIES_INTERVAL_S,
		series: JSON.parse(gunzipSync(Buffer.from(one.gzipBase64, 'base64')).toString('utf8'))
	};
}

// ---------------------------------------------------------------------------------------------
// Calibration table

/**
 * Rebuild each scenario's calibration from the stored columns (the same numbers finalisation
 * used), then tabulate with the chosen rule. Scenarios whose baseline has no time to target are
 * left out (they have no time saved to report).
 */
export async function sweepCalibration(sweep: Sweep, rule: CalibrationRule, format: 'csv' | 'json'): Promise<string> {
	if (sweep.status !== 'done' && sweep.status !== 'finalizing')
		throw new SweepInputError(`Sweep ${sweep.id} is ${sweep.status}; the calibration table exists once it has finished.`, 'sweepId', 409);
	const scenarios = await SweepScenario.findAll({ where: { sweep_id: sweep.id, baseline_time_to_target_s: { [Op.ne]: null } }, order: [['scenario_index', 'ASC']] });
	const points = await SweepPoint.findAll({ where: { sweep_id: sweep.id, strategy_index: { [Op.ne]: null } }, order: [['scenario_index', 'ASC'], ['strategy_index', 'ASC']] });
	const byScenario = new Map<number, SweepPoint[]>();
	for (const p of points) byScenario.set(p.scenario_index, [...(byScenario.get(p.scenario_index) ?? []), p]);
	const calibrations: ScenarioCalibration[] = scenarios.map((s) =>
		calibrateScenario({
			scenario: JSON.parse(s.axes) as ScenarioKey,
			baselineTimeToTarget_s: s.baseline_time_to_target_s!,
			points: (byScenario.get(s.scenario_index) ?? []).map(
				(p): EvaluatedPoint => ({
					leadTime_s: p.lead_time_s ?? NaN,
					setpoint_K: p.coolant_setpoint_K ?? NaN,
					...(p.heater_power_cap_W !== null ? { heaterPowerCap_W: p.heater_power_cap_W } : {}),
					energy_Wh: p.energy_Wh ?? NaN,
					energyPreArrival_Wh: p.energy_pre_arrival_Wh ?? NaN,
					energyDuringCharge_Wh: p.energy_during_charge_Wh ?? NaN,
					timeToTarget_s: p.reached_target && p.time_to_target_s !== null ? p.time_to_target_s : NaN,
					feasible: Boolean(p.feasible)
				})
			)
		})
	);
	const table = calibrationTable(calibrations, rule);
	const provenance = calibrationProvenance(sweep);
	return format === 'csv' ? calibrationCsv(table, provenance, rule) : calibrationJson(table, provenance, rule);
}

/** Where a calibration table comes from: the sweep, the exact input versions it ran, now, and who wrote the file. */
export function calibrationProvenance(sweep: Sweep): CalibrationProvenance {
	const { inputs } = sweepStatus(sweep);
	const input = (r: RefView) => ({ id: r.id, parameterSetId: r.parameterSetId, slug: r.slug, name: r.name, version: r.version });
	return {
		sweep: { id: sweep.id, name: sweep.name, finishedAt: iso(sweep.finished_at) },
		inputs: { baseScenario: input(inputs.baseScenario), cells: inputs.cells.map(input), packs: inputs.packs.map(input) },
		createdAt: new Date().toISOString(),
		generator: GENERATOR
	};
}

/** Cache key of a calibration body (see http-cache.ts). */
export function calibrationKey(rule: CalibrationRule, format: 'csv' | 'json'): string {
	return `calibration:${format}:${rule.kind}:${rule.kind === 'fastest-within' ? rule.maxEnergy_Wh : ''}`;
}

/** sweepCalibration, computed once per rule and format for a finished sweep. */
export function cachedSweepCalibration(sweep: Sweep, rule: CalibrationRule, format: 'csv' | 'json'): Promise<string> {
	return sweepBody(sweep, calibrationKey(rule, format), () => sweepCalibration(sweep, rule, format));
}
