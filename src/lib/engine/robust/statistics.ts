/**
 * Sample statistics of a robust study, from PAIRED samples: strategy s and the baseline were
 * simulated under the same sample j, so time saved and energy are differences within a sample.
 *
 * Quantiles: Hyndman & Fan, "Sample Quantiles in Statistical Packages", The American
 * Statistician 50 (1996) 361–365, definition 7 (linear interpolation between order statistics,
 * h = (n − 1)·p + 1; the default of R and of spreadsheet PERCENTILE).
 *
 * Expected regret (L. J. Savage, "The Theory of Statistical Decision", JASA 46 (1951) 55–67, the
 * minimax-regret idea; the expectation over samples is ours): in sample j the best available
 * choice saves best_j = max(0, max_s timeSaved_sj) — 0 being "no pre-conditioning"; strategy s
 * regrets best_j − timeSaved_sj; the expected regret is the mean over samples.
 */

export interface QuantileSummary {
	p10: number;
	p50: number;
	p90: number;
	mean: number;
	min: number;
	max: number;
}

/** Hyndman–Fan definition 7 on values sorted ascending; p ∈ [0, 1]. */
export function quantileSorted(sorted: readonly number[], p: number): number {
	const n = sorted.length;
	if (n === 0) return NaN;
	if (!(p >= 0 && p <= 1)) throw new RangeError(`A quantile level must lie in [0, 1] (got ${p}).`);
	const h = (n - 1) * p;
	const lo = Math.floor(h);
	const hi = Math.min(lo + 1, n - 1);
	return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}

export function quantile(values: readonly number[], p: number): number {
	return quantileSorted([...values].sort((a, b) => a - b), p);
}

export function mean(values: readonly number[]): number {
	if (values.length === 0) return NaN;
	let s = 0;
	for (const v of values) s += v;
	return s / values.length;
}

/** P10, P50, P90, mean, min and max of finite values (NaN fields when there are none). */
export function summarise(values: readonly number[]): QuantileSummary {
	const sorted = values.filter(Number.isFinite).sort((a, b) => a - b);
	return {
		p10: quantileSorted(sorted, 0.1),
		p50: quantileSorted(sorted, 0.5),
		p90: quantileSorted(sorted, 0.9),
		mean: mean(sorted),
		min: sorted.length ? sorted[0] : NaN,
		max: sorted.length ? sorted[sorted.length - 1] : NaN
	};
}

/** What one simulation contributes to the statistics. */
export interface RunOutcome {
	/** Time from plug-in to the target; the time cap when the target was not reached. */
	timeToTarget_s: number;
	reachedTarget: boolean;
	/** Heater + chiller electrical energy from the pack during drive and dwell, Wh. */
	driveEnergy_Wh: number;
	/** Heater + chiller electrical energy from the grid during the charge, Wh. */
	chargeEnergy_Wh: number;
	/** Lowest anode potential during the charge, V. */
	minAnodePotential_V: number;
}

/** Paired differences of one strategy against the baseline, sample by sample. */
export interface PairedSamples {
	timeSaved_s: number[];
	energy_Wh: number[];
	minAnodePotential_V: number[];
	/** Samples in which the strategy or its baseline did not reach the target (time saved is then a bound). */
	unreached: number;
}

export function pairSamples(baseline: readonly RunOutcome[], strategy: readonly RunOutcome[]): PairedSamples {
	if (baseline.length !== strategy.length) {
		throw new RangeError(`Paired samples need as many baseline as strategy runs (got ${baseline.length} and ${strategy.length}).`);
	}
	const out: PairedSamples = { timeSaved_s: [], energy_Wh: [], minAnodePotential_V: [], unreached: 0 };
	strategy.forEach((s, j) => {
		const b = baseline[j];
		out.timeSaved_s.push(b.timeToTarget_s - s.timeToTarget_s);
		// As in a nominal sweep: energy before arrival plus energy during the charge, each against the baseline.
		out.energy_Wh.push(s.driveEnergy_Wh - b.driveEnergy_Wh + (s.chargeEnergy_Wh - b.chargeEnergy_Wh));
		out.minAnodePotential_V.push(s.minAnodePotential_V);
		if (!s.reachedTarget || !b.reachedTarget) out.unreached++;
	});
	return out;
}

export interface StrategyRobustness {
	samples: number;
	timeSaved_s: QuantileSummary;
	energy_Wh: QuantileSummary;
	/** Share of samples saving less than the user's threshold. */
	probSavingBelow: number;
	threshold_s: number;
	/** Share of samples charging slower than no pre-conditioning (time saved < 0). */
	probWorseThanBaseline: number;
	expectedRegret_s: number;
	/** Lowest anode potential over all samples, V (the controller keeps it at or above the cell's margin). */
	worstAnodePotential_V: number;
	unreached: number;
}

/**
 * Robustness of every strategy of a scenario. `paired[s]` holds strategy s's paired samples (all
 * strategies with the same sample count); `threshold_s` is the "saves less than" level.
 */
export function robustness(paired: readonly PairedSamples[], threshold_s: number): StrategyRobustness[] {
	if (!Number.isFinite(threshold_s)) throw new RangeError(`The time-saved threshold must be a finite number of seconds (got ${threshold_s}).`);
	const n = paired.length ? paired[0].timeSaved_s.length : 0;
	for (const p of paired) {
		if (p.timeSaved_s.length !== n) throw new RangeError('Every strategy needs the same number of samples for regret.');
	}
	const best = new Array<number>(n).fill(0);
	for (const p of paired) {
		p.timeSaved_s.forEach((t, j) => {
			if (Number.isFinite(t) && t > best[j]) best[j] = t;
		});
	}
	return paired.map((p) => {
		let below = 0;
		let worse = 0;
		let regret = 0;
		p.timeSaved_s.forEach((t, j) => {
			if (t < threshold_s) below++;
			if (t < 0) worse++;
			regret += best[j] - t;
		});
		return {
			samples: n,
			timeSaved_s: summarise(p.timeSaved_s),
			energy_Wh: summarise(p.energy_Wh),
			probSavingBelow: n ? below / n : NaN,
			threshold_s,
			probWorseThanBaseline: n ? worse / n : NaN,
			expectedRegret_s: n ? regret / n : NaN,
			worstAnodePotential_V: p.minAnodePotential_V.reduce((m, v) => Math.min(m, v), Infinity),
			unreached: p.unreached
		};
	});
}
