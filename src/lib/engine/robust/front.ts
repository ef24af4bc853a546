/**
 * Robust front: the Pareto front (least energy, most time saved; see pareto.ts and
 * calibration.ts) of a LOW quantile of time saved against a HIGH quantile of energy, per strategy,
 * and its knee by the same rule as the nominal front (Kneedle, Satopää et al. 2011; fallback most
 * time saved per kWh). A strategy on it saves at least its time in (1 − q_time) of the cases while
 * spending at most its energy in q_energy of them — each marginally, not jointly.
 */
import { frontWithBaseline, pickKnee, type PickMethod, type RatedPoint } from '../calibration';
import type { Strategy } from '../schemas';
import { quantile } from './statistics';
import type { PairedSamples } from './statistics';

export interface RobustFrontOptions {
	/** Quantile level of time saved (default 0.1: P10, saved in nine cases out of ten). */
	timeQuantile?: number;
	/** Quantile level of energy (default 0.9: P90). */
	energyQuantile?: number;
	/** Kneedle sensitivity (default 1). */
	sensitivity?: number;
}

export interface RobustPoint {
	strategyIndex: number;
	timeSaved_s: number;
	energy_Wh: number;
}

export interface RobustFront {
	timeQuantile: number;
	energyQuantile: number;
	/** Every strategy's robust coordinates, in input order. */
	points: RobustPoint[];
	/** Strategy indices on the robust front, energy ascending. */
	front: number[];
	baselineOnFront: boolean;
	/** Recommended strategy index by the knee rule, or null when none saves time at its low quantile. */
	knee: { strategyIndex: number; method: PickMethod } | null;
}

export function robustFront(strategies: readonly Strategy[], paired: readonly PairedSamples[], options: RobustFrontOptions = {}): RobustFront {
	const qt = options.timeQuantile ?? 0.1;
	const qe = options.energyQuantile ?? 0.9;
	for (const [name, q] of [
		['time quantile', qt],
		['energy quantile', qe]
	] as const) {
		if (!(q >= 0 && q <= 1)) throw new RangeError(`The robust front's ${name} must lie in [0, 1] (got ${q}).`);
	}
	if (strategies.length !== paired.length) throw new RangeError(`One set of paired samples per strategy is needed (got ${paired.length} for ${strategies.length}).`);
	const rated: (RatedPoint & { strategyIndex: number })[] = strategies.map((s, i) => {
		const t = quantile(paired[i].timeSaved_s.filter(Number.isFinite), qt);
		const e = quantile(paired[i].energy_Wh.filter(Number.isFinite), qe);
		return {
			strategyIndex: i,
			leadTime_s: s.leadTime_s,
			setpoint_K: s.coolantSetpoint_K,
			...(s.heaterPowerCap_W !== undefined ? { heaterPowerCap_W: s.heaterPowerCap_W } : {}),
			energy_Wh: e,
			energyPreArrival_Wh: NaN,
			energyDuringCharge_Wh: NaN,
			timeToTarget_s: NaN,
			feasible: true,
			timeSaved_s: t
		};
	});
	const usable = rated.filter((p) => Number.isFinite(p.energy_Wh) && Number.isFinite(p.timeSaved_s));
	const { front, baselineOnFront } = frontWithBaseline(usable);
	const candidates = front.filter((p) => p.timeSaved_s > 0);
	const start = baselineOnFront ? { energy_Wh: 0, timeSaved_s: 0 } : (front.find((p) => p.timeSaved_s <= 0) ?? null);
	const pick = pickKnee(candidates, options.sensitivity ?? 1, start);
	return {
		timeQuantile: qt,
		energyQuantile: qe,
		points: rated.map((p) => ({ strategyIndex: p.strategyIndex, timeSaved_s: p.timeSaved_s, energy_Wh: p.energy_Wh })),
		front: front.map((p) => p.strategyIndex),
		baselineOnFront,
		knee: pick ? { strategyIndex: (pick.point as RatedPoint & { strategyIndex: number }).strategyIndex, method: pick.method } : null
	};
}
