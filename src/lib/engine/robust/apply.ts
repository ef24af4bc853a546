/**
 * Apply one sample of the uncertain inputs to a scenario, its cell and a strategy, and run a
 * paired study: the baseline and every strategy under the same samples.
 *
 * Mapping onto the engine's inputs (all exact no-ops when the sample value is 0):
 * - arrival-time error δ (> 0 = later): the car leaves at the planned time and arrives δ later,
 *   so the drive lasts duration + δ (at least 0), and the heater, started the lead time before the
 *   PREDICTED arrival, has run lead + δ (at least 0) at the real arrival. The baseline sees the
 *   same drive.
 * - ambient error: ambient_K + error; a pack soaked at ambient (no initialPackTemp_K) soaks at
 *   the real ambient.
 * - arrival SOC error: arrivalSoc + error.
 * - initial pack temperature offset: (initialPackTemp_K, or the real ambient) + offset.
 * - cell capacity spread c: electrode area × (1 + c) (capacity scales with the coated area; at the
 *   same current a larger cell sees a lower current density, as a real larger cell does).
 * - cell resistance spread r: film resistances of both electrodes and the contact resistance
 *   × (1 + r), reaction rate constants ÷ (1 + r) (charge-transfer resistance ∝ 1/k).
 * - cell diffusivity spread d: solid diffusivity of both electrodes × (1 + d).
 */
import { prepareScenario } from '../simulate';
import { EngineInputError, type CellParams, type PackDesign, type Scenario, type SimulationOptions, type Strategy } from '../schemas';
import { fmt } from '../units';
import { INPUT_SPECS, type UncertaintySet } from './uncertainty';
import type { SampleValues } from './design';
import type { RunOutcome } from './statistics';

export interface ScenarioBase {
	cell: CellParams;
	pack: PackDesign;
	scenario: Scenario;
}

/** The scenario and cell of one sample (strategy-independent part). */
export function applySampleToScenario(base: ScenarioBase, v: SampleValues): ScenarioBase {
	const s = base.scenario;
	const ambient_K = s.ambient_K + v.ambientError_K;
	const scenario: Scenario = {
		...s,
		ambient_K,
		arrivalSoc: s.arrivalSoc + v.arrivalSocError,
		drive: { ...s.drive, duration_s: Math.max(0, s.drive.duration_s + v.arrivalTimeError_s) }
	};
	if (v.initialPackTempOffset_K !== 0) scenario.initialPackTemp_K = (s.initialPackTemp_K ?? ambient_K) + v.initialPackTempOffset_K;
	const c = base.cell;
	const r = 1 + v.cellResistanceSpread;
	const d = 1 + v.cellDiffusivitySpread;
	const electrode = (e: CellParams['negative']): CellParams['negative'] => ({
		...e,
		filmResistance_ohm_m2: e.filmResistance_ohm_m2 * r,
		rateConstant: e.rateConstant / r,
		diffusivity_m2_s: e.diffusivity_m2_s * d
	});
	const cell: CellParams = {
		...c,
		electrodeArea_m2: c.electrodeArea_m2 * (1 + v.cellCapacitySpread),
		contactResistance_ohm: c.contactResistance_ohm * r,
		negative: electrode(c.negative),
		positive: electrode(c.positive)
	};
	return { cell, pack: base.pack, scenario };
}

/** The strategy of one sample: the lead time actually run before the real arrival. */
export function applySampleToStrategy(strategy: Strategy, v: SampleValues): Strategy {
	return { ...strategy, leadTime_s: Math.max(0, strategy.leadTime_s + v.arrivalTimeError_s) };
}

/**
 * Checks of an uncertainty set against a scenario: the bounds must keep the scenario within the
 * engine's accepted ranges (so no sample fails on input checks). Returns problems with the field
 * path of the bound to change.
 */
export function uncertaintyScenarioIssues(u: UncertaintySet, base: ScenarioBase): { field: string; message: string }[] {
	const out: { field: string; message: string }[] = [];
	const s = base.scenario;
	const range = (k: keyof UncertaintySet['inputs']) => {
		const d = u.inputs[k];
		return d ? { lower: d.lower, upper: d.upper } : { lower: 0, upper: 0 };
	};
	const soc = range('arrivalSocError');
	const socHi = s.target.soc !== undefined ? Math.min(0.95, s.target.soc) : 0.95;
	if (s.arrivalSoc + soc.lower < 0.02) {
		out.push({
			field: 'uncertainty.inputs.arrivalSocError.lower',
			message: `the lower bound ${INPUT_SPECS.arrivalSocError.show(soc.lower)} takes the arrival state of charge ${fmt.percent(s.arrivalSoc)} below 2 %`
		});
	}
	if (s.arrivalSoc + soc.upper >= socHi) {
		out.push({
			field: 'uncertainty.inputs.arrivalSocError.upper',
			message: `the upper bound ${INPUT_SPECS.arrivalSocError.show(soc.upper)} takes the arrival state of charge ${fmt.percent(s.arrivalSoc)} to ${fmt.percent(socHi)} or above (the target or the 95 % limit)`
		});
	}
	const amb = range('ambientError_K');
	const maxAmbient_K = Math.min(273.15 + 55, base.cell.limits.maxTemp_K);
	if (s.ambient_K + amb.lower < 273.15 - 40 || s.ambient_K + amb.upper >= maxAmbient_K) {
		out.push({
			field: amb.lower + s.ambient_K < 273.15 - 40 ? 'uncertainty.inputs.ambientError_K.lower' : 'uncertainty.inputs.ambientError_K.upper',
			message: `the ambient temperature error takes ${fmt.celsius(s.ambient_K)} outside −40 °C … ${fmt.celsius(maxAmbient_K)}`
		});
	}
	const init = range('initialPackTempOffset_K');
	const t0 = s.initialPackTemp_K ?? s.ambient_K;
	if (u.inputs.initialPackTempOffset_K && (t0 + init.lower + amb.lower < 273.15 - 40 || t0 + init.upper + amb.upper >= base.cell.limits.maxTemp_K)) {
		out.push({
			field: t0 + init.lower + amb.lower < 273.15 - 40 ? 'uncertainty.inputs.initialPackTempOffset_K.lower' : 'uncertainty.inputs.initialPackTempOffset_K.upper',
			message: `the initial pack temperature offset (with the ambient error) takes the pack from ${fmt.celsius(t0)} outside −40 °C … ${fmt.celsius(base.cell.limits.maxTemp_K)}`
		});
	}
	const arr = range('arrivalTimeError_s');
	const p = s.drive.profile;
	if (p.kind === 'table' && s.drive.duration_s + arr.upper > p.time_s[p.time_s.length - 1]) {
		out.push({
			field: 'uncertainty.inputs.arrivalTimeError_s.upper',
			message: `a late arrival of ${INPUT_SPECS.arrivalTimeError_s.show(arr.upper)} drives past the end of the drive table (${fmt.minutes(p.time_s[p.time_s.length - 1])}); extend the table or lower the bound`
		});
	}
	return out;
}

export function outcomeOf(summary: {
	timeToTarget_s: number | null;
	reachedTarget: boolean;
	heaterEnergyDrive_Wh: number;
	heaterEnergyCharge_Wh: number;
	chillerEnergyDrive_Wh: number;
	chillerEnergyCharge_Wh: number;
	minAnodePotential_V: number;
}, timeCap_s: number): RunOutcome {
	return {
		timeToTarget_s: summary.timeToTarget_s ?? timeCap_s,
		reachedTarget: summary.reachedTarget,
		driveEnergy_Wh: summary.heaterEnergyDrive_Wh + summary.chillerEnergyDrive_Wh,
		chargeEnergy_Wh: summary.heaterEnergyCharge_Wh + summary.chillerEnergyCharge_Wh,
		minAnodePotential_V: summary.minAnodePotential_V
	};
}

export interface PairedRuns {
	/** Baseline outcome per design row. */
	baseline: RunOutcome[];
	/** outcomes[s][row]. */
	strategies: RunOutcome[][];
}

/**
 * Simulate the baseline and every strategy of one scenario under every sample (same samples for
 * all: paired). Checks the set against the scenario first; throws EngineInputError naming the field.
 * `onProgress(done, total)` after each simulation.
 */
export function runPairedStudy(
	base: ScenarioBase,
	strategies: readonly Strategy[],
	u: UncertaintySet,
	samples: readonly SampleValues[],
	options: SimulationOptions = { keepSeries: false },
	onProgress?: (done: number, total: number) => void
): PairedRuns {
	const issues = uncertaintyScenarioIssues(u, base);
	if (issues.length) throw new EngineInputError(issues);
	const total = samples.length * (strategies.length + 1);
	let done = 0;
	const out: PairedRuns = { baseline: [], strategies: strategies.map(() => []) };
	for (const v of samples) {
		const applied = applySampleToScenario(base, v);
		const run = prepareScenario(applied);
		const cap = applied.scenario.timeCap_s;
		out.baseline.push(outcomeOf(run(null, options).summary, cap));
		onProgress?.(++done, total);
		strategies.forEach((st, i) => {
			out.strategies[i].push(outcomeOf(run(applySampleToStrategy(st, v), options).summary, cap));
			onProgress?.(++done, total);
		});
	}
	return out;
}
