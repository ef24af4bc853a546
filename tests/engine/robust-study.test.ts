import { describe, expect, it } from 'vitest';
import { demoPack, exampleScenario, prepareScenario, simulate, type SimulationOptions, type Strategy } from '../../src/lib/engine/index';
import {
	analyseScenario,
	applySampleToScenario,
	applySampleToStrategy,
	NOMINAL_SAMPLE,
	outcomeOf,
	pairSamples,
	robustFront,
	robustness,
	runPairedStudy,
	sampleValues,
	unitDesign,
	validateUncertaintySet,
	type PairedSamples
} from '../../src/lib/engine/robust/index';
import { nmc } from './helpers';

// A coarse but complete engine configuration keeps these real simulations cheap.
const options: SimulationOptions = { keepSeries: false, electrolyte: 'ideal', particleShells: 8 };
const base = { cell: nmc, pack: demoPack, scenario: exampleScenario };
const strategies: Strategy[] = [
	{ leadTime_s: 900, coolantSetpoint_K: 298.15 },
	{ leadTime_s: 1500, coolantSetpoint_K: 308.15 }
];

describe('all spreads zero: the robust study equals the nominal simulation exactly', () => {
	// Every input present, each with zero spread (normal sd 0, uniform and triangular with equal bounds).
	const u = validateUncertaintySet({
		seed: 5,
		samples: 10,
		inputs: {
			arrivalTimeError_s: { kind: 'normal', sd: 0, lower: -600, upper: 600 },
			ambientError_K: { kind: 'uniform', lower: 0, upper: 0 },
			arrivalSocError: { kind: 'triangular', lower: 0, mode: 0, upper: 0 },
			initialPackTempOffset_K: { kind: 'normal', sd: 0, lower: 0, upper: 0 },
			cellCapacitySpread: { kind: 'uniform', lower: 0, upper: 0 },
			cellResistanceSpread: { kind: 'normal', sd: 0, lower: -0.1, upper: 0.1 },
			cellDiffusivitySpread: { kind: 'triangular', lower: 0, mode: 0, upper: 0 }
		}
	});
	const samples = sampleValues(u);
	const runs = runPairedStudy(base, strategies, u, samples, options);
	const nominalBaseline = simulate({ ...base, strategy: null, options }).summary;
	const nominal = strategies.map((s) => simulate({ ...base, strategy: s, options }).summary);

	it('every sample is the nominal sample', () => {
		for (const v of samples) expect(v).toEqual(NOMINAL_SAMPLE);
	});

	it('baseline and strategies reproduce the nominal runs bit for bit in every sample', () => {
		for (const b of runs.baseline) expect(b).toEqual(outcomeOf(nominalBaseline, exampleScenario.timeCap_s));
		strategies.forEach((_, s) => {
			for (const r of runs.strategies[s]) expect(r).toEqual(outcomeOf(nominal[s], exampleScenario.timeCap_s));
		});
	});

	it('every quantile of time saved and energy equals the nominal sweep value (same definitions)', () => {
		const a = analyseScenario(strategies, runs, unitDesign(u));
		strategies.forEach((_, s) => {
			const saved = (nominalBaseline.timeToTarget_s ?? NaN) - (nominal[s].timeToTarget_s ?? NaN);
			const pre = nominal[s].heaterEnergyDrive_Wh + nominal[s].chillerEnergyDrive_Wh - (nominalBaseline.heaterEnergyDrive_Wh + nominalBaseline.chillerEnergyDrive_Wh);
			const during = nominal[s].heaterEnergyCharge_Wh + nominal[s].chillerEnergyCharge_Wh - (nominalBaseline.heaterEnergyCharge_Wh + nominalBaseline.chillerEnergyCharge_Wh);
			const st = a.strategies[s];
			for (const q of [st.timeSaved_s.p10, st.timeSaved_s.p50, st.timeSaved_s.p90, st.timeSaved_s.min, st.timeSaved_s.max]) expect(q).toBe(saved);
			for (const q of [st.energy_Wh.p10, st.energy_Wh.p50, st.energy_Wh.p90]) expect(q).toBe(pre + during);
			expect(st.timeSaved_s.mean).toBeCloseTo(saved, 9);
			expect(st.worstAnodePotential_V).toBe(nominal[s].minAnodePotential_V);
		});
	});
});

describe('applying a sample to a scenario (mapping stated in apply.ts)', () => {
	const v = {
		...NOMINAL_SAMPLE,
		arrivalTimeError_s: 300,
		ambientError_K: -2,
		arrivalSocError: 0.05,
		initialPackTempOffset_K: 1.5,
		cellCapacitySpread: 0.04,
		cellResistanceSpread: 0.1,
		cellDiffusivitySpread: -0.2
	};
	const applied = applySampleToScenario(base, v);

	it('a late arrival lengthens the drive and the heater run by the same 5 min', () => {
		expect(applied.scenario.drive.duration_s).toBe(exampleScenario.drive.duration_s + 300);
		expect(applySampleToStrategy(strategies[0], v).leadTime_s).toBe(strategies[0].leadTime_s + 300);
		// Arriving earlier than the lead time: the heater never ran before arrival.
		expect(applySampleToStrategy(strategies[0], { ...v, arrivalTimeError_s: -1200 }).leadTime_s).toBe(0);
	});

	it('ambient, arrival SOC and initial pack temperature move by their errors; the pack soaks at the real ambient', () => {
		expect(applied.scenario.ambient_K).toBe(exampleScenario.ambient_K - 2);
		expect(applied.scenario.arrivalSoc).toBeCloseTo(exampleScenario.arrivalSoc + 0.05, 15);
		expect(applied.scenario.initialPackTemp_K).toBe(exampleScenario.ambient_K - 2 + 1.5);
		expect(applySampleToScenario(base, { ...v, initialPackTempOffset_K: 0 }).scenario.initialPackTemp_K).toBeUndefined();
	});

	it('cell spreads scale area, resistances, rate constants and diffusivities', () => {
		expect(applied.cell.electrodeArea_m2).toBeCloseTo(nmc.electrodeArea_m2 * 1.04, 12);
		expect(applied.cell.contactResistance_ohm).toBeCloseTo(nmc.contactResistance_ohm * 1.1, 15);
		expect(applied.cell.negative.filmResistance_ohm_m2).toBeCloseTo(nmc.negative.filmResistance_ohm_m2 * 1.1, 15);
		expect(applied.cell.positive.rateConstant).toBeCloseTo(nmc.positive.rateConstant / 1.1, 15);
		expect(applied.cell.negative.diffusivity_m2_s).toBeCloseTo(nmc.negative.diffusivity_m2_s * 0.8, 25);
		// The input objects are left as they were.
		expect(base.cell.electrodeArea_m2).toBe(nmc.electrodeArea_m2);
	});

	it('a 10 % larger capacity takes about 10 % more energy from 20 % to 80 % (energy = capacity × ΔSOC × mean voltage; common practice, no source)', () => {
		const larger = applySampleToScenario(base, { ...NOMINAL_SAMPLE, cellCapacitySpread: 0.1 });
		const e = prepareScenario(larger)(null, options).summary.energyAdded_Wh;
		const e0 = prepareScenario(base)(null, options).summary.energyAdded_Wh;
		// Same SOC window and open-circuit curve; only losses differ a little with current density.
		expect(e / e0).toBeGreaterThan(1.07);
		expect(e / e0).toBeLessThan(1.13);
	});
});

describe('paired statistics on hand-made samples (definitions in statistics.ts)', () => {
	// Two strategies, five samples; time saved in s and energy in Wh.
	const p: PairedSamples[] = [
		{ timeSaved_s: [300, 200, -50, 400, 100], energy_Wh: [500, 600, 700, 800, 900], minAnodePotential_V: [0.02, 0.011, 0.03, 0.015, 0.02], unreached: 0 },
		{ timeSaved_s: [100, 250, 50, 100, 300], energy_Wh: [200, 200, 300, 300, 400], minAnodePotential_V: [0.05, 0.04, 0.03, 0.02, 0.01], unreached: 0 }
	];
	const r = robustness(p, 120);

	it('probabilities of saving less than the threshold and of doing worse than the baseline', () => {
		expect(r[0].probSavingBelow).toBe(2 / 5); // −50 and 100 are below 120 s
		expect(r[0].probWorseThanBaseline).toBe(1 / 5);
		expect(r[1].probSavingBelow).toBe(3 / 5);
		expect(r[1].probWorseThanBaseline).toBe(0);
	});

	it('expected regret against the best choice of each sample (including no pre-conditioning)', () => {
		// best per sample: 300, 250, 50, 400, 300
		expect(r[0].expectedRegret_s).toBeCloseTo((0 + 50 + 100 + 0 + 200) / 5, 12);
		expect(r[1].expectedRegret_s).toBeCloseTo((200 + 0 + 0 + 300 + 0) / 5, 12);
	});

	it('worst anode potential and quantiles', () => {
		expect(r[0].worstAnodePotential_V).toBe(0.011);
		expect(r[1].timeSaved_s.p50).toBe(100);
		expect(r[0].energy_Wh.p90).toBeCloseTo(860, 12); // h = 4·0.9 = 3.6 → 800 + 0.6·100
	});

	it('pairs a strategy with the baseline of the same sample', () => {
		const b = [
			{ timeToTarget_s: 2000, reachedTarget: true, driveEnergy_Wh: 10, chargeEnergy_Wh: 5, minAnodePotential_V: 0.01 },
			{ timeToTarget_s: 2500, reachedTarget: true, driveEnergy_Wh: 20, chargeEnergy_Wh: 5, minAnodePotential_V: 0.01 }
		];
		const s = [
			{ timeToTarget_s: 1500, reachedTarget: true, driveEnergy_Wh: 410, chargeEnergy_Wh: 105, minAnodePotential_V: 0.02 },
			{ timeToTarget_s: 2600, reachedTarget: false, driveEnergy_Wh: 20, chargeEnergy_Wh: 15, minAnodePotential_V: 0.03 }
		];
		expect(pairSamples(b, s)).toEqual({ timeSaved_s: [500, -100], energy_Wh: [500, 10], minAnodePotential_V: [0.02, 0.03], unreached: 1 });
	});
});

describe('robust front', () => {
	// Five strategies with fixed outcomes in every sample except their spread; P10 of time saved and P90 of energy.
	const mk = (t: number[], e: number[]): PairedSamples => ({ timeSaved_s: t, energy_Wh: e, minAnodePotential_V: t.map(() => 0.02), unreached: 0 });
	const st: Strategy[] = [600, 900, 1200, 1500, 1800].map((l) => ({ leadTime_s: l, coolantSetpoint_K: 298.15 }));
	const p = [
		mk([100, 100, 100], [100, 100, 100]),
		mk([400, 400, 400], [200, 200, 200]),
		mk([500, 500, 500], [400, 400, 400]),
		mk([550, 550, 550], [800, 800, 800]),
		// Best on paper (nominal would like it), but it saves little in a bad sample: low P10.
		mk([50, 600, 600], [250, 250, 250])
	];
	const f = robustFront(st, p);

	it('uses the low quantile of time saved and the high quantile of energy', () => {
		expect(f.points[4].timeSaved_s).toBeCloseTo(50 + 0.2 * 550, 12); // h = 2·0.1 = 0.2
		expect(f.points[0].energy_Wh).toBe(100);
	});

	it('is the non-dominated set of those coordinates, energy ascending, and recommends its knee', () => {
		// (100,100) (200,400) (400,500) (800,550) on the front; strategy 4 (250 Wh, 160 s) is dominated by strategy 1.
		expect(f.front).toEqual([0, 1, 2, 3]);
		// Kneedle on (0,0) (100,100) (200,400) (400,500) (800,550): normalised differences 0, 0.057, 0.477, 0.409, 0 — knee at 200 Wh.
		expect(f.knee).toEqual({ strategyIndex: 1, method: 'kneedle' });
	});

	it('sets the nominal knee beside the robust one: "does the nominal choice survive?"', () => {
		// The same five strategies as paired runs: a constant baseline and strategy time = baseline − time saved.
		const runs = {
			baseline: [0, 1, 2].map(() => ({ timeToTarget_s: 3000, reachedTarget: true, driveEnergy_Wh: 0, chargeEnergy_Wh: 0, minAnodePotential_V: 0.02 })),
			strategies: p.map((q) =>
				q.timeSaved_s.map((t, j) => ({ timeToTarget_s: 3000 - t, reachedTarget: true, driveEnergy_Wh: q.energy_Wh[j], chargeEnergy_Wh: 0, minAnodePotential_V: 0.02 }))
			)
		};
		const design = { inputs: [], samples: 3, rows: [[], [], []], sensitivity: false };
		// Nominally strategy 4 (600 s for 250 Wh in two samples of three) would be the pick.
		const a = analyseScenario(st, runs, design, { nominalKnee: 4 });
		expect(a.front.knee?.strategyIndex).toBe(1);
		expect(a.nominal).toMatchObject({ strategyIndex: 4, onRobustFront: false, isRobustKnee: false });
		expect(a.nominal?.lowQuantileShortfall_s).toBeCloseTo(400 - 160, 9);
		expect(a.nominal?.robustness.probWorseThanBaseline).toBe(0);
		expect(analyseScenario(st, runs, design, { nominalKnee: 1 }).nominal).toMatchObject({ onRobustFront: true, isRobustKnee: true, lowQuantileShortfall_s: 0 });
		expect(analyseScenario(st, runs, design).nominal).toBeNull();
	});

	it('refuses quantile levels outside [0, 1]', () => {
		expect(() => robustFront(st, p, { timeQuantile: 1.2 })).toThrow(/time quantile/);
	});
});

describe('a small robust study on the real engine (non-zero spreads)', () => {
	const u = validateUncertaintySet({
		seed: 21,
		samples: 10,
		inputs: {
			arrivalTimeError_s: { kind: 'uniform', lower: -600, upper: 600 },
			ambientError_K: { kind: 'normal', sd: 2, lower: -5, upper: 5 }
		}
	});
	const design = unitDesign(u);
	const samples = sampleValues(u, design);
	const runs = runPairedStudy(base, strategies, u, samples, options);
	const a = analyseScenario(strategies, runs, design, { threshold_s: 300 });

	it('each sample differs and the statistics are ordered P10 ≤ P50 ≤ P90 within min … max', () => {
		expect(new Set(runs.baseline.map((b) => b.timeToTarget_s)).size).toBeGreaterThan(1);
		for (const s of a.strategies) {
			const q = s.timeSaved_s;
			expect(q.min).toBeLessThanOrEqual(q.p10);
			expect(q.p10).toBeLessThanOrEqual(q.p50);
			expect(q.p50).toBeLessThanOrEqual(q.p90);
			expect(q.p90).toBeLessThanOrEqual(q.max);
			expect(s.samples).toBe(10);
		}
	});

	it('the controller keeps the anode potential at its margin in every sample (within its tolerance)', () => {
		// CONTROL_TOLERANCE.anode_V = 1 mV; the demo cell's margin is 10 mV.
		for (const s of a.strategies) expect(s.worstAnodePotential_V).toBeGreaterThanOrEqual(nmc.limits.anodePotentialMargin_V - 1e-3);
	});
});

describe('sensitivity design on the real engine', () => {
	// Two inputs in the design, one of them with zero spread. An input that never changes leaves
	// f(A_B^(i)) = f(A) row by row, so both its estimators are exactly 0 (Saltelli et al. 2010,
	// Table 2 (b) and (f): both sums vanish term by term).
	const u = validateUncertaintySet({
		seed: 8,
		samples: 16,
		sensitivity: true,
		inputs: {
			ambientError_K: { kind: 'uniform', lower: -4, upper: 4 },
			cellCapacitySpread: { kind: 'uniform', lower: 0, upper: 0 }
		}
	});
	const design = unitDesign(u);
	const one = [strategies[1]];
	const runs = runPairedStudy(base, one, u, sampleValues(u, design), options);
	const a = analyseScenario(one, runs, design, { sensitivityFor: [0], sensitivityOptions: { bootstrap: 100 } });

	it('runs N·(k + 2) design rows and keeps 2N independent samples for the statistics', () => {
		expect(runs.baseline).toHaveLength(16 * 4);
		expect(a.samples).toBe(32);
		expect(a.strategies[0].samples).toBe(32);
	});

	it('the zero-spread input has zero indices; the varying one carries the spread', () => {
		const s = a.sensitivity[0];
		expect(s.inputs).toEqual(['ambientError_K', 'cellCapacitySpread']);
		for (const idx of [s.timeSaved_s[1], s.energy_Wh[1]]) {
			expect(idx.firstOrder).toBe(0);
			expect(idx.total).toBe(0);
		}
		// With a single varying input the output's whole variance is its own (total index near 1;
		// estimator noise at N = 16, so only the ordering is checked).
		expect(s.energy_Wh[0].total).toBeGreaterThan(0.5);
	});
});
