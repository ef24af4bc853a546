import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import {
	MAX_GRID_POINTS,
	chunkTasks,
	estimateRunTime_s,
	expandScenarios,
	expandStrategies,
	gridSize,
	parseSweepDefinition,
	scenarioKey,
	simulationCount,
	sweepDefinitionSchema,
	type SweepDefinition
} from '../../src/lib/engine/sweep-grid';

// °C, min and % as a user would type them, converted the way the UI does.
const K = (C: number) => C + 273.15;
const s = (min: number) => min * 60;

const valid = (): SweepDefinition => ({
	cellIds: ['cell-a', 'cell-b'],
	packIds: ['pack-1'],
	ambients_K: [K(-20), K(0), K(25)],
	statesOfHealth: [1, 0.8],
	arrivalSocs: [0.1, 0.3],
	leadTimes_s: [s(0), s(15), s(30), s(60)],
	setpoints_K: [K(15), K(25), K(35)]
});

const errorsOf = (input: unknown): string[] => {
	const r = parseSweepDefinition(input);
	if (r.ok) throw new Error('expected validation to fail');
	return r.errors;
};

describe('sweep definition validation', () => {
	it('should accept a valid sweep and the exact range bounds typed in user units', () => {
		// The product's input ranges (ambient −40…55 °C, SOH 60…100 %, SOC 2…95 %,
		// lead time 0…120 min, set-point −30…60 °C); common practice, no source.
		expect(parseSweepDefinition(valid()).ok).toBe(true);
		const edges: SweepDefinition = {
			...valid(),
			ambients_K: [K(-40), K(55)],
			statesOfHealth: [0.6, 1],
			arrivalSocs: [0.02, 0.95],
			leadTimes_s: [0, s(120)],
			setpoints_K: [K(-30), K(60)],
			heaterPowerCaps_W: [0, 7000]
		};
		expect(parseSweepDefinition(edges).ok).toBe(true);
	});

	it('should report out-of-range values in °C, min and % with their path', () => {
		// Product rule: error messages say what to change; common practice, no source.
		const errors = errorsOf({
			...valid(),
			ambients_K: [K(25), K(60)],
			statesOfHealth: [0.55],
			arrivalSocs: [0.01],
			leadTimes_s: [s(121)],
			setpoints_K: [K(65)],
			heaterPowerCaps_W: [-1000]
		});
		expect(errors).toEqual([
			'ambients_K[1]: Ambient temperature 60 °C is out of range; it must be within -40 °C to 55 °C.',
			'statesOfHealth[0]: State of health 55 % is out of range; it must be within 60 % to 100 %.',
			'arrivalSocs[0]: Arrival state of charge 1 % is out of range; it must be within 2 % to 95 %.',
			'leadTimes_s[0]: Lead time 121 min is out of range; it must be within 0 min to 120 min.',
			'setpoints_K[0]: Coolant set-point 65 °C is out of range; it must be within -30 °C to 60 °C.',
			'heaterPowerCaps_W[0]: Heater power cap -1 kW is out of range; it must be at least 0 W.'
		]);
	});

	it('should reject repeated values and empty axes, naming them', () => {
		// Brief: axes non-empty, values distinct; common practice, no source.
		const errors = errorsOf({ ...valid(), cellIds: ['a', ' a '], leadTimes_s: [s(10), s(20), s(10)], packIds: [] });
		expect(errors).toContain(
			'cellIds[1]: Cell "a" appears twice (positions 1 and 2); remove the repeat.'
		);
		expect(errors).toContain(
			'leadTimes_s[2]: Lead time 10 min appears twice (positions 1 and 3); remove the repeat.'
		);
		expect(errors).toContain('packIds: Add at least one pack.');
	});

	it('should reject non-finite numbers and wrong types', () => {
		// Common practice, no source.
		expect(errorsOf({ ...valid(), ambients_K: [Infinity] })).toEqual([
			'ambients_K[0]: Ambient temperature must be a finite number.'
		]);
		expect(errorsOf({ ...valid(), setpoints_K: ['25'] })).toEqual([
			'setpoints_K[0]: Coolant set-point must be a number.'
		]);
	});

	it('should accept exactly MAX_GRID_POINTS and reject one axis value more with the size message', () => {
		// The product's limit of 20 000 simulations per sweep and its message.
		const big: SweepDefinition = {
			cellIds: ['c1', 'c2'],
			packIds: ['p1'],
			ambients_K: [K(-20), K(-10), K(0), K(10), K(20)],
			statesOfHealth: [0.8, 1],
			arrivalSocs: [0.1, 0.2, 0.3, 0.4, 0.5],
			leadTimes_s: Array.from({ length: 10 }, (_, i) => s(5 * i)),
			setpoints_K: Array.from({ length: 10 }, (_, i) => K(10 + 2 * i)),
			heaterPowerCaps_W: [3000, 6000]
		};
		expect(gridSize(big)).toBe(MAX_GRID_POINTS);
		expect(sweepDefinitionSchema.safeParse(big).success).toBe(true);
		const errors = errorsOf({ ...big, packIds: ['p1', 'p2'] });
		expect(errors).toEqual([
			'This sweep has 40000 grid points (2 cells × 2 packs × 5 ambient temperatures × 2 states of health × ' +
				'5 arrival states of charge × 10 lead times × 10 set-points × 2 heater power caps); ' +
				'the limit is 20000 — remove values from an axis.'
		]);
	});
});

describe('grid expansion', () => {
	it('should count grid points as the product of axis lengths and add one baseline per scenario', () => {
		// Definition of a full-factorial grid (common practice, no source).
		const def = valid();
		expect(gridSize(def)).toBe(2 * 1 * 3 * 2 * 2 * 4 * 3);
		expect(simulationCount(def)).toBe(2 * 1 * 3 * 2 * 2 * (4 * 3 + 1));
		expect(gridSize({ ...def, heaterPowerCaps_W: [1000, 2000] })).toBe(2 * gridSize(def));
	});

	it('should expand scenarios in definition order, last axis fastest, with unique stable keys', () => {
		// Stable order is a product requirement (brief); common practice, no source.
		const def = valid();
		const sc = expandScenarios(def);
		expect(sc).toHaveLength(24);
		expect(sc.map((x) => x.index)).toEqual(sc.map((_, i) => i));
		expect(sc[0]).toMatchObject({ cellId: 'cell-a', packId: 'pack-1', ambient_K: K(-20), stateOfHealth: 1, arrivalSoc: 0.1 });
		expect(sc[1]).toMatchObject({ arrivalSoc: 0.3, stateOfHealth: 1 });
		expect(sc[2]).toMatchObject({ arrivalSoc: 0.1, stateOfHealth: 0.8 });
		expect(sc[12]).toMatchObject({ cellId: 'cell-b', ambient_K: K(-20) });
		expect(new Set(sc.map((x) => x.scenarioKey)).size).toBe(sc.length);
		expect(expandScenarios(def)).toEqual(sc);
		expect(sc[5].scenarioKey).toBe(scenarioKey({ ...sc[5] }));
	});

	it('should keep scenario keys unambiguous for ids containing separators', () => {
		// Common practice, no source: keys must not collide when ids contain quotes, commas or bars.
		const a = scenarioKey({ cellId: 'a|b', packId: 'c', ambient_K: 300, stateOfHealth: 1, arrivalSoc: 0.5 });
		const b = scenarioKey({ cellId: 'a', packId: 'b|c', ambient_K: 300, stateOfHealth: 1, arrivalSoc: 0.5 });
		const c = scenarioKey({ cellId: 'a","b', packId: 'c', ambient_K: 300, stateOfHealth: 1, arrivalSoc: 0.5 });
		const d = scenarioKey({ cellId: 'a', packId: 'b","c', ambient_K: 300, stateOfHealth: 1, arrivalSoc: 0.5 });
		expect(new Set([a, b, c, d]).size).toBe(4);
	});

	it('should expand strategies lead time outermost, heater cap innermost', () => {
		// Stable order is a product requirement (brief); common practice, no source.
		const def = { ...valid(), leadTimes_s: [0, 600], setpoints_K: [K(20), K(30)] };
		expect(expandStrategies(def)).toEqual([
			{ index: 0, leadTime_s: 0, coolantSetpoint_K: K(20) },
			{ index: 1, leadTime_s: 0, coolantSetpoint_K: K(30) },
			{ index: 2, leadTime_s: 600, coolantSetpoint_K: K(20) },
			{ index: 3, leadTime_s: 600, coolantSetpoint_K: K(30) }
		]);
		const capped = expandStrategies({ ...def, heaterPowerCaps_W: [3000, 6000] });
		expect(capped).toHaveLength(8);
		expect(capped[1]).toEqual({ index: 1, leadTime_s: 0, coolantSetpoint_K: K(20), heaterPowerCap_W: 6000 });
	});
});

describe('chunkTasks', () => {
	const axis = <T>(arb: fc.Arbitrary<T>, max: number) => fc.uniqueArray(arb, { minLength: 1, maxLength: max });
	const defArb: fc.Arbitrary<SweepDefinition> = fc.record(
		{
			cellIds: axis(fc.string({ minLength: 1, maxLength: 3 }), 2),
			packIds: axis(fc.string({ minLength: 1, maxLength: 3 }), 2),
			ambients_K: axis(fc.integer({ min: 234, max: 328 }), 3),
			statesOfHealth: axis(fc.integer({ min: 60, max: 100 }).map((v) => v / 100), 2),
			arrivalSocs: axis(fc.integer({ min: 2, max: 95 }).map((v) => v / 100), 3),
			leadTimes_s: axis(fc.integer({ min: 0, max: 7200 }), 4),
			setpoints_K: axis(fc.integer({ min: 244, max: 333 }), 3),
			heaterPowerCaps_W: axis(fc.integer({ min: 0, max: 10000 }), 2)
		},
		{ requiredKeys: ['cellIds', 'packIds', 'ambients_K', 'statesOfHealth', 'arrivalSocs', 'leadTimes_s', 'setpoints_K'] }
	);

	it('should cover every (scenario, strategy) pair and one baseline per scenario exactly once', () => {
		// Completeness/uniqueness of the task split (brief requirement; common practice, no source).
		fc.assert(
			fc.property(defArb, fc.integer({ min: 1, max: 50 }), (def, chunkSize) => {
				const nSc = expandScenarios(def).length;
				const nSt = expandStrategies(def).length;
				const chunks = chunkTasks(def, chunkSize);
				const seen = new Map<string, number>();
				for (const c of chunks)
					for (const t of c.tasks) {
						const k = `${t.scenarioIndex}/${t.strategyIndex ?? 'baseline'}`;
						seen.set(k, (seen.get(k) ?? 0) + 1);
					}
				expect(seen.size).toBe(nSc * (nSt + 1));
				for (let sc = 0; sc < nSc; sc++) {
					expect(seen.get(`${sc}/baseline`)).toBe(1);
					for (let st = 0; st < nSt; st++) expect(seen.get(`${sc}/${st}`)).toBe(1);
				}
				// Chunks are full except possibly the last, and indexed in order.
				chunks.forEach((c, i) => {
					expect(c.chunkIndex).toBe(i);
					if (i < chunks.length - 1) expect(c.tasks).toHaveLength(chunkSize);
					else expect(c.tasks.length).toBeGreaterThan(0);
				});
				expect(chunks.reduce((n, c) => n + c.tasks.length, 0)).toBe(simulationCount(def));
			}),
			{ numRuns: 300 }
		);
	});

	it('should list each scenario baseline before its strategies', () => {
		// Ordering choice documented in sweep-grid.ts (common practice, no source).
		const tasks = chunkTasks(valid(), 5).flatMap((c) => c.tasks);
		expect(tasks[0]).toEqual({ scenarioIndex: 0, strategyIndex: null });
		expect(tasks[1]).toEqual({ scenarioIndex: 0, strategyIndex: 0 });
		expect(tasks[13]).toEqual({ scenarioIndex: 1, strategyIndex: null });
	});

	it('should reject a chunk size that is not a positive whole number', () => {
		// Common practice, no source.
		expect(() => chunkTasks(valid(), 0)).toThrow(RangeError);
		expect(() => chunkTasks(valid(), 2.5)).toThrow(/positive whole number/);
	});
});

describe('estimateRunTime_s', () => {
	it('should divide all simulations, baselines included, by the throughput', () => {
		// 24 scenarios × (12 strategies + 1 baseline) = 312 simulations (arithmetic, no source).
		expect(estimateRunTime_s(valid(), 4)).toBe(312 / 4);
		expect(() => estimateRunTime_s(valid(), 0)).toThrow(RangeError);
	});
});
