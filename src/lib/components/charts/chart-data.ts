/**
 * Pure data helpers behind the chart components: unit conversion for display, CSV text,
 * front ordering, runs of the limit in force, phase boundaries, axis ranges and the
 * screen-reader summaries. No DOM, no ECharts: tested in tests/engine/chart-data.test.ts.
 */
import type { FrontPoint, HeatmapCell, ParetoPoint, TraceLimits, TraceSeries } from './types';
import { writeCsv, type CsvCell } from '../../csv';

const ZERO_CELSIUS_K = 273.15;

/** Display conversions (data stay SI everywhere else). */
export const toMin = (time_s: number): number => time_s / 60;
export const toCelsius = (temp_K: number): number => temp_K - ZERO_CELSIUS_K;
export const toKWh = (energy_Wh: number): number => energy_Wh / 1000;
export const toKW = (power_W: number): number => power_W / 1000;
export const toMilliVolts = (voltage_V: number): number => voltage_V * 1000;
export const toPercent = (fraction: number): number => fraction * 100;

/** Fixed decimals without a trailing "-0". */
export function fixed(value: number | null | undefined, decimals: number): string {
	if (value === null || value === undefined || !Number.isFinite(value)) return '–';
	const s = value.toFixed(decimals);
	return /^-0(\.0*)?$/.test(s) ? s.slice(1) : s;
}

/** A number rounded to `digits` significant figures for CSV (keeps files small, loses nothing useful). */
export function csvNumber(value: number, digits = 6): string {
	if (!Number.isFinite(value)) return '';
	if (value === 0) return '0';
	return String(Number(value.toPrecision(digits)));
}

type Cell = string | number | boolean | null | undefined;

/** Numbers rounded for the file, booleans as yes/no; quoting and formula escaping are the writer's. */
function csvCell(v: Cell): CsvCell {
	if (typeof v === 'number') return Number.isFinite(v) ? Number(csvNumber(v)) : null;
	if (typeof v === 'boolean') return v ? 'yes' : 'no';
	return v;
}

/** RFC 4180 CSV through the one CSV writer (src/lib/csv.ts): header row then rows, CRLF line ends. */
export function toCsv(header: string[], rows: Cell[][]): string {
	return writeCsv(header, rows.map((r) => r.map(csvCell)));
}

/** Feasible front points in order of energy (ties by time saved), for the front line. */
export function frontInOrder<T extends { energy_Wh: number; timeSaved_s: number }>(points: readonly T[]): T[] {
	return points
		.filter((p) => Number.isFinite(p.energy_Wh) && Number.isFinite(p.timeSaved_s))
		.slice()
		.sort((a, b) => a.energy_Wh - b.energy_Wh || a.timeSaved_s - b.timeSaved_s);
}

export interface LimitRun {
	key: string;
	start_s: number;
	end_s: number;
}

/**
 * Runs of constant limit in force. A run covers [t_i, t_{j+1}) for samples i…j, so adjacent
 * runs meet without gaps; the last run ends at the last sample. Null samples are no run.
 */
export function limitRuns(t_s: readonly number[], limit: readonly (string | null)[]): LimitRun[] {
	const n = Math.min(t_s.length, limit.length);
	const runs: LimitRun[] = [];
	let i = 0;
	while (i < n) {
		const key = limit[i];
		let j = i;
		while (j + 1 < n && limit[j + 1] === key) j++;
		if (key !== null && key !== undefined && key !== '') {
			runs.push({ key, start_s: t_s[i], end_s: j + 1 < n ? t_s[j + 1] : t_s[j] });
		}
		i = j + 1;
	}
	return runs;
}

/** Distinct limit keys in order of first appearance. */
export function limitsPresent(limit: readonly (string | null)[]): string[] {
	const seen: string[] = [];
	for (const k of limit) if (k && !seen.includes(k)) seen.push(k);
	return seen;
}

/** Total time each limit is in force, s, from the runs. */
export function limitDurations(runs: readonly LimitRun[]): Map<string, number> {
	const m = new Map<string, number>();
	for (const r of runs) m.set(r.key, (m.get(r.key) ?? 0) + (r.end_s - r.start_s));
	return m;
}

export interface PhaseStart {
	t_s: number;
	phase: string;
}

/** Start time of each phase (the first sample, then every change of phase). */
export function phaseStarts(t_s: readonly number[], phase: readonly string[] | undefined): PhaseStart[] {
	if (!phase || phase.length === 0) return [];
	const n = Math.min(t_s.length, phase.length);
	const out: PhaseStart[] = [];
	for (let i = 0; i < n; i++) {
		if (i === 0 || phase[i] !== phase[i - 1]) out.push({ t_s: t_s[i], phase: phase[i] });
	}
	return out;
}

/** A "nice" step (1, 2, 2.5 or 5 × 10ⁿ) close to `raw`. */
export function niceStep(raw: number): number {
	if (!(raw > 0) || !Number.isFinite(raw)) return 1;
	const mag = 10 ** Math.floor(Math.log10(raw));
	const f = raw / mag;
	const nice = f <= 1 ? 1 : f <= 2 ? 2 : f <= 2.5 ? 2.5 : f <= 5 ? 5 : 10;
	return nice * mag;
}

/**
 * Axis range covering the finite `values` and every `include` value (limit lines must stay
 * visible), widened outward to multiples of a nice step, about `ticks` intervals.
 */
export function niceRange(
	values: readonly number[],
	include: readonly (number | null | undefined)[] = [],
	ticks = 4
): { min: number; max: number; step: number } {
	let lo = Infinity;
	let hi = -Infinity;
	for (const v of values) {
		if (Number.isFinite(v)) {
			if (v < lo) lo = v;
			if (v > hi) hi = v;
		}
	}
	for (const v of include) {
		if (v !== null && v !== undefined && Number.isFinite(v)) {
			if (v < lo) lo = v;
			if (v > hi) hi = v;
		}
	}
	if (!Number.isFinite(lo)) return { min: 0, max: 1, step: 0.25 };
	if (hi - lo < 1e-12) {
		const pad = Math.abs(hi) > 0 ? Math.abs(hi) * 0.05 : 1;
		lo -= pad;
		hi += pad;
	}
	const step = niceStep((hi - lo) / ticks);
	// Float noise (e.g. 4.2/0.1) must not push a bound one step out.
	const min = Math.floor(lo / step + 1e-9) * step;
	const max = Math.ceil(hi / step - 1e-9) * step;
	return { min: Number(min.toPrecision(12)), max: Number(max.toPrecision(12)), step };
}

function extent(values: readonly number[]): { min: number; max: number } | null {
	let min = Infinity;
	let max = -Infinity;
	for (const v of values) {
		if (Number.isFinite(v)) {
			if (v < min) min = v;
			if (v > max) max = v;
		}
	}
	return Number.isFinite(min) ? { min, max } : null;
}

// ---------------------------------------------------------------- Pareto

export const PARETO_CSV_HEADER = [
	'Point id',
	'Lead time (min)',
	'Set-point (°C)',
	'Heater cap (kW)',
	'Time saved (min)',
	'Energy spent (kWh)',
	'Arrival cell temperature (°C)',
	'On front',
	'Feasible',
	'Knee (recommended)',
	'Rule pick'
];

export function paretoCsv(
	points: readonly ParetoPoint[],
	recommendedId?: ParetoPoint['id'] | null,
	ruleId?: ParetoPoint['id'] | null
): string {
	return toCsv(
		PARETO_CSV_HEADER,
		points.map((p) => [
			String(p.id),
			toMin(p.leadTime_s),
			toCelsius(p.setpoint_K),
			p.heaterPowerCap_W == null ? null : toKW(p.heaterPowerCap_W),
			p.feasible ? toMin(p.timeSaved_s) : null,
			p.feasible ? toKWh(p.energy_Wh) : null,
			p.arrivalCellTemp_K == null ? null : toCelsius(p.arrivalCellTemp_K),
			p.onFront,
			p.feasible,
			recommendedId != null && p.id === recommendedId,
			ruleId != null && p.id === ruleId
		])
	);
}

/** "lead time 20 min, set-point 25 °C" */
export function strategyWords(p: { leadTime_s: number; setpoint_K: number }): string {
	return `lead time ${fixed(toMin(p.leadTime_s), 0)} min, set-point ${fixed(toCelsius(p.setpoint_K), 0)} °C`;
}

export function paretoSummary(
	points: readonly ParetoPoint[],
	recommendedId?: ParetoPoint['id'] | null,
	ruleId?: ParetoPoint['id'] | null
): string {
	const feasible = points.filter((p) => p.feasible);
	const front = frontInOrder(feasible.filter((p) => p.onFront));
	const infeasible = points.filter((p) => !p.feasible);
	const parts: string[] = [
		`Pareto chart of charging time saved (minutes) against energy spent (kWh), baseline without pre-conditioning at the origin. ` +
			`${feasible.length} feasible strategies, ${front.length} on the front, ${feasible.length - front.length} dominated, ${infeasible.length} infeasible.`
	];
	if (front.length > 0) {
		parts.push(
			'Front, by energy: ' +
				front
					.map((p) => `${strategyWords(p)}: ${fixed(toMin(p.timeSaved_s), 1)} min saved for ${fixed(toKWh(p.energy_Wh), 2)} kWh`)
					.join('; ') +
				'.'
		);
	}
	const rec = points.find((p) => recommendedId != null && p.id === recommendedId);
	if (rec) parts.push(`Knee (recommended): ${strategyWords(rec)}, ${fixed(toMin(rec.timeSaved_s), 1)} min saved for ${fixed(toKWh(rec.energy_Wh), 2)} kWh.`);
	const rule = points.find((p) => ruleId != null && p.id === ruleId);
	if (rule) parts.push(`Rule pick: ${strategyWords(rule)}, ${fixed(toMin(rule.timeSaved_s), 1)} min saved for ${fixed(toKWh(rule.energy_Wh), 2)} kWh.`);
	if (infeasible.length > 0) parts.push('Infeasible: ' + infeasible.map((p) => strategyWords(p)).join('; ') + '.');
	return parts.join(' ');
}

// ---------------------------------------------------------------- Fronts overlay

export function frontsCsv(fronts: readonly { label: string; points: readonly FrontPoint[] }[]): string {
	return toCsv(
		['Scenario', 'Lead time (min)', 'Set-point (°C)', 'Time saved (min)', 'Energy spent (kWh)'],
		fronts.flatMap((f) =>
			frontInOrder(f.points).map((p) => [f.label, toMin(p.leadTime_s), toCelsius(p.setpoint_K), toMin(p.timeSaved_s), toKWh(p.energy_Wh)])
		)
	);
}

export function frontsSummary(fronts: readonly { label: string; points: readonly FrontPoint[] }[]): string {
	const lines = fronts.map((f) => {
		const pts = frontInOrder(f.points);
		if (pts.length === 0) return `${f.label}: no front points`;
		const best = pts[pts.length - 1];
		return `${f.label}: ${pts.length} front points, from ${fixed(toMin(pts[0].timeSaved_s), 1)} min saved for ${fixed(toKWh(pts[0].energy_Wh), 2)} kWh up to ${fixed(toMin(best.timeSaved_s), 1)} min saved for ${fixed(toKWh(best.energy_Wh), 2)} kWh`;
	});
	return `Fronts of ${fronts.length} scenarios, time saved (minutes) against energy spent (kWh). ${lines.join('; ')}.`;
}

// ---------------------------------------------------------------- Heat map

export function heatmapCsv(leadTimes_s: readonly number[], setpoints_K: readonly number[], cells: readonly HeatmapCell[]): string {
	return toCsv(
		['Lead time (min)', 'Set-point (°C)', 'Time saved (min)', 'Energy spent (kWh)', 'Status'],
		cells.map((c) => [
			toMin(leadTimes_s[c.leadIndex]),
			toCelsius(setpoints_K[c.setIndex]),
			c.timeSaved_s == null ? null : toMin(c.timeSaved_s),
			c.energy_Wh == null ? null : toKWh(c.energy_Wh),
			cellStatus(c)
		])
	);
}

export function cellStatus(c: HeatmapCell): 'infeasible' | 'no result' | 'dominated' | 'on front' {
	if (!c.feasible) return 'infeasible';
	if (c.timeSaved_s == null || !Number.isFinite(c.timeSaved_s)) return 'no result';
	return c.dominated ? 'dominated' : 'on front';
}

export function heatmapSummary(leadTimes_s: readonly number[], setpoints_K: readonly number[], cells: readonly HeatmapCell[]): string {
	const ok = cells.filter((c) => cellStatus(c) === 'on front' || cellStatus(c) === 'dominated');
	const best = ok.reduce<HeatmapCell | null>((b, c) => (b === null || (c.timeSaved_s ?? -Infinity) > (b.timeSaved_s ?? -Infinity) ? c : b), null);
	const infeasible = cells.filter((c) => !c.feasible);
	const parts = [
		`Heat map of charging time saved (minutes) over ${leadTimes_s.length} lead times (${fixed(toMin(Math.min(...leadTimes_s)), 0)} to ${fixed(toMin(Math.max(...leadTimes_s)), 0)} min) and ${setpoints_K.length} set-points (${fixed(toCelsius(Math.min(...setpoints_K)), 0)} to ${fixed(toCelsius(Math.max(...setpoints_K)), 0)} °C).`,
		`${ok.length} cells with results, ${ok.filter((c) => !c.dominated).length} on the front, ${infeasible.length} infeasible.`
	];
	if (best && best.timeSaved_s != null) {
		parts.push(
			`Most time saved: ${fixed(toMin(best.timeSaved_s), 1)} min at ${strategyWords({ leadTime_s: leadTimes_s[best.leadIndex], setpoint_K: setpoints_K[best.setIndex] })}.`
		);
	}
	return parts.join(' ');
}

// ---------------------------------------------------------------- Traces

export const TRACE_CSV_HEADER = [
	'Time (s)',
	'Phase',
	'Cell current (A)',
	'Cell voltage (V)',
	'State of charge (%)',
	'Cell temperature (°C)',
	'Coolant temperature (°C)',
	'Anode potential (mV)',
	'Heater power (kW)',
	'Chiller power (kW)',
	'Limit in force'
];

export function traceCsv(s: TraceSeries): string {
	const rows: Cell[][] = s.t_s.map((t, i) => [
		t,
		s.phase?.[i] ?? null,
		s.current_A[i],
		s.voltage_V[i],
		toPercent(s.soc[i]),
		toCelsius(s.cellTemp_K[i]),
		toCelsius(s.coolantTemp_K[i]),
		toMilliVolts(s.anodePotential_V[i]),
		toKW(s.heaterPower_W[i]),
		toKW(s.chillerPower_W[i]),
		s.limit[i] ?? null
	]);
	return toCsv(TRACE_CSV_HEADER, rows);
}

export function traceSummary(s: TraceSeries, limits: TraceLimits, limitWords: (key: string) => string): string {
	const t = extent(s.t_s);
	if (!t) return 'No trace data.';
	const cur = extent(s.current_A);
	const v = extent(s.voltage_V);
	const cell = extent(s.cellTemp_K);
	const anode = extent(s.anodePotential_V);
	const soc = extent(s.soc);
	const parts = [
		`Stacked traces from ${fixed(toMin(t.min), 1)} to ${fixed(toMin(t.max), 1)} min (0 = plug-in).`,
		cur ? `Cell current ${fixed(cur.min, 0)} to ${fixed(cur.max, 0)} A${limits.chargerMaxCurrent_A != null ? `, charger limit ${fixed(limits.chargerMaxCurrent_A, 0)} A` : ''}.` : '',
		v ? `Cell voltage up to ${fixed(v.max, 3)} V, limit ${fixed(limits.maxVoltage_V, 2)} V.` : '',
		cell ? `Cell temperature ${fixed(toCelsius(cell.min), 1)} to ${fixed(toCelsius(cell.max), 1)} °C, limit ${fixed(toCelsius(limits.maxCellTemp_K), 0)} °C.` : '',
		anode ? `Lowest anode potential ${fixed(toMilliVolts(anode.min), 1)} mV, plating margin ${fixed(toMilliVolts(limits.anodeMargin_V), 0)} mV.` : '',
		soc ? `State of charge ${fixed(toPercent(soc.min), 0)} to ${fixed(toPercent(soc.max), 0)} %.` : ''
	];
	const durations = [...limitDurations(limitRuns(s.t_s, s.limit))].filter(([, d]) => d > 0);
	if (durations.length > 0) {
		parts.push('Limit in force: ' + durations.map(([k, d]) => `${limitWords(k)} for ${fixed(toMin(d), 1)} min`).join(', ') + '.');
	}
	return parts.filter(Boolean).join(' ');
}
