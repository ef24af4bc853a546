import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import Papa from 'papaparse';
import {
	CALIBRATION_CSV_HEADER,
	CALIBRATION_FORMAT,
	calibrateScenario,
	calibrationCsv,
	calibrationJson,
	calibrationTable,
	fastestWithin,
	frontWithBaseline,
	pickKnee,
	type CalibrationProvenance,
	type EvaluatedPoint,
	type RatedPoint,
	type ScenarioCalibration,
	type ScenarioEvaluation,
	type ScenarioKey
} from '../../src/lib/engine/calibration';

const scenario: ScenarioKey = { ambient_K: 263.15, stateOfHealth: 0.9, arrivalSoc: 0.2, cellId: 'cell-a', packId: 'pack-1' };

/** A strategy point; energy split 60/40 pre-arrival / during charge, for tests only. */
const pt = (energy_Wh: number, timeToTarget_s: number, extra: Partial<EvaluatedPoint> = {}): EvaluatedPoint => ({
	leadTime_s: 600,
	setpoint_K: 298.15,
	energy_Wh,
	energyPreArrival_Wh: 0.6 * energy_Wh,
	energyDuringCharge_Wh: 0.4 * energy_Wh,
	timeToTarget_s,
	feasible: true,
	...extra
});

const evaluation = (baseline_s: number, points: EvaluatedPoint[], sc: ScenarioKey = scenario): ScenarioEvaluation => ({
	scenario: sc,
	baselineTimeToTarget_s: baseline_s,
	points
});

describe('calibrateScenario', () => {
	it('should compute time saved as baseline minus strategy time', () => {
		// Definition (src/lib/engine/calibration.ts): time saved = baseline time − strategy time; common practice, no source.
		const c = calibrateScenario(evaluation(3600, [pt(100, 3000), pt(50, 3700)]));
		expect(c.points.map((p) => p.timeSaved_s)).toEqual([600, -100]);
	});

	it('should keep infeasible and non-finite points off the front', () => {
		// Brief: infeasible / NaN points are excluded (common practice, no source).
		const c = calibrateScenario(
			evaluation(3600, [
				pt(10, 1000, { feasible: false }),
				pt(NaN, 1000),
				pt(200, NaN),
				pt(300, 3000, { leadTime_s: 1200 })
			])
		);
		expect(c.front).toHaveLength(1);
		expect(c.front[0].leadTime_s).toBe(1200);
		expect(c.knee?.point.leadTime_s).toBe(1200);
	});

	it('should flag when no strategy beats the baseline and recommend nothing', () => {
		// The baseline is the reference point (0 Wh, 0 s); common practice, no source.
		const c = calibrateScenario(evaluation(3600, [pt(0, 3600), pt(100, 3700), pt(500, 3650)]));
		expect(c.noStrategyBeatsBaseline).toBe(true);
		expect(c.knee).toBeNull();
		expect(c.front.length).toBeGreaterThan(0);
	});

	it('should pick the Kneedle knee of a front with a clear corner, measured from the baseline origin', () => {
		// Satopää et al. 2011, steps 2–6, hand computed with the origin (0 Wh, 0 s):
		// x_s = E/1000, y_s = t/1650 ⇒ d = 0.264, 0.527, 0.609, 0.370, 0 at
		// E = 100, 200, 300, 600, 1000 Wh; the max is at 300 Wh, threshold
		// 0.609 − 1/5 = 0.409 and d(600) = 0.370 < 0.409 ⇒ knee at 300 Wh.
		// A dominated point (400 Wh, 1000 s) and a slower-than-baseline point are mixed in.
		const c = calibrateScenario(
			evaluation(5000, [
				pt(600, 5000 - 1600),
				pt(100, 5000 - 600),
				pt(400, 5000 - 1000),
				pt(300, 5000 - 1500),
				pt(1000, 5000 - 1650),
				pt(200, 5000 - 1200),
				pt(20, 5100)
			])
		);
		expect(c.noStrategyBeatsBaseline).toBe(false);
		// (20 Wh, −100 s) is slower than the baseline, which dominates it: not on the front.
		expect(c.front.map((p) => p.energy_Wh)).toEqual([100, 200, 300, 600, 1000]);
		expect(c.knee).toEqual({ point: expect.objectContaining({ energy_Wh: 300, timeSaved_s: 1500 }), method: 'kneedle' });
	});

	it('should fall back to most time saved per kWh for one or two candidates', () => {
		// Brief: fronts of 1–2 points use the time-saved-per-kWh rule (ours; common practice, no source).
		// 300 s / 0.1 kWh = 3000 s/kWh beats 600 s / 1 kWh = 600 s/kWh.
		const two = calibrateScenario(evaluation(3600, [pt(1000, 3000), pt(100, 3300)]));
		expect(two.knee).toEqual({ point: expect.objectContaining({ energy_Wh: 100 }), method: 'max-time-saved-per-kWh' });
		const one = calibrateScenario(evaluation(3600, [pt(1000, 3000), pt(2000, 3700)]));
		expect(one.knee).toEqual({ point: expect.objectContaining({ energy_Wh: 1000 }), method: 'max-time-saved-per-kWh' });
	});

	it('should rank strategies that save time for free above all others in the fallback', () => {
		// Rule documented in calibration.ts (common practice, no source): energy ≤ 0 is free.
		// Both free points are on the front; the one saving more time (200 s) wins,
		// even against 1 Wh buying 600 s (600 000 s/kWh).
		const c = calibrateScenario(evaluation(3600, [pt(-50, 3500), pt(-10, 3400), pt(1, 3000)]));
		expect(c.front.map((p) => p.energy_Wh)).toEqual([-50, -10, 1]);
		expect(c.knee).toEqual({ point: expect.objectContaining({ energy_Wh: -10 }), method: 'max-time-saved-per-kWh' });
	});

	it('should fall back when Kneedle finds no knee (a straight front)', () => {
		// Satopää et al. 2011: a straight line has a zero difference curve ⇒ no knee;
		// then time saved per kWh is equal everywhere and the cheapest point wins (tie rule).
		const c = calibrateScenario(evaluation(3600, [pt(100, 3500), pt(200, 3400), pt(300, 3300), pt(400, 3200)]));
		expect(c.knee).toEqual({ point: expect.objectContaining({ energy_Wh: 100 }), method: 'max-time-saved-per-kWh' });
	});

	it('should only ever recommend a front point that beats the baseline', () => {
		// Consistency of the rule (brief); common practice, no source.
		const pointArb = fc.record({
			energy_Wh: fc.integer({ min: -100, max: 3000 }),
			timeToTarget_s: fc.integer({ min: 1000, max: 5000 }),
			feasible: fc.boolean()
		});
		fc.assert(
			fc.property(fc.array(pointArb, { maxLength: 40 }), fc.integer({ min: 1000, max: 5000 }), (raw, baseline) => {
				const c = calibrateScenario(evaluation(baseline, raw.map((r) => pt(r.energy_Wh, r.timeToTarget_s, { feasible: r.feasible }))));
				const beats = c.points.some((p) => p.feasible && p.timeSaved_s > 0);
				expect(c.noStrategyBeatsBaseline).toBe(!beats);
				if (c.knee) {
					expect(c.front).toContain(c.knee.point);
					expect(c.knee.point.timeSaved_s).toBeGreaterThan(0);
				} else {
					expect(beats).toBe(false);
				}
			}),
			{ numRuns: 300 }
		);
	});
});

describe('the baseline on the front', () => {
	// Definition of Pareto dominance (common practice, no source) applied to the candidate set
	// {baseline (0 Wh, 0 s)} ∪ strategies: keeping the pack's default policy is always possible.
	it('should keep strategies the baseline dominates off the front (slower for more energy)', () => {
		// Shape seen in a cold-morning sweep: short lead times spend 0.18 and 0.24 kWh and
		// charge 10.9 and 18.8 min slower than the baseline; longer ones save time.
		const c = calibrateScenario(
			evaluation(3600, [
				pt(180, 3600 + 10.9 * 60),
				pt(240, 3600 + 18.8 * 60),
				pt(900, 3600 - 300),
				pt(1500, 3600 - 600),
				pt(2400, 3600 - 700)
			])
		);
		expect(c.front.map((p) => p.energy_Wh)).toEqual([900, 1500, 2400]);
		expect(c.front.every((p) => p.timeSaved_s >= 0)).toBe(true);
		expect(c.baselineOnFront).toBe(true);
		expect(c.points.filter((p) => p.timeSaved_s < 0).every((p) => !c.front.includes(p))).toBe(true);
	});

	it('should never put a slower-than-baseline strategy on the front, even when it spends less energy', () => {
		// Rule stated in calibration.ts: negative time saved is never on a front.
		const c = calibrateScenario(evaluation(3600, [pt(-50, 3660), pt(300, 3400)]));
		expect(c.front.map((p) => p.energy_Wh)).toEqual([300]);
		expect(c.baselineOnFront).toBe(true);
		expect(fastestWithin(c.front, 0)).toBeNull();
	});

	it('should say when a strategy dominates the baseline', () => {
		// (−20 Wh, +60 s) saves time and energy: the baseline is dominated (definition, no source).
		const c = calibrateScenario(evaluation(3600, [pt(-20, 3540), pt(400, 3300)]));
		expect(c.baselineOnFront).toBe(false);
		expect(c.front.map((p) => p.energy_Wh)).toEqual([-20, 400]);
	});

	it('should match a brute-force front of baseline and strategies on random sets', () => {
		// Brute-force reference straight from the dominance definition (common practice, no source).
		const pairArb = fc.tuple(fc.integer({ min: -5, max: 5 }), fc.integer({ min: -5, max: 5 }));
		fc.assert(
			fc.property(fc.array(pairArb, { maxLength: 30 }), (pairs) => {
				const pts = pairs.map(([e, t]) => ({ energy_Wh: e, timeSaved_s: t }));
				const all = [{ energy_Wh: 0, timeSaved_s: 0 }, ...pts];
				const dominated = (p: { energy_Wh: number; timeSaved_s: number }) =>
					all.some((q) => q.energy_Wh <= p.energy_Wh && q.timeSaved_s >= p.timeSaved_s && (q.energy_Wh < p.energy_Wh || q.timeSaved_s > p.timeSaved_s));
				const expected = pts.filter((p) => p.timeSaved_s >= 0 && !dominated(p));
				const got = frontWithBaseline(pts);
				expect(new Set(got.front)).toEqual(new Set(expected));
				expect(got.baselineOnFront).toBe(!dominated(all[0]));
			}),
			{ numRuns: 300 }
		);
	});

	it('should keep the knee and the rule pick on the front', () => {
		// Consistency of the picks with the front (brief); common practice, no source.
		fc.assert(
			fc.property(
				fc.array(fc.tuple(fc.integer({ min: -200, max: 3000 }), fc.integer({ min: 2000, max: 5000 })), { maxLength: 30 }),
				fc.integer({ min: 0, max: 3000 }),
				(pairs, budget) => {
					const c = calibrateScenario(evaluation(3600, pairs.map(([e, t]) => pt(e, t))));
					if (c.knee) expect(c.front).toContain(c.knee.point);
					const rule = fastestWithin(c.front, budget);
					if (rule) expect(rule.timeSaved_s).toBeGreaterThan(0);
					expect(rule?.timeSaved_s ?? null).toBe(fastestWithin(c.points, budget)?.timeSaved_s ?? null);
				}
			),
			{ numRuns: 200 }
		);
	});

	it('should measure the knee from where the front starts when a zero-saving strategy dominates the baseline', () => {
		// Satopää et al. 2011, steps 2–6, hand computed. The front starts at (−1000 Wh, 0 s):
		// x_s = (E + 1000)/2000 = 0, 0.55, 0.65, 0.85, 1 and y_s = t/1410 = 0, 0.284, 0.638, 0.922, 1
		// ⇒ d = 0, −0.266, −0.012, 0.072, 0; the only local maximum (0.072 at 700 Wh) has
		// T = 0.072 − 1/4 < 0, so no knee and the time-saved-per-kWh fallback picks 100 Wh
		// (4 s/Wh). Measured from (0 Wh, 0 s) instead, d = 0, 0.184, 0.338, 0.222, 0 and the
		// knee would be 300 Wh: the two starts are told apart.
		const c = calibrateScenario(evaluation(3600, [pt(-1000, 3600), pt(100, 3200), pt(300, 2700), pt(700, 2300), pt(1000, 2190)]));
		expect(c.baselineOnFront).toBe(false);
		expect(c.front[0].energy_Wh).toBe(-1000);
		expect(c.knee).toEqual({ point: expect.objectContaining({ energy_Wh: 100 }), method: 'max-time-saved-per-kWh' });
	});
});

describe('pickKnee', () => {
	it('should not add the baseline origin when a candidate is free', () => {
		// Rule documented in calibration.ts: a point with energy ≤ 0 dominates the origin.
		// Without the origin: x_s = (E + 100)/1100, y_s = (t − 100)/1000; hand computed
		// d = 0, 0.609, 0.718, 0.405, 0 for E = −100, 0, 100, 500, 1000 ⇒ knee at 100 Wh
		// (T = 0.718 − 0.25 = 0.468 > 0.405).
		const cands: RatedPoint[] = [
			[-100, 100],
			[0, 800],
			[100, 1000],
			[500, 1050],
			[1000, 1100]
		].map(([e, t]) => ({ ...pt(e, 0), timeSaved_s: t }));
		expect(pickKnee(cands)).toEqual({ point: cands[2], method: 'kneedle' });
	});
});

describe('pickKnee with the baseline origin', () => {
	it('should measure the knee from (0 Wh, 0 s) when every candidate costs energy', () => {
		// Satopää et al. 2011, steps 2–6, hand computed. With the origin:
		// x_s = E/1000, y_s = t/1410 ⇒ d = 0.609, 0.351, 0.093, 0 at E = 100, 500, 900, 1000;
		// T = 0.609 − 1/4 = 0.359 > 0.351 ⇒ Kneedle knee at 100 Wh. Without the origin the
		// difference curve peaks at only 0.087 (below S/(n − 1) = 1/3) and there is no knee,
		// so this also tells the two definitions apart.
		const cands: RatedPoint[] = [
			[100, 1000],
			[500, 1200],
			[900, 1400],
			[1000, 1410]
		].map(([e, t]) => ({ ...pt(e, 0), timeSaved_s: t }));
		expect(pickKnee(cands)).toEqual({ point: cands[0], method: 'kneedle' });
	});
});

describe('fastestWithin', () => {
	const c = calibrateScenario(
		evaluation(3600, [pt(100, 3300), pt(500, 3000), pt(2000, 2900), pt(50, 3600), pt(400, 2000, { feasible: false })])
	);

	it('should return the most time saved within the energy budget', () => {
		// User rule "fastest within X kWh": most time saved among points within the budget; common practice, no source.
		expect(fastestWithin(c.front, 600)?.energy_Wh).toBe(500);
		expect(fastestWithin(c.points, 600)?.energy_Wh).toBe(500); // infeasible 400 Wh ignored
		expect(fastestWithin(c.front, 500)?.energy_Wh).toBe(500); // budget inclusive
		expect(fastestWithin(c.front, 499.9)?.energy_Wh).toBe(100);
		expect(fastestWithin(c.front, Infinity)?.energy_Wh).toBe(2000);
	});

	it('should return null when nothing within the budget beats the baseline', () => {
		// Rule documented in calibration.ts (common practice, no source).
		expect(fastestWithin(c.front, 60)).toBeNull();
		expect(fastestWithin([], 1000)).toBeNull();
	});

	it('should agree with a brute-force search', () => {
		// Brute-force reference of the same rule (common practice, no source).
		fc.assert(
			fc.property(
				fc.array(fc.tuple(fc.integer({ min: 0, max: 1000 }), fc.integer({ min: -300, max: 900 })), { maxLength: 30 }),
				fc.integer({ min: -10, max: 1100 }),
				(pairs, budget) => {
					const pts: RatedPoint[] = pairs.map(([e, t]) => ({ ...pt(e, 0), timeSaved_s: t }));
					const ok = pts.filter((p) => p.energy_Wh <= budget && p.timeSaved_s > 0);
					const got = fastestWithin(pts, budget);
					if (ok.length === 0) expect(got).toBeNull();
					else expect(got?.timeSaved_s).toBe(Math.max(...ok.map((p) => p.timeSaved_s)));
				}
			),
			{ numRuns: 300 }
		);
	});
});

describe('calibration table and exports', () => {
	const cold: ScenarioKey = { ...scenario, ambient_K: 253.15 };
	const single = pt(1500, 2400, { leadTime_s: 900, setpoint_K: 303.15 });
	const calibrations: ScenarioCalibration[] = [
		// Knee at 300 Wh (see the Kneedle test above), lead time 30 min, 25 °C, 6 kW cap.
		calibrateScenario(
			evaluation(
				5000,
				[100, 200, 300, 600, 1000].map((e, i) =>
					pt(e, 5000 - [600, 1200, 1500, 1600, 1650][i], { leadTime_s: 1800, setpoint_K: 298.15, heaterPowerCap_W: 6000 })
				)
			)
		),
		// Nothing beats the baseline; ids that need quoting and neutralising.
		calibrateScenario(
			evaluation(3000, [pt(100, 3100)], {
				...cold,
				cellId: '=HYPERLINK("http://x","y")',
				packId: 'pack, "big"\nv2'
			})
		),
		// Text starting with + - @ and a negative ambient that must stay numeric.
		calibrateScenario(evaluation(3000, [single], { ...cold, cellId: '-cell', packId: '@pack' })),
		calibrateScenario(evaluation(3000, [single], { ...cold, cellId: '+cell', packId: 'plain' }))
	];
	const table = calibrationTable(calibrations);

	it('should build one row per scenario with the pick or the baseline', () => {
		// One table row per scenario: its axes → recommended lead time and set-point; common practice, no source.
		expect(table).toHaveLength(4);
		expect(table[0]).toMatchObject({
			leadTime_s: 1800,
			setpoint_K: 298.15,
			heaterPowerCap_W: 6000,
			timeSaved_s: 1500,
			energy_Wh: 300,
			rule: 'kneedle'
		});
		expect(table[1]).toMatchObject({
			leadTime_s: null,
			setpoint_K: null,
			timeSaved_s: 0,
			energy_Wh: 0,
			rule: 'baseline'
		});
		expect(table[2]).toMatchObject({ leadTime_s: 900, rule: 'max-time-saved-per-kWh' });
	});

	it('should apply a fastest-within rule to every row when asked', () => {
		// User rule "fastest within X kWh"; common practice, no source.
		const t = calibrationTable(calibrations, { kind: 'fastest-within', maxEnergy_Wh: 650 });
		expect(t[0]).toMatchObject({ energy_Wh: 600, timeSaved_s: 1600, rule: 'fastest-within' });
		expect(t[2]).toMatchObject({ leadTime_s: null, rule: 'baseline' }); // 1500 Wh is over budget
		expect(calibrationCsv(t).split('\r\n')[1].endsWith(',fastest-within-0.65-kWh,,,,')).toBe(true);
	});

	it('should write the header with units and convert K→°C, s→min, Wh→kWh', () => {
		// Units policy: SI inside the engine, °C, minutes and kWh only at the edges (exports); common practice, no source.
		const csv = calibrationCsv(table);
		const lines = csv.split('\r\n');
		expect(lines[0]).toBe(
			'ambient_C,state_of_health,arrival_soc,cell,pack,lead_time_min,setpoint_C,heater_power_cap_kW,' +
				'time_saved_min,energy_kWh,energy_pre_arrival_kWh,energy_during_charge_kWh,baseline_time_min,rule,' +
				'cell_name,cell_version,pack_name,pack_version'
		);
		// 263.15 K = −10 °C, 1800 s = 30 min, 298.15 K = 25 °C, 6000 W = 6 kW,
		// 1500 s = 25 min, 300 Wh = 0.3 kWh (0.18 + 0.12), 5000 s = 83.333333 min.
		// Without provenance the name and version columns are empty.
		expect(lines[1]).toBe('-10,0.9,0.2,cell-a,pack-1,30,25,6,25,0.3,0.18,0.12,83.333333,kneedle,,,,');
		expect(csv.endsWith('\r\n')).toBe(true);
	});

	it('should neutralise formula-like text and leave numbers alone', () => {
		// OWASP "CSV Injection" guidance (prefix = + - @ cells with an apostrophe); brief rule.
		// Cell quoting itself is the shared writer's (tests/engine/csv.test.ts).
		const row3 = calibrationCsv(table).split('\r\n')[3];
		expect(row3.startsWith(`-20,0.9,0.2,"'-cell","'@pack",15,30,`)).toBe(true);
	});

	it('should round-trip through an independent RFC 4180 parser (papaparse)', () => {
		// RFC 4180 §2 quoting rules; papaparse as the independent reference parser.
		// Delimiter and line break are fixed by RFC 4180 (comma, CRLF); papaparse's
		// auto-detection would otherwise guess a tab delimiter for tab-heavy text.
		const parsed = Papa.parse<string[]>(calibrationCsv(table), { delimiter: ',', newline: '\r\n', skipEmptyLines: true });
		expect(parsed.errors).toEqual([]);
		const rows = parsed.data;
		expect(rows[0]).toEqual([...CALIBRATION_CSV_HEADER]);
		expect(rows).toHaveLength(5);
		for (const r of rows) expect(r).toHaveLength(CALIBRATION_CSV_HEADER.length);
		const col = (name: string) => CALIBRATION_CSV_HEADER.indexOf(name as (typeof CALIBRATION_CSV_HEADER)[number]);
		expect(rows[2][col('cell')]).toBe('\'=HYPERLINK("http://x","y")');
		expect(rows[2][col('pack')]).toBe('pack, "big"\nv2');
		expect(rows[2][col('lead_time_min')]).toBe('');
		expect(rows[2][col('rule')]).toBe('baseline');
		expect(rows[3][col('ambient_C')]).toBe('-20');
		expect(rows[4][col('cell')]).toBe("'+cell");
		expect(Number(rows[1][col('baseline_time_min')])).toBeCloseTo(5000 / 60, 6);
	});

	// Ids built from the characters that matter to CSV quoting and formula guards.
	const idArb = fc.string({
		unit: fc.constantFrom('a', 'Z', '1', ' ', ',', '"', '\r', '\n', '\t', '=', '+', '-', '@', "'", 'é'),
		maxLength: 10
	});

	it('should round-trip arbitrary ids through papaparse', () => {
		// RFC 4180 §2 quoting with papaparse as reference; guard rule from OWASP "CSV Injection".
		fc.assert(
			fc.property(idArb, idArb, (cellId, packId) => {
				const t = calibrationTable([calibrateScenario(evaluation(100, [pt(1, 50)], { ...scenario, cellId, packId }))]);
				const parsed = Papa.parse<string[]>(calibrationCsv(t), { delimiter: ',', newline: '\r\n' });
				const guard = (s: string) => (/^[=+\-@\t\r]/.test(s) ? `'${s}` : s);
				expect(parsed.data[1][3]).toBe(guard(cellId));
				expect(parsed.data[1][4]).toBe(guard(packId));
			}),
			{ numRuns: 300 }
		);
	});

	it('should tag the JSON export and document a unit for every field', () => {
		// Export format requirement (brief); common practice, no source.
		const doc = JSON.parse(calibrationJson(table));
		expect(doc.format).toBe(CALIBRATION_FORMAT);
		expect(doc.format).toBe('paretherm-calibration/2');
		expect(Object.keys(doc.units).sort()).toEqual([...CALIBRATION_CSV_HEADER].sort());
		expect(Object.keys(doc.rows[0]).sort()).toEqual([...CALIBRATION_CSV_HEADER].sort());
		expect(doc.rows[0]).toMatchObject({ ambient_C: -10, lead_time_min: 30, setpoint_C: 25, energy_kWh: 0.3, time_saved_min: 25 });
		expect(doc.rows[1]).toMatchObject({ lead_time_min: null, setpoint_C: null, rule: 'baseline', cell: '=HYPERLINK("http://x","y")' });
	});
});

describe('calibration provenance', () => {
	// Export requirement (common practice for traceable data, no source): a table says which sweep,
	// which exact input versions, which rule, when and by what it was made.
	const table = calibrationTable([
		calibrateScenario(evaluation(3600, [pt(1000, 3000), pt(100, 3300)], { ...scenario, cellId: 'cell-a@3', packId: 'pack-1' }))
	]);
	const provenance: CalibrationProvenance = {
		sweep: { id: 42, name: 'Winter depot, study\nB', finishedAt: '2026-01-05T06:30:00.000Z' },
		inputs: {
			baseScenario: { id: 'depot', parameterSetId: 7, slug: 'depot', name: 'Depot, cold', version: 2 },
			cells: [{ id: 'cell-a@3', parameterSetId: 11, slug: 'cell-a', name: 'Cell A 20 mV margin', version: 3 }],
			packs: [{ id: 'pack-1', parameterSetId: 12, slug: 'pack-1', name: 'Pack one', version: 1 }]
		},
		createdAt: '2026-01-06T08:00:00.000Z',
		generator: 'Paretherm 9.9.9'
	};

	it('should put the sweep, every input version, the rule, the time and the generator in the JSON', () => {
		const doc = JSON.parse(calibrationJson(table, provenance, { kind: 'knee' }));
		expect(doc.provenance).toEqual(provenance);
		expect(doc.rule).toMatchObject({ kind: 'knee' });
		expect(doc.rule.description).toMatch(/knee/);
		expect(doc.rows[0]).toMatchObject({ cell: 'cell-a@3', cell_name: 'Cell A 20 mV margin', cell_version: 3, pack_name: 'Pack one', pack_version: 1, rule: 'max-time-saved-per-kWh' });
		const budget = JSON.parse(calibrationJson(table, provenance, { kind: 'fastest-within', maxEnergy_Wh: 650 }));
		expect(budget.rule).toMatchObject({ kind: 'fastest-within', maxEnergy_Wh: 650 });
		expect(budget.rule.description).toMatch(/0\.65 kWh/);
	});

	it('should write the same facts as # lines above the CSV header that a comment-aware reader skips', () => {
		const csv = calibrationCsv(table, provenance, { kind: 'knee' });
		const lines = csv.split('\r\n');
		const head = lines.filter((l) => l.startsWith('#'));
		expect(head).toEqual([
			'# format: paretherm-calibration/2',
			'# sweep: 42 "Winter depot, study B" finished 2026-01-05T06:30:00.000Z',
			'# input: scenario "Depot, cold" slug depot version 2 (parameter set 7)',
			'# input: cell "Cell A 20 mV margin" slug cell-a version 3 (parameter set 11)',
			'# input: pack "Pack one" slug pack-1 version 1 (parameter set 12)',
			expect.stringMatching(/^# rule: knee of each front/),
			'# created: 2026-01-06T08:00:00.000Z',
			'# generator: Paretherm 9.9.9'
		]);
		expect(lines[head.length]).toBe(CALIBRATION_CSV_HEADER.join(','));
		// papaparse's comment option as the independent reader.
		const parsed = Papa.parse<string[]>(csv, { delimiter: ',', newline: '\r\n', comments: '#', skipEmptyLines: true });
		expect(parsed.errors).toEqual([]);
		expect(parsed.data[0]).toEqual([...CALIBRATION_CSV_HEADER]);
		expect(parsed.data[1][CALIBRATION_CSV_HEADER.indexOf('cell_version')]).toBe('3');
	});
});

describe('error handling', () => {
	it('should refuse a missing baseline and an undefined energy budget, saying what to do', () => {
		// Common practice, no source: a front without its baseline has no meaning.
		expect(() => calibrateScenario(evaluation(NaN, [pt(1, 1)]))).toThrow(/rerun the baseline/);
		expect(() => fastestWithin([], NaN)).toThrow(RangeError);
	});
});
