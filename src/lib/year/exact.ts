/**
 * Year of use, exact mode: instead of reading figures from the sweep's grid, every sampled charge
 * is simulated by the engine at its own ambient and arrival state of charge (at the evaluation's
 * state of health), once without pre-conditioning (the baseline) and once with the strategy each
 * policy applies to it. Pure: planning the simulations and adding up their results; running them
 * is the queue's job (src/lib/server/year-exact.ts).
 *
 * Which strategy a policy applies to a charge:
 *   none  — none: 0 s saved, 0 Wh, every charge.
 *   fixed — the rule's lead time and set-point (and the heater cap the sweep ran it with), when the
 *           charge's ambient is below the rule's threshold (or always); otherwise as 'none'.
 *   table — the calibration table's row of the nearest sweep scenario (nearest node on each of
 *           ambient, arrival state of charge and state of health; a tie goes to the lower node;
 *           outside the range the edge node). A row "keep the default policy" gives 0 s and 0 Wh;
 *           a scenario without a table row (its baseline did not reach the target) leaves the
 *           charge without figures.
 *
 * Per charge: time saved = baseline time to target − strategy time to target; energy = the
 * strategy's heater + chiller electricity (drive and charge) minus the baseline's — the sweep's
 * own definitions, so at a sweep node the exact figures are the stored ones. A charge whose
 * baseline or strategy run does not reach the target is "without figures", as in lookup mode.
 *
 * Identical charges (same ambient and arrival state of charge) are the same simulation: each
 * distinct one is simulated once and counted as often as it occurs (count × figure, like the
 * lookup's totals).
 *
 * The lookup's error per policy: lookup total − exact total, absolute and relative to the exact
 * total. The grid is called fine enough when, for the fixed rule and the calibration table, the
 * time saved and the energy of the lookup are each within 5 % of the exact ones, or within
 * 0.1 h and 0.1 kWh per vehicle-year where the exact total is too small for a share to mean
 * anything. (Our own rule; common practice, no source.)
 */
import type { SimulationSummary } from '../engine/index';
import type { ChargeEvent } from './sampler';
import { POLICY_LABEL, type FixedRule, type PolicyKind, type SweepNode, type YearResult, type PeriodFigures } from './evaluate';

export const GRID_TOLERANCE_SHARE = 0.05;
export const GRID_TOLERANCE_TIME_S = 360;
export const GRID_TOLERANCE_ENERGY_WH = 100;

export interface ExactStrategy {
	leadTime_s: number;
	coolantSetpoint_K: number;
	heaterPowerCap_W?: number;
}

/** One distinct charge: where it happens and how the policies treat it. */
export interface ExactKey {
	ambient_K: number;
	arrivalSoc: number;
	/** Charges of this kind per month. */
	months: number[];
	/** Index into `strategies`, null = no pre-conditioning (0 s, 0 Wh). */
	fixed: number | null;
	/** Index into `strategies`, null = keep the default policy; 'none' = no table row here. */
	table: number | null | 'none';
}

export interface ExactTask {
	key: number;
	/** null = the baseline. */
	strategy: number | null;
}

export interface ExactPlan {
	stateOfHealth: number;
	keys: ExactKey[];
	strategies: ExactStrategy[];
	tasks: ExactTask[];
}

const same = (a: number, b: number) => Math.abs(a - b) <= 1e-6 * Math.max(1, Math.abs(a), Math.abs(b));

/** Index of the nearest value of a sorted axis (tie: the lower one). */
export function nearestIndex(axis: readonly number[], x: number): number {
	let best = 0;
	for (let i = 1; i < axis.length; i++) if (Math.abs(axis[i] - x) < Math.abs(axis[best] - x) - 1e-12) best = i;
	return best;
}

export interface PlanInput {
	events: readonly ChargeEvent[];
	climate_K: readonly number[];
	stateOfHealth: number;
	nodes: readonly SweepNode[];
	fixed: FixedRule;
}

export function planExact(input: PlanInput): ExactPlan {
	const { events, climate_K, stateOfHealth, nodes, fixed } = input;
	if (nodes.length === 0) throw new RangeError('The sweep has no stored scenarios for this cell and pack.');
	const uniq = (xs: number[]) => [...new Set(xs)].sort((a, b) => a - b);
	const axes = [uniq(nodes.map((n) => n.ambient_K)), uniq(nodes.map((n) => n.arrivalSoc)), uniq(nodes.map((n) => n.stateOfHealth))];
	const strategies: ExactStrategy[] = [];
	const strategyIndex = (s: { leadTime_s: number; setpoint_K: number; heaterPowerCap_W: number | null }) => {
		let i = strategies.findIndex(
			(o) => same(o.leadTime_s, s.leadTime_s) && same(o.coolantSetpoint_K, s.setpoint_K) && (o.heaterPowerCap_W ?? null) === (s.heaterPowerCap_W ?? null)
		);
		if (i < 0) {
			i = strategies.length;
			strategies.push({ leadTime_s: s.leadTime_s, coolantSetpoint_K: s.setpoint_K, ...(s.heaterPowerCap_W !== null ? { heaterPowerCap_W: s.heaterPowerCap_W } : {}) });
		}
		return i;
	};
	// The fixed rule as the sweep ran it (its heater cap, if any, from the first scenario holding it).
	const fixedStored = nodes.flatMap((n) => n.strategies).find((s) => same(s.leadTime_s, fixed.leadTime_s) && same(s.setpoint_K, fixed.setpoint_K));
	const fixedIdx = strategyIndex({ leadTime_s: fixed.leadTime_s, setpoint_K: fixed.setpoint_K, heaterPowerCap_W: fixedStored?.heaterPowerCap_W ?? null });
	const sohNode = axes[2][nearestIndex(axes[2], stateOfHealth)];

	const keys: ExactKey[] = [];
	const byKey = new Map<string, number>();
	for (const e of events) {
		const a = climate_K[e.hourOfYear];
		if (!Number.isFinite(a)) throw new RangeError(`The climate has no ambient for hour ${e.hourOfYear} of the year.`);
		const id = `${a}|${e.arrivalSoc}`;
		let k = byKey.get(id);
		if (k === undefined) {
			const node = nodes.find(
				(n) => n.ambient_K === axes[0][nearestIndex(axes[0], a)] && n.arrivalSoc === axes[1][nearestIndex(axes[1], e.arrivalSoc)] && n.stateOfHealth === sohNode
			);
			const row = node?.table ?? null;
			let table: ExactKey['table'] = 'none';
			if (row && row.leadTime_s !== null && row.setpoint_K !== null) {
				const stored = node!.strategies.find((s) => same(s.leadTime_s, row.leadTime_s!) && same(s.setpoint_K, row.setpoint_K!));
				table = strategyIndex({ leadTime_s: row.leadTime_s, setpoint_K: row.setpoint_K, heaterPowerCap_W: row.heaterPowerCap_W ?? stored?.heaterPowerCap_W ?? null });
			} else if (row) table = null;
			k = keys.length;
			byKey.set(id, k);
			keys.push({
				ambient_K: a,
				arrivalSoc: e.arrivalSoc,
				months: new Array(12).fill(0),
				fixed: fixed.belowAmbient_K !== null && a >= fixed.belowAmbient_K ? null : fixedIdx,
				table
			});
		}
		keys[k].months[e.month]++;
	}
	const tasks: ExactTask[] = [];
	keys.forEach((k, i) => {
		tasks.push({ key: i, strategy: null });
		const wanted = new Set<number>();
		if (k.fixed !== null) wanted.add(k.fixed);
		if (typeof k.table === 'number') wanted.add(k.table);
		for (const s of [...wanted].sort((a, b) => a - b)) tasks.push({ key: i, strategy: s });
	});
	return { stateOfHealth, keys, strategies, tasks };
}

/** What exact mode keeps of one simulation. */
export interface TaskFigures {
	reached: boolean;
	time_s: number | null;
	energy_Wh: number;
}

export function taskFigures(s: SimulationSummary): TaskFigures {
	const t = s.timeToTarget_s;
	return {
		reached: Boolean(s.reachedTarget),
		time_s: typeof t === 'number' && Number.isFinite(t) ? t : null,
		energy_Wh: (s.heaterEnergyDrive_Wh ?? 0) + (s.chillerEnergyDrive_Wh ?? 0) + (s.heaterEnergyCharge_Wh ?? 0) + (s.chillerEnergyCharge_Wh ?? 0)
	};
}

export interface ExactPolicyYear {
	kind: PolicyKind;
	events: number;
	evaluated: number;
	withoutFigures: number;
	preconditioned: number;
	timeSaved_s: number;
	energy_Wh: number;
	monthly: PeriodFigures[];
}

export interface ErrorFigure {
	lookup: number;
	exact: number;
	/** lookup − exact */
	abs: number;
	/** (lookup − exact) / |exact|; null when the exact total is 0. */
	rel: number | null;
}

export interface LookupErrorRow {
	kind: PolicyKind;
	timeSaved_s: ErrorFigure;
	energy_Wh: ErrorFigure;
	withinTolerance: boolean;
}

export interface ExactYear {
	events: number;
	simulations: number;
	baselineChargeTime_s: number;
	baselineMissing: number;
	policies: ExactPolicyYear[];
	lookupError: LookupErrorRow[];
	gridFineEnough: boolean;
	verdict: string;
}

/** Adds up the simulated figures per policy. `figures[i]` belongs to `plan.tasks[i]`. */
export function exactYear(plan: ExactPlan, figures: readonly TaskFigures[], lookup: YearResult): ExactYear {
	if (figures.length !== plan.tasks.length) throw new RangeError(`${figures.length} simulation results for ${plan.tasks.length} simulations.`);
	const at = new Map<string, TaskFigures>();
	plan.tasks.forEach((t, i) => at.set(`${t.key}|${t.strategy}`, figures[i]));
	const events = plan.keys.reduce((n, k) => n + k.months.reduce((a, b) => a + b, 0), 0);
	let baselineChargeTime_s = 0;
	let baselineMissing = 0;
	for (let i = 0; i < plan.keys.length; i++) {
		const b = at.get(`${i}|null`)!;
		const n = plan.keys[i].months.reduce((a, c) => a + c, 0);
		if (b.reached && b.time_s !== null) baselineChargeTime_s += n * b.time_s;
		else baselineMissing += n;
	}
	const policies = (['none', 'fixed', 'table'] as const).map((kind): ExactPolicyYear => {
		const monthly = Array.from({ length: 12 }, () => ({ events: 0, timeSaved_s: 0, energy_Wh: 0 }));
		let withoutFigures = 0;
		let preconditioned = 0;
		plan.keys.forEach((k, i) => {
			const n = k.months.reduce((a, c) => a + c, 0);
			let t = 0;
			let e = 0;
			const s = kind === 'none' ? null : kind === 'fixed' ? k.fixed : k.table;
			if (s === 'none') {
				withoutFigures += n;
				return;
			}
			if (s !== null) {
				const base = at.get(`${i}|null`)!;
				const run = at.get(`${i}|${s}`)!;
				if (!base.reached || base.time_s === null || !run.reached || run.time_s === null) {
					withoutFigures += n;
					return;
				}
				t = base.time_s - run.time_s;
				e = run.energy_Wh - base.energy_Wh;
			}
			if (t !== 0 || e !== 0) preconditioned += n;
			k.months.forEach((c, m) => {
				monthly[m].events += c;
				monthly[m].timeSaved_s += c * t;
				monthly[m].energy_Wh += c * e;
			});
		});
		const evaluated = monthly.reduce((a, m) => a + m.events, 0);
		return {
			kind,
			events,
			evaluated,
			withoutFigures,
			preconditioned,
			timeSaved_s: monthly.reduce((a, m) => a + m.timeSaved_s, 0),
			energy_Wh: monthly.reduce((a, m) => a + m.energy_Wh, 0),
			monthly
		};
	});
	const lookupError = policies
		.filter((p) => p.kind !== 'none')
		.map((p): LookupErrorRow => {
			const l = lookup.policies.find((q) => q.kind === p.kind)!;
			const fig = (lv: number, ev: number): ErrorFigure => ({ lookup: lv, exact: ev, abs: lv - ev, rel: ev !== 0 ? (lv - ev) / Math.abs(ev) : null });
			const ts = fig(l.timeSaved_s, p.timeSaved_s);
			const en = fig(l.energy_Wh, p.energy_Wh);
			const ok = (f: ErrorFigure, floor: number) => Math.abs(f.abs) <= floor || (f.rel !== null && Math.abs(f.rel) <= GRID_TOLERANCE_SHARE);
			return { kind: p.kind, timeSaved_s: ts, energy_Wh: en, withinTolerance: ok(ts, GRID_TOLERANCE_TIME_S) && ok(en, GRID_TOLERANCE_ENERGY_WH) };
		});
	const gridFineEnough = lookupError.every((r) => r.withinTolerance);
	return { events, simulations: plan.tasks.length, baselineChargeTime_s, baselineMissing, policies, lookupError, gridFineEnough, verdict: verdictOf(lookupError) };
}

const pct = (r: number | null) => (r === null ? 'n/a' : `${(r * 100).toFixed(1)} %`);

/** The plain sentence shown on the evaluation page. */
export function verdictOf(rows: readonly LookupErrorRow[]): string {
	const worst = rows
		.flatMap((r) => [
			{ what: `${POLICY_LABEL[r.kind].toLowerCase()} time saved`, f: r.timeSaved_s },
			{ what: `${POLICY_LABEL[r.kind].toLowerCase()} energy`, f: r.energy_Wh }
		])
		.sort((a, b) => Math.abs(b.f.rel ?? 0) - Math.abs(a.f.rel ?? 0))[0];
	const bad = rows.filter((r) => !r.withinTolerance).map((r) => POLICY_LABEL[r.kind].toLowerCase());
	if (bad.length === 0)
		return `The sweep grid is fine enough for this year: the lookup's totals are within ${GRID_TOLERANCE_SHARE * 100} % of the simulated ones (largest difference: ${worst ? `${worst.what}, ${pct(worst.f.rel)}` : 'none'}).`;
	return `The sweep grid is not fine enough for this year: the lookup's totals for the ${bad.join(' and the ')} differ from the simulated ones by more than ${GRID_TOLERANCE_SHARE * 100} % (largest: ${worst.what}, ${pct(worst.f.rel)}); add sweep ambients or arrival states of charge near this climate's charges, or rely on the exact figures.`;
}
