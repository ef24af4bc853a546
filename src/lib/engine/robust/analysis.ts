/**
 * From the paired runs of one scenario to what the pages show: per-strategy robustness
 * (quantiles, probabilities, regret, worst anode potential), the robust front and its knee, the
 * nominal knee's robustness beside it, and (with a sensitivity design) the indices of time saved
 * and energy per uncertain input.
 *
 * Statistics use the independent samples of the design: rows A (and B with a sensitivity design;
 * both are Latin hypercubes drawn from the input distributions). The A_B^(i) rows serve the
 * indices only.
 */
import type { Strategy } from '../schemas';
import type { UnitDesign } from './design';
import type { UncertainInput } from './uncertainty';
import { pairSamples, robustness, type PairedSamples, type StrategyRobustness } from './statistics';
import { robustFront, type RobustFront, type RobustFrontOptions } from './front';
import { sobolIndices, type SensitivityIndex, type SensitivityOptions } from './sobol';
import type { PairedRuns } from './apply';

export interface ScenarioRobustness {
	/** Independent samples the statistics use. */
	samples: number;
	strategies: StrategyRobustness[];
	front: RobustFront;
	/**
	 * Does the nominal choice survive? The nominal knee's robustness beside the robust knee: whether
	 * it is on the robust front, whether it is the robust knee, and the time saved it gives up at the
	 * low quantile against the robust knee (> 0: the robust knee saves more in the bad cases).
	 * Null when no nominal knee was given.
	 */
	nominal: {
		strategyIndex: number;
		robustness: StrategyRobustness;
		onRobustFront: boolean;
		isRobustKnee: boolean;
		lowQuantileShortfall_s: number | null;
	} | null;
	/** Sensitivity of time saved and energy per input, for the strategies asked for (keyed by strategy index). */
	sensitivity: Record<number, { inputs: UncertainInput[]; timeSaved_s: SensitivityIndex[]; energy_Wh: SensitivityIndex[] }>;
}

export interface AnalysisOptions extends RobustFrontOptions {
	/** "Saves less than" threshold, s (default 0: same as worse than the baseline or equal). */
	threshold_s?: number;
	/** Strategy indices to compute sensitivity indices for (default: the robust front's knee, if any). */
	sensitivityFor?: number[];
	sensitivityOptions?: SensitivityOptions;
	/** Index of the knee of the nominal front (from the nominal sweep), to set beside the robust one. */
	nominalKnee?: number | null;
}

/** The independent rows (A, and B with a sensitivity design) of paired samples over all design rows. */
function independentRows(p: PairedSamples, design: UnitDesign): PairedSamples {
	const m = design.sensitivity ? 2 * design.samples : design.samples;
	return {
		timeSaved_s: p.timeSaved_s.slice(0, m),
		energy_Wh: p.energy_Wh.slice(0, m),
		minAnodePotential_V: p.minAnodePotential_V.slice(0, m),
		unreached: NaN
	};
}

export function analyseScenario(strategies: readonly Strategy[], runs: PairedRuns, design: UnitDesign, options: AnalysisOptions = {}): ScenarioRobustness {
	if (runs.baseline.length !== design.rows.length) {
		throw new RangeError(`The runs hold ${runs.baseline.length} samples but the design has ${design.rows.length} rows.`);
	}
	const m = design.sensitivity ? 2 * design.samples : design.samples;
	const full = runs.strategies.map((s) => pairSamples(runs.baseline, s));
	const indep = full.map((p, s) => {
		const q = independentRows(p, design);
		q.unreached = pairSamples(runs.baseline.slice(0, m), runs.strategies[s].slice(0, m)).unreached;
		return q;
	});
	const stats = robustness(indep, options.threshold_s ?? 0);
	const front = robustFront(strategies, indep, options);
	const sensitivity: ScenarioRobustness['sensitivity'] = {};
	if (design.sensitivity && design.inputs.length > 0) {
		const which = options.sensitivityFor ?? (front.knee ? [front.knee.strategyIndex] : []);
		for (const s of which) {
			if (!(s >= 0 && s < strategies.length)) throw new RangeError(`No strategy ${s} to compute sensitivity indices for.`);
			sensitivity[s] = {
				inputs: design.inputs,
				timeSaved_s: sobolIndices(full[s].timeSaved_s, design.samples, options.sensitivityOptions),
				energy_Wh: sobolIndices(full[s].energy_Wh, design.samples, options.sensitivityOptions)
			};
		}
	}
	let nominal: ScenarioRobustness['nominal'] = null;
	const nk = options.nominalKnee;
	if (nk !== undefined && nk !== null) {
		if (!(Number.isInteger(nk) && nk >= 0 && nk < strategies.length)) throw new RangeError(`No strategy ${nk} for the nominal knee.`);
		const rk = front.knee?.strategyIndex;
		nominal = {
			strategyIndex: nk,
			robustness: stats[nk],
			onRobustFront: front.front.includes(nk),
			isRobustKnee: rk === nk,
			lowQuantileShortfall_s: rk === undefined ? null : front.points[rk].timeSaved_s - front.points[nk].timeSaved_s
		};
	}
	return { samples: m, strategies: stats, front, nominal, sensitivity };
}
