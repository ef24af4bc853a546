/**
 * Per-scenario calibration: from a scenario's baseline charging time and its
 * evaluated pre-conditioning strategies, compute time saved, the Pareto front
 * (least energy spent, most time saved), a recommended strategy, and the
 * calibration table a controls team loads (CSV and JSON).
 *
 * Definitions (the product's own; common practice, no source):
 * - timeSaved_s = baselineTimeToTarget_s − timeToTarget_s (negative = slower
 *   than the pack's own default thermal policy).
 * - energy_Wh = heater + chiller electrical energy attributable to the
 *   strategy; energyPreArrival_Wh + energyDuringCharge_Wh are its two parts.
 * - The baseline is the reference, so it stands for (0 Wh, 0 s).
 *
 * Front: the baseline belongs to the candidate set. "Doing nothing different"
 * is always available, so a strategy it dominates (as much or more energy for
 * as little or less time saved) is never on the front, and a strategy that is
 * slower than the baseline (timeSaved_s < 0) is never on it either, even when
 * it spends less energy than the baseline (keeping the default policy is the
 * better answer to "charge sooner"). `front` lists the strategies only;
 * `baselineOnFront` says whether the baseline itself is non-dominated, i.e.
 * whether the front line starts at the origin.
 *
 * Recommendation ("knee" rule):
 * - Candidates are front points that strictly beat the baseline
 *   (timeSaved_s > 0). If there are none, `noStrategyBeatsBaseline` is true
 *   and nothing is recommended: keep the pack's default policy.
 * - With three or more candidates, Kneedle (Satopää et al., ICDCS Workshops
 *   2011; see kneedle.ts) runs on time saved against energy along the front,
 *   starting where the front starts: at the baseline (0 Wh, 0 s) when it is
 *   on the front, otherwise at the cheapest front point that saves no time
 *   (energy < 0, time saved 0) if there is one. A candidate with energy ≤ 0
 *   dominates the origin, so then no origin is added.
 * - Fallback (one or two candidates, or Kneedle finds no knee): the candidate
 *   with the most time saved per kWh. Candidates with energy ≤ 0 save time
 *   for free and rank above all others; among those, the most time saved
 *   wins. This rule is ours (common practice for "value for energy", no
 *   published source) and is flagged in the output as 'max-time-saved-per-kWh'.
 *
 * User rule `fastestWithin(maxEnergy_Wh)`: the most time saved among feasible
 * points spending at most maxEnergy_Wh; null when none of them beats the
 * baseline.
 *
 * Exports convert units at the edge only: K → °C, s → min, Wh → kWh, W → kW.
 * Numbers are written with at most 6 decimals (0.06 ms in minutes, 1 mWh in
 * kWh, 1 µK in °C), enough for a calibration map and free of binary-float
 * noise such as 25.000000000000023 °C.
 */
import { kneedle } from './kneedle';
import { paretoFront } from './pareto';
import type { ScenarioKey } from './sweep-grid';
import { writeCsv } from '../csv';

export type { ScenarioKey } from './sweep-grid';

export interface EvaluatedPoint {
	leadTime_s: number;
	setpoint_K: number;
	heaterPowerCap_W?: number;
	/** Heater + chiller electrical energy attributable to the strategy. */
	energy_Wh: number;
	energyPreArrival_Wh: number;
	energyDuringCharge_Wh: number;
	timeToTarget_s: number;
	/** False when the simulation reports the strategy as infeasible (e.g. a limit violated). */
	feasible: boolean;
}

export interface RatedPoint extends EvaluatedPoint {
	timeSaved_s: number;
}

export interface ScenarioEvaluation {
	scenario: ScenarioKey;
	baselineTimeToTarget_s: number;
	points: EvaluatedPoint[];
}

export type PickMethod = 'kneedle' | 'max-time-saved-per-kWh' | 'fastest-within';

export interface Pick {
	point: RatedPoint;
	method: PickMethod;
}

export interface ScenarioCalibration {
	scenario: ScenarioKey;
	baselineTimeToTarget_s: number;
	/** Every input point, in input order, with timeSaved_s. */
	points: RatedPoint[];
	/**
	 * Strategies on the front of {baseline, feasible strategies}, energy ascending: none is
	 * dominated by the baseline or another strategy, and none is slower than the baseline.
	 */
	front: RatedPoint[];
	/** True when no strategy dominates the baseline, so the front starts at (0 Wh, 0 s). */
	baselineOnFront: boolean;
	/** Recommended point by the knee rule, or null when no strategy beats the baseline. */
	knee: Pick | null;
	noStrategyBeatsBaseline: boolean;
}

export interface CalibrateOptions {
	/** Kneedle sensitivity S (default 1). */
	sensitivity?: number;
}

const energyOf = (p: RatedPoint) => p.energy_Wh;
const gainOf = (p: RatedPoint) => p.timeSaved_s;

function isUsable(p: RatedPoint): boolean {
	return (
		p.feasible &&
		Number.isFinite(p.energy_Wh) &&
		Number.isFinite(p.timeSaved_s) &&
		Number.isFinite(p.leadTime_s) &&
		Number.isFinite(p.setpoint_K)
	);
}

/** Rate every point against the baseline, build the front and pick by the knee rule. */
export function calibrateScenario(
	evaluation: ScenarioEvaluation,
	options: CalibrateOptions = {}
): ScenarioCalibration {
	const baseline_s = evaluation.baselineTimeToTarget_s;
	if (!Number.isFinite(baseline_s)) {
		throw new RangeError(
			`Baseline time to target must be a finite number of seconds (got ${baseline_s}); ` +
				`rerun the baseline for this scenario.`
		);
	}
	const points: RatedPoint[] = evaluation.points.map((p) => ({
		...p,
		timeSaved_s: baseline_s - p.timeToTarget_s
	}));
	const { front, baselineOnFront } = frontWithBaseline(points.filter(isUsable));
	const candidates = front.filter((p) => p.timeSaved_s > 0);
	// Where the front starts: the baseline, or a strategy saving no time for less energy.
	const start = baselineOnFront ? BASELINE_ORIGIN : front.find((p) => p.timeSaved_s <= 0);
	return {
		scenario: evaluation.scenario,
		baselineTimeToTarget_s: baseline_s,
		points,
		front,
		baselineOnFront,
		knee: pickKnee(candidates, options.sensitivity, start ?? null),
		noStrategyBeatsBaseline: candidates.length === 0
	};
}

const BASELINE_ORIGIN = { energy_Wh: 0, timeSaved_s: 0 };

/**
 * Front of the baseline (0 Wh, 0 s) together with `usable` strategies (feasible, finite), with
 * strategies slower than the baseline left out. Returns the strategies on it (energy ascending,
 * as paretoFront orders them) and whether the baseline itself is on it. Exported for the
 * comparison of fronts and for tests.
 */
export function frontWithBaseline<T extends { energy_Wh: number; timeSaved_s: number }>(
	usable: readonly T[]
): { front: T[]; baselineOnFront: boolean } {
	const origin = BASELINE_ORIGIN as T;
	const candidates = [origin, ...usable.filter((p) => p.timeSaved_s >= 0)];
	const all = paretoFront(candidates, (p) => p.energy_Wh, (p) => p.timeSaved_s);
	return { front: all.filter((p) => p !== origin), baselineOnFront: all.includes(origin) };
}

/**
 * Knee rule on front points that beat the baseline (energy ascending, as
 * returned by paretoFront). Exported for testing and for re-picking with a
 * different sensitivity. `origin` is where the front starts (default: the baseline at
 * (0 Wh, 0 s)); it is put in front of the candidates when all of them cost more energy.
 */
export function pickKnee(
	candidates: readonly RatedPoint[],
	sensitivity = 1,
	origin: { energy_Wh: number; timeSaved_s: number } | null = BASELINE_ORIGIN
): Pick | null {
	if (candidates.length === 0) return null;
	if (candidates.length >= 3) {
		const withOrigin = origin !== null && candidates.every((p) => p.energy_Wh > origin.energy_Wh);
		const x = candidates.map(energyOf);
		const y = candidates.map(gainOf);
		if (withOrigin) {
			x.unshift(origin.energy_Wh);
			y.unshift(origin.timeSaved_s);
		}
		const { kneeIndex } = kneedle(x, y, { sensitivity });
		if (kneeIndex !== null) {
			const idx = withOrigin ? kneeIndex - 1 : kneeIndex;
			// The origin is an endpoint and can never be a knee; guard anyway.
			if (idx >= 0) return { point: candidates[idx], method: 'kneedle' };
		}
	}
	return { point: bestTimeSavedPerKWh(candidates), method: 'max-time-saved-per-kWh' };
}

function bestTimeSavedPerKWh(candidates: readonly RatedPoint[]): RatedPoint {
	// Free points (energy ≤ 0) first, most time saved among them; otherwise
	// the highest ratio. Ties keep the earlier (cheaper) point.
	let best = candidates[0];
	const better = (a: RatedPoint, b: RatedPoint) => {
		const aFree = a.energy_Wh <= 0;
		const bFree = b.energy_Wh <= 0;
		if (aFree !== bFree) return aFree;
		if (aFree) return a.timeSaved_s > b.timeSaved_s;
		return a.timeSaved_s / a.energy_Wh > b.timeSaved_s / b.energy_Wh;
	};
	for (const p of candidates) if (better(p, best)) best = p;
	return best;
}

/**
 * User rule: the feasible point with the most time saved whose energy is at
 * most `maxEnergy_Wh` (ties: less energy, then input order). Returns null when
 * no such point beats the baseline. Accepts a front or all points.
 */
export function fastestWithin(points: readonly RatedPoint[], maxEnergy_Wh: number): RatedPoint | null {
	if (Number.isNaN(maxEnergy_Wh)) {
		throw new RangeError('The energy budget must be a number of watt-hours.');
	}
	let best: RatedPoint | null = null;
	for (const p of points) {
		if (!isUsable(p) || p.energy_Wh > maxEnergy_Wh || p.timeSaved_s <= 0) continue;
		if (
			best === null ||
			p.timeSaved_s > best.timeSaved_s ||
			(p.timeSaved_s === best.timeSaved_s && p.energy_Wh < best.energy_Wh)
		) {
			best = p;
		}
	}
	return best;
}

// ---------------------------------------------------------------------------
// Calibration table and exports.

export type CalibrationRule = { kind: 'knee' } | { kind: 'fastest-within'; maxEnergy_Wh: number };

/** How a row's recommendation was chosen. */
export type RowRule = PickMethod | 'baseline';

export interface CalibrationRow extends ScenarioKey {
	/** Null when no strategy beats the baseline (keep the pack's default policy). */
	leadTime_s: number | null;
	setpoint_K: number | null;
	heaterPowerCap_W: number | null;
	/** 0 when the row falls back to the baseline. */
	timeSaved_s: number;
	energy_Wh: number;
	energyPreArrival_Wh: number;
	energyDuringCharge_Wh: number;
	baselineTimeToTarget_s: number;
	rule: RowRule;
	/** Set for 'fastest-within' rows. */
	maxEnergy_Wh?: number;
}

/** One row per scenario, in input order, picked by `rule` (default: knee). */
export function calibrationTable(
	calibrations: readonly ScenarioCalibration[],
	rule: CalibrationRule = { kind: 'knee' }
): CalibrationRow[] {
	return calibrations.map((c) => {
		let pick: Pick | null;
		if (rule.kind === 'knee') {
			pick = c.knee;
		} else {
			const p = fastestWithin(c.front, rule.maxEnergy_Wh);
			pick = p && { point: p, method: 'fastest-within' };
		}
		const base = {
			ambient_K: c.scenario.ambient_K,
			stateOfHealth: c.scenario.stateOfHealth,
			arrivalSoc: c.scenario.arrivalSoc,
			cellId: c.scenario.cellId,
			packId: c.scenario.packId,
			baselineTimeToTarget_s: c.baselineTimeToTarget_s,
			...(rule.kind === 'fastest-within' ? { maxEnergy_Wh: rule.maxEnergy_Wh } : {})
		};
		if (pick === null) {
			return {
				...base,
				leadTime_s: null,
				setpoint_K: null,
				heaterPowerCap_W: null,
				timeSaved_s: 0,
				energy_Wh: 0,
				energyPreArrival_Wh: 0,
				energyDuringCharge_Wh: 0,
				rule: 'baseline'
			};
		}
		const p = pick.point;
		return {
			...base,
			leadTime_s: p.leadTime_s,
			setpoint_K: p.setpoint_K,
			heaterPowerCap_W: p.heaterPowerCap_W ?? null,
			timeSaved_s: p.timeSaved_s,
			energy_Wh: p.energy_Wh,
			energyPreArrival_Wh: p.energyPreArrival_Wh,
			energyDuringCharge_Wh: p.energyDuringCharge_Wh,
			rule: pick.method
		};
	});
}

const ZERO_CELSIUS_K = 273.15;

/** Round to 6 decimals; null for missing or non-finite values. */
function out(v: number | null | undefined, scale: (v: number) => number = (v) => v): number | null {
	if (v === null || v === undefined || !Number.isFinite(v)) return null;
	const r = Number(scale(v).toFixed(6));
	return r === 0 ? 0 : r; // no -0
}
const toC = (K: number) => K - ZERO_CELSIUS_K;
const toMin = (s: number) => s / 60;
const toK = (W: number) => W / 1000;

/** Column names, with units, in CSV order. */
export const CALIBRATION_CSV_HEADER = [
	'ambient_C',
	'state_of_health',
	'arrival_soc',
	'cell',
	'pack',
	'lead_time_min',
	'setpoint_C',
	'heater_power_cap_kW',
	'time_saved_min',
	'energy_kWh',
	'energy_pre_arrival_kWh',
	'energy_during_charge_kWh',
	'baseline_time_min',
	'rule',
	'cell_name',
	'cell_version',
	'pack_name',
	'pack_version'
] as const;

export interface CalibrationExportRow {
	ambient_C: number | null;
	state_of_health: number | null;
	arrival_soc: number | null;
	cell: string;
	pack: string;
	lead_time_min: number | null;
	setpoint_C: number | null;
	heater_power_cap_kW: number | null;
	time_saved_min: number | null;
	energy_kWh: number | null;
	energy_pre_arrival_kWh: number | null;
	energy_during_charge_kWh: number | null;
	baseline_time_min: number | null;
	rule: string;
	/** Name and version of the input that ran (empty without provenance). */
	cell_name: string;
	cell_version: number | null;
	pack_name: string;
	pack_version: number | null;
}

function ruleLabel(row: CalibrationRow): string {
	if (row.rule === 'fastest-within' && row.maxEnergy_Wh !== undefined) {
		return `fastest-within-${out(row.maxEnergy_Wh, toK)}-kWh`;
	}
	return row.rule;
}

/** A table row in export units (°C, min, kWh, kW; fractions for SOH and SOC). */
export function toExportRow(row: CalibrationRow, provenance?: CalibrationProvenance): CalibrationExportRow {
	const cell = provenance?.inputs.cells.find((c) => c.id === row.cellId);
	const pack = provenance?.inputs.packs.find((p) => p.id === row.packId);
	return {
		ambient_C: out(row.ambient_K, toC),
		state_of_health: out(row.stateOfHealth),
		arrival_soc: out(row.arrivalSoc),
		cell: row.cellId,
		pack: row.packId,
		lead_time_min: out(row.leadTime_s, toMin),
		setpoint_C: out(row.setpoint_K, toC),
		heater_power_cap_kW: out(row.heaterPowerCap_W, toK),
		time_saved_min: out(row.timeSaved_s, toMin),
		energy_kWh: out(row.energy_Wh, toK),
		energy_pre_arrival_kWh: out(row.energyPreArrival_Wh, toK),
		energy_during_charge_kWh: out(row.energyDuringCharge_Wh, toK),
		baseline_time_min: out(row.baselineTimeToTarget_s, toMin),
		rule: ruleLabel(row),
		cell_name: cell?.name ?? '',
		cell_version: cell?.version ?? null,
		pack_name: pack?.name ?? '',
		pack_version: pack?.version ?? null
	};
}

// ---------------------------------------------------------------------------
// Provenance: where a calibration table came from.

/** One input a sweep ran: the id as written in its definition, and the exact version. */
export interface ProvenanceInput {
	/** Id as written in the sweep definition (slug, or slug@version). */
	id: string;
	/** Id of the stored parameter set (that exact version). */
	parameterSetId: number;
	slug: string;
	name: string;
	version: number;
}

export interface CalibrationProvenance {
	sweep: { id: number; name: string; finishedAt: string | null };
	inputs: { baseScenario: ProvenanceInput; cells: ProvenanceInput[]; packs: ProvenanceInput[] };
	/** ISO 8601 time the export was made. */
	createdAt: string;
	/** Product and version that wrote the file, e.g. "Paretherm 0.1.0". */
	generator: string;
}

/** The selection rule in words, the same on the page and in both exports. */
export function ruleDescription(rule: CalibrationRule): string {
	if (rule.kind === 'fastest-within') {
		return (
			`fastest within ${out(rule.maxEnergy_Wh, toK)} kWh: per scenario the strategy with the most time saved ` +
			`whose net energy is at most the budget; rows marked 'baseline' have none within the budget that beats the baseline`
		);
	}
	return (
		"knee of each front: rows marked 'kneedle' are the Kneedle knee (Satopaa et al., ICDCS Workshops 2011); " +
		"'max-time-saved-per-kWh' rows had a front too short (fewer than 3 points that beat the baseline) or too straight " +
		"for a knee, so the most time saved per kWh was taken; 'baseline' rows: no strategy beats the baseline, keep the pack's default policy"
	);
}

/** Row rule codes in words, for pages and mail (the export keeps the codes). */
export const ROW_RULE_WORDS: Record<string, string> = {
	kneedle: 'knee (Kneedle)',
	'max-time-saved-per-kWh': 'most time saved per kWh (front too short or straight for a knee)',
	'fastest-within': 'fastest within the budget',
	baseline: 'keep the default policy (nothing beats the baseline)'
};

/** Header lines of the CSV export: "# key: value", one fact each, without line breaks or commas to trip a reader. */
export function provenanceLines(provenance: CalibrationProvenance, rule: CalibrationRule): string[] {
	const clean = (t: string) => t.replace(/[\r\n]+/g, ' ').trim();
	const input = (kind: string, i: ProvenanceInput) =>
		`# input: ${kind} "${clean(i.name)}" slug ${clean(i.slug)} version ${i.version} (parameter set ${i.parameterSetId})`;
	return [
		`# format: ${CALIBRATION_FORMAT}`,
		`# sweep: ${provenance.sweep.id} "${clean(provenance.sweep.name)}"${provenance.sweep.finishedAt ? ` finished ${provenance.sweep.finishedAt}` : ''}`,
		input('scenario', provenance.inputs.baseScenario),
		...provenance.inputs.cells.map((c) => input('cell', c)),
		...provenance.inputs.packs.map((p) => input('pack', p)),
		`# rule: ${clean(ruleDescription(rule))}`,
		`# created: ${provenance.createdAt}`,
		`# generator: ${clean(provenance.generator)}`
	];
}

/**
 * RFC 4180 CSV through the product's one CSV writer (src/lib/csv.ts, formula-escaped text cells):
 * with provenance, "# key: value" lines first (sweep, each input's name and version, the rule,
 * creation time, generator; readers skip them as comments, e.g. papaparse `comments: '#'`), then a
 * header line with units in the column names, then one record per row; CRLF line breaks, including
 * after the last record. Missing values (baseline rows, no heater cap) are empty cells.
 */
export function calibrationCsv(
	table: readonly CalibrationRow[],
	provenance?: CalibrationProvenance,
	rule: CalibrationRule = { kind: 'knee' }
): string {
	const head = provenance ? provenanceLines(provenance, rule).map((l) => l + '\r\n').join('') : '';
	return (
		head +
		writeCsv(
			CALIBRATION_CSV_HEADER,
			table.map((row) => {
				const r = toExportRow(row, provenance);
				return CALIBRATION_CSV_HEADER.map((col) => r[col]);
			})
		)
	);
}

/** Version 2 added provenance, the rule and input names and versions per row. */
export const CALIBRATION_FORMAT = 'paretherm-calibration/2';

export interface CalibrationJsonDocument {
	format: typeof CALIBRATION_FORMAT;
	provenance: CalibrationProvenance | null;
	rule: CalibrationRule & { description: string };
	units: Record<keyof CalibrationExportRow, string>;
	rows: CalibrationExportRow[];
}

const UNITS: CalibrationJsonDocument['units'] = {
	ambient_C: 'degree Celsius',
	state_of_health: 'fraction of rated capacity (0–1)',
	arrival_soc: 'fraction (0–1), state of charge at arrival',
	cell: 'cell variant id',
	pack: 'pack variant id',
	lead_time_min: 'minute before arrival that pre-conditioning starts; null = keep the default policy',
	setpoint_C: 'degree Celsius, coolant set-point; null = keep the default policy',
	heater_power_cap_kW: 'kilowatt (electrical); null = no cap set',
	time_saved_min: 'minute, baseline time to target minus strategy time to target',
	energy_kWh: 'kilowatt-hour, heater + chiller electrical energy attributable to the strategy',
	energy_pre_arrival_kWh: 'kilowatt-hour, part of energy_kWh spent before arrival (from the pack)',
	energy_during_charge_kWh: 'kilowatt-hour, part of energy_kWh spent during the charge (from the grid)',
	baseline_time_min: 'minute, baseline time to target',
	rule: "how the row was chosen: 'kneedle', 'max-time-saved-per-kWh', 'fastest-within-<X>-kWh' or 'baseline' (no strategy beats the baseline)",
	cell_name: 'name of the cell parameter set version that ran',
	cell_version: 'version number of the cell parameter set that ran',
	pack_name: 'name of the pack design version that ran',
	pack_version: 'version number of the pack design that ran'
};

/** JSON document tagged `format: 'paretherm-calibration/2'`: provenance, the rule, units listed per field, rows. */
export function calibrationJson(
	table: readonly CalibrationRow[],
	provenance?: CalibrationProvenance,
	rule: CalibrationRule = { kind: 'knee' }
): string {
	const doc: CalibrationJsonDocument = {
		format: CALIBRATION_FORMAT,
		provenance: provenance ?? null,
		rule: { ...rule, description: ruleDescription(rule) },
		units: UNITS,
		rows: table.map((r) => toExportRow(r, provenance))
	};
	return JSON.stringify(doc, null, 2);
}
