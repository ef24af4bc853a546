/**
 * Year of use, lookup mode: what a pre-conditioning policy is worth over a climate year and a
 * charging pattern, read from a finished sweep's stored results. Pure.
 *
 * Policies compared:
 *   none  — no pre-conditioning: 0 s saved, 0 Wh spent, every event.
 *   fixed — one strategy of the sweep's grid (a lead time and a coolant set-point), applied to
 *           every event, or only to events whose ambient lies below a threshold (otherwise as
 *           'none'). Its time saved and energy per event are those the sweep stored for that
 *           strategy in each scenario.
 *   table — the sweep's calibration table (the recommended point per scenario; a scenario in
 *           which no strategy beats the baseline contributes 0 s and 0 Wh, as the table says
 *           "keep the default policy" there).
 *
 * Per event, the figures (time saved, energy spent) are interpolated multilinearly in ambient ×
 * arrival state of charge × state of health between the sweep's scenarios (interpolate.ts),
 * clamped at the edges of the sweep's range and counted per axis. Events whose surrounding
 * scenarios lack stored figures (a baseline or a strategy that did not reach the target) are
 * counted as "without figures" and left out of the totals, never filled in.
 *
 * Totals are summed per distinct (ambient, arrival state of charge) as count × figure, so a year
 * of identical events totals exactly their count times one event's figures.
 *
 * An event "was worth it" when the policy spent energy or saved time on it, saved time
 * (> 0 s), and — when both an energy price and a value of the driver's hour are given — the
 * time's value is at least the energy's cost. (Our own rule; common practice, no source.)
 */
import { interpolate, type Clamp, type Grid } from './interpolate';
import type { ChargeEvent } from './sampler';

export type PolicyKind = 'none' | 'fixed' | 'table';
export const POLICY_LABEL: Record<PolicyKind, string> = {
	none: 'No pre-conditioning',
	fixed: 'Fixed rule',
	table: 'Calibration table'
};

export interface FixedRule {
	leadTime_s: number;
	setpoint_K: number;
	/** Pre-condition only when the event's ambient is below this; null = always. */
	belowAmbient_K: number | null;
}

/** One stored strategy result in one scenario. */
export interface NodeStrategy {
	leadTime_s: number;
	setpoint_K: number;
	heaterPowerCap_W: number | null;
	/** Null when the run did not reach the target. */
	timeSaved_s: number | null;
	energy_Wh: number | null;
}

/** One scenario of the sweep (for the cell and pack evaluated). */
export interface SweepNode {
	ambient_K: number;
	arrivalSoc: number;
	stateOfHealth: number;
	/** Null when the baseline did not reach the target. */
	baselineTime_s: number | null;
	/** The calibration table's row: null lead time = keep the default policy (0 s, 0 Wh). */
	table: { leadTime_s: number | null; setpoint_K: number | null; heaterPowerCap_W?: number | null; timeSaved_s: number; energy_Wh: number } | null;
	strategies: NodeStrategy[];
}

export class LookupError extends Error {
	constructor(
		message: string,
		public field: string
	) {
		super(message);
	}
}

const uniqSorted = (xs: number[]) => [...new Set(xs)].sort((a, b) => a - b);
const same = (a: number, b: number) => Math.abs(a - b) <= 1e-6 * Math.max(1, Math.abs(a), Math.abs(b));

export interface PolicyGrids {
	timeSaved: Grid;
	energy: Grid;
}

/** Axes of the sweep's scenarios: ambient (K), arrival state of charge, state of health. */
export function sweepAxes(nodes: readonly SweepNode[]): number[][] {
	if (nodes.length === 0) throw new LookupError('The sweep has no stored scenarios for this cell and pack.', 'sweepId');
	return [uniqSorted(nodes.map((n) => n.ambient_K)), uniqSorted(nodes.map((n) => n.arrivalSoc)), uniqSorted(nodes.map((n) => n.stateOfHealth))];
}

function gridOf(nodes: readonly SweepNode[], axes: number[][], f: (n: SweepNode) => number): Grid {
	const values = new Float64Array(axes[0].length * axes[1].length * axes[2].length).fill(NaN);
	for (const n of nodes) {
		const i = axes[0].indexOf(n.ambient_K);
		const j = axes[1].indexOf(n.arrivalSoc);
		const k = axes[2].indexOf(n.stateOfHealth);
		values[(i * axes[1].length + j) * axes[2].length + k] = f(n);
	}
	return { axes, values };
}

const orNaN = (v: number | null | undefined) => (v === null || v === undefined || !Number.isFinite(v) ? NaN : v);

/** Strategies of the sweep's grid (distinct lead time and set-point pairs). */
export function gridStrategies(nodes: readonly SweepNode[]): { leadTime_s: number; setpoint_K: number }[] {
	const out: { leadTime_s: number; setpoint_K: number }[] = [];
	for (const n of nodes)
		for (const s of n.strategies)
			if (!out.some((o) => same(o.leadTime_s, s.leadTime_s) && same(o.setpoint_K, s.setpoint_K))) out.push({ leadTime_s: s.leadTime_s, setpoint_K: s.setpoint_K });
	return out.sort((a, b) => a.leadTime_s - b.leadTime_s || a.setpoint_K - b.setpoint_K);
}

export function policyGrids(nodes: readonly SweepNode[], kind: PolicyKind, rule?: FixedRule): PolicyGrids {
	const axes = sweepAxes(nodes);
	if (kind === 'none') return { timeSaved: gridOf(nodes, axes, () => 0), energy: gridOf(nodes, axes, () => 0) };
	if (kind === 'table') {
		return {
			timeSaved: gridOf(nodes, axes, (n) => orNaN(n.table?.timeSaved_s)),
			energy: gridOf(nodes, axes, (n) => orNaN(n.table?.energy_Wh))
		};
	}
	if (!rule) throw new LookupError('The fixed rule needs a lead time and a set-point.', 'fixedLeadTime_min');
	const matchOf = (n: SweepNode) => n.strategies.find((s) => same(s.leadTime_s, rule.leadTime_s) && same(s.setpoint_K, rule.setpoint_K));
	if (!nodes.some((n) => matchOf(n))) {
		const grid = gridStrategies(nodes);
		const leads = uniqSorted(grid.map((g) => g.leadTime_s)).map((s) => Number((s / 60).toFixed(3)));
		const sets = uniqSorted(grid.map((g) => g.setpoint_K)).map((k) => Number((k - 273.15).toFixed(2)));
		throw new LookupError(
			`Lookup mode reads the sweep's stored results, so the fixed rule must be one of its strategies: lead times ${leads.join(', ')} min and set-points ${sets.join(', ')} °C.`,
			'fixedLeadTime_min'
		);
	}
	return {
		timeSaved: gridOf(nodes, axes, (n) => orNaN(matchOf(n)?.timeSaved_s)),
		energy: gridOf(nodes, axes, (n) => orNaN(matchOf(n)?.energy_Wh))
	};
}

export interface Prices {
	energyPrice_per_kWh: number | null;
	hourValue: number | null;
}

export interface AxisClamps {
	below: number;
	above: number;
}

export interface PeriodFigures {
	events: number;
	timeSaved_s: number;
	energy_Wh: number;
}

export interface PolicyYear {
	kind: PolicyKind;
	/** Events of the year (per vehicle). */
	events: number;
	/** Events counted in the totals (not left out for lack of figures). */
	evaluated: number;
	withoutFigures: number;
	/** Events on which the policy spent energy or saved time. */
	preconditioned: number;
	worthIt: number;
	timeSaved_s: number;
	energy_Wh: number;
	clamped: { ambient: AxisClamps; arrivalSoc: AxisClamps; stateOfHealth: AxisClamps };
	monthly: PeriodFigures[];
	/** Per ambient bin (same bins as the year's histogram). */
	byAmbient: (PeriodFigures & { preconditioned: number })[];
}

export interface YearResult {
	events: number;
	/** Baseline charging time summed over events with a stored baseline, and how many lacked one. */
	baselineChargeTime_s: number;
	baselineMissing: number;
	ambientBins: { from_C: number; to_C: number; events: number }[];
	monthlyEvents: number[];
	policies: PolicyYear[];
	axes: { ambient_C: number[]; arrivalSoc: number[]; stateOfHealth: number[] };
}

export const AMBIENT_BIN_K = 5;

/** Sums count × figure per distinct key. */
class Tally {
	private groups = new Map<string, { n: number; t: number; e: number }>();
	add(key: string, t: number, e: number) {
		const g = this.groups.get(key);
		if (g) g.n++;
		else this.groups.set(key, { n: 1, t, e });
	}
	totals(): { events: number; timeSaved_s: number; energy_Wh: number } {
		let events = 0;
		let t = 0;
		let e = 0;
		for (const g of this.groups.values()) {
			events += g.n;
			t += g.n * g.t;
			e += g.n * g.e;
		}
		return { events, timeSaved_s: t, energy_Wh: e };
	}
}

export interface EvaluateInput {
	events: readonly ChargeEvent[];
	/** Ambient per hour of the climate year, K. */
	climate_K: readonly number[];
	stateOfHealth: number;
	nodes: readonly SweepNode[];
	fixed: FixedRule;
	prices: Prices;
}

function worth(t_s: number, e_Wh: number, prices: Prices): boolean {
	if (!(t_s > 0)) return false;
	if (prices.energyPrice_per_kWh === null || prices.hourValue === null) return true;
	return (t_s / 3600) * prices.hourValue >= (e_Wh / 1000) * prices.energyPrice_per_kWh;
}

export function evaluateYear(input: EvaluateInput): YearResult {
	const { events, climate_K, stateOfHealth, nodes } = input;
	const axes = sweepAxes(nodes);
	const ambientOf = (e: ChargeEvent) => {
		const a = climate_K[e.hourOfYear];
		if (!Number.isFinite(a)) throw new LookupError(`The climate has no ambient for hour ${e.hourOfYear} of the year.`, 'climateId');
		return a;
	};
	// Ambient histogram bins of 5 K on whole multiples of 5 °C.
	const amb = events.map(ambientOf);
	const binOf = (a_K: number) => Math.floor((a_K - 273.15) / AMBIENT_BIN_K);
	const bins = amb.map(binOf);
	const lo = bins.length ? Math.min(...bins) : 0;
	const hi = bins.length ? Math.max(...bins) : -1;
	const ambientBins: YearResult['ambientBins'] = [];
	for (let b = lo; b <= hi; b++) ambientBins.push({ from_C: b * AMBIENT_BIN_K, to_C: (b + 1) * AMBIENT_BIN_K, events: 0 });
	bins.forEach((b) => ambientBins[b - lo].events++);
	const monthlyEvents = new Array(12).fill(0);
	events.forEach((e) => monthlyEvents[e.month]++);

	const baselineGrid: Grid = gridOf(nodes, axes, (n) => orNaN(n.baselineTime_s));
	const baseTally = new Tally();
	let baselineMissing = 0;
	events.forEach((e, i) => {
		const v = interpolate(baselineGrid, [amb[i], e.arrivalSoc, stateOfHealth]).value;
		if (Number.isNaN(v)) baselineMissing++;
		else baseTally.add(`${amb[i]}|${e.arrivalSoc}`, v, 0);
	});

	const kinds: PolicyKind[] = ['none', 'fixed', 'table'];
	const policies = kinds.map((kind): PolicyYear => {
		const grids = policyGrids(nodes, kind, input.fixed);
		const year = new Tally();
		const months = Array.from({ length: 12 }, () => new Tally());
		const byBin = ambientBins.map(() => ({ tally: new Tally(), preconditioned: 0 }));
		const clamped = { ambient: { below: 0, above: 0 }, arrivalSoc: { below: 0, above: 0 }, stateOfHealth: { below: 0, above: 0 } };
		const axisNames = ['ambient', 'arrivalSoc', 'stateOfHealth'] as const;
		let withoutFigures = 0;
		let preconditioned = 0;
		let worthIt = 0;
		events.forEach((e, i) => {
			const a = amb[i];
			let t = 0;
			let en = 0;
			const skip = kind === 'none' || (kind === 'fixed' && input.fixed.belowAmbient_K !== null && a >= input.fixed.belowAmbient_K);
			if (!skip) {
				const x = [a, e.arrivalSoc, stateOfHealth];
				const lt = interpolate(grids.timeSaved, x);
				const le = interpolate(grids.energy, x);
				lt.clamped.forEach((c: Clamp, k) => {
					if (c < 0) clamped[axisNames[k]].below++;
					else if (c > 0) clamped[axisNames[k]].above++;
				});
				if (Number.isNaN(lt.value) || Number.isNaN(le.value)) {
					withoutFigures++;
					return;
				}
				t = lt.value;
				en = le.value;
			}
			const key = `${a}|${e.arrivalSoc}`;
			year.add(key, t, en);
			months[e.month].add(key, t, en);
			const bin = byBin[bins[i] - lo];
			bin.tally.add(key, t, en);
			if (t !== 0 || en !== 0) {
				preconditioned++;
				bin.preconditioned++;
				if (worth(t, en, input.prices)) worthIt++;
			}
		});
		const tot = year.totals();
		return {
			kind,
			events: events.length,
			evaluated: tot.events,
			withoutFigures,
			preconditioned,
			worthIt,
			timeSaved_s: tot.timeSaved_s,
			energy_Wh: tot.energy_Wh,
			clamped,
			monthly: months.map((m) => m.totals()),
			byAmbient: byBin.map((b) => ({ ...b.tally.totals(), preconditioned: b.preconditioned }))
		};
	});
	return {
		events: events.length,
		baselineChargeTime_s: baseTally.totals().timeSaved_s,
		baselineMissing,
		ambientBins,
		monthlyEvents,
		policies,
		axes: { ambient_C: axes[0].map((k) => Number((k - 273.15).toFixed(3))), arrivalSoc: axes[1], stateOfHealth: axes[2] }
	};
}

/** Figures for display: per vehicle or for a fleet (× fleetSize), in h, kWh and money. */
export interface PolicyFigures {
	kind: PolicyKind;
	label: string;
	hoursSaved_h: number;
	energy_kWh: number;
	energyCost: number | null;
	timeValue: number | null;
	/** kWh spent per hour saved; null when no time is saved. */
	kWhPerHourSaved: number | null;
	/** Share of the year's events where pre-conditioning was worth it, 0…1. */
	worthShare: number;
}

export function policyFigures(p: PolicyYear, prices: Prices, fleetSize = 1): PolicyFigures {
	const h = (p.timeSaved_s / 3600) * fleetSize;
	const kWh = (p.energy_Wh / 1000) * fleetSize;
	return {
		kind: p.kind,
		label: POLICY_LABEL[p.kind],
		hoursSaved_h: h,
		energy_kWh: kWh,
		energyCost: prices.energyPrice_per_kWh === null ? null : kWh * prices.energyPrice_per_kWh,
		timeValue: prices.hourValue === null ? null : h * prices.hourValue,
		kWhPerHourSaved: h > 0 ? kWh / h : null,
		worthShare: p.events ? p.worthIt / p.events : 0
	};
}
