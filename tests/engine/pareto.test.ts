import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import { paretoFront, isDominated, dominates } from '../../src/lib/engine/pareto';

interface P {
	id: number;
	energy_Wh: number;
	timeSaved_s: number;
}
const E = (p: P) => p.energy_Wh;
const G = (p: P) => p.timeSaved_s;

/**
 * Brute-force reference, O(n²), straight from the definition of Pareto
 * dominance (common practice, no source beyond the textbook definition):
 * q dominates p iff energy(q) <= energy(p), gain(q) >= gain(p), one strict.
 * Non-finite points are infeasible: excluded and never dominating. Sorted by
 * energy ascending, ties in input order (equal energy on a front implies
 * equal gain, so this is the same order paretoFront documents).
 */
function bruteForceFront<T>(points: readonly T[], energy: (p: T) => number, gain: (p: T) => number): T[] {
	const feasible = points
		.map((p, i) => ({ p, i }))
		.filter(({ p }) => Number.isFinite(energy(p)) && Number.isFinite(gain(p)));
	const keep = feasible.filter(({ p }) =>
		feasible.every(({ p: q }) => {
			const le = energy(q) <= energy(p);
			const ge = gain(q) >= gain(p);
			const strict = energy(q) < energy(p) || gain(q) > gain(p);
			return !(le && ge && strict);
		})
	);
	keep.sort((a, b) => energy(a.p) - energy(b.p) || a.i - b.i);
	return keep.map(({ p }) => p);
}

const pts = (pairs: [number, number][]): P[] =>
	pairs.map(([energy_Wh, timeSaved_s], id) => ({ id, energy_Wh, timeSaved_s }));
const ids = (ps: P[]) => ps.map((p) => p.id);

// Coordinates drawn from a small integer range so ties and exact duplicates
// are frequent, with occasional non-finite values (infeasible points).
const coord = fc.oneof(
	{ weight: 20, arbitrary: fc.integer({ min: -5, max: 5 }) },
	{ weight: 1, arbitrary: fc.constantFrom(NaN, Infinity, -Infinity, -0) }
);
const pointSet = fc
	.array(fc.tuple(coord, coord), { maxLength: 60 })
	.map((pairs) => pts(pairs as [number, number][]));

describe('paretoFront', () => {
	it('should keep exactly the non-dominated points of a hand-checked set, energy ascending', () => {
		// Hand-checked (common practice, no source): (3,1) dominated by (2,5);
		// (5,5) dominated by (2,5); (1,2),(2,5),(4,8) form the front.
		const p = pts([
			[3, 1],
			[2, 5],
			[5, 5],
			[4, 8],
			[1, 2]
		]);
		expect(ids(paretoFront(p, E, G))).toEqual([4, 1, 3]);
	});

	it('should keep all copies of a non-dominated exact duplicate, in input order', () => {
		// Definition choice documented in pareto.ts: duplicates do not dominate each other.
		const p = pts([
			[2, 5],
			[1, 1],
			[2, 5],
			[2, 4],
			[2, 5]
		]);
		expect(ids(paretoFront(p, E, G))).toEqual([1, 0, 2, 4]);
	});

	it('should drop a duplicate pair that a third point dominates', () => {
		// common practice, no source: (1,9) dominates both copies of (2,5)
		const p = pts([
			[2, 5],
			[2, 5],
			[1, 9]
		]);
		expect(ids(paretoFront(p, E, G))).toEqual([2]);
	});

	it('should break equal-energy and equal-gain ties by the strict objective', () => {
		// Same energy, different gain: only the higher gain survives; same gain,
		// different energy: only the cheaper survives (definition, no source).
		const p = pts([
			[3, 4],
			[3, 7],
			[5, 7],
			[6, 9]
		]);
		expect(ids(paretoFront(p, E, G))).toEqual([1, 3]);
	});

	it('should exclude non-finite points and never let them dominate', () => {
		// Engine convention: a NaN or infinite objective marks the point infeasible; common practice, no source.
		const p = pts([
			[NaN, 100],
			[-Infinity, 100],
			[1, Infinity],
			[2, 3],
			[4, NaN]
		]);
		expect(ids(paretoFront(p, E, G))).toEqual([3]);
		expect(isDominated(p[0], p, E, G)).toBe(true);
		expect(isDominated(p[3], p, E, G)).toBe(false);
	});

	it('should return an empty front for no points', () => {
		expect(paretoFront([] as P[], E, G)).toEqual([]);
	});

	it('should recover a known analytic front hidden among dominated points', () => {
		// Points on gain = sqrt(energy) for energy 1..2000 are mutually
		// non-dominated (strictly increasing); interior points strictly below
		// the curve at equal or higher energy are dominated (common practice,
		// no source).
		const curve: P[] = [];
		for (let i = 1; i <= 2000; i++) curve.push({ id: i, energy_Wh: i, timeSaved_s: Math.sqrt(i) });
		const inside: P[] = [];
		let seed = 12345;
		const rand = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
		for (let k = 0; k < 50000; k++) {
			const e = 1 + rand() * 1999;
			inside.push({ id: -1 - k, energy_Wh: e, timeSaved_s: Math.sqrt(Math.floor(e)) * rand() * 0.999 });
		}
		const all = [...inside.slice(0, 25000), ...curve.slice().reverse(), ...inside.slice(25000)];
		expect(ids(paretoFront(all, E, G))).toEqual(ids(curve));
	});

	it('should match the brute-force reference on random sets with ties, duplicates and NaN', () => {
		// Reference: definition of Pareto dominance (common practice, no source).
		fc.assert(
			fc.property(pointSet, (p) => {
				expect(ids(paretoFront(p, E, G))).toEqual(ids(bruteForceFront(p, E, G)));
			}),
			{ numRuns: 500 }
		);
	});

	it('should return a front sorted by energy with gain non-decreasing', () => {
		// A front traded off one objective against the other (definition, no source).
		fc.assert(
			fc.property(pointSet, (p) => {
				const f = paretoFront(p, E, G);
				for (let i = 1; i < f.length; i++) {
					expect(E(f[i])).toBeGreaterThanOrEqual(E(f[i - 1]));
					expect(G(f[i])).toBeGreaterThanOrEqual(G(f[i - 1]));
				}
			}),
			{ numRuns: 300 }
		);
	});

	it('should give a front where no member is dominated and every other feasible point is', () => {
		// Definition of a Pareto front (common practice, no source).
		fc.assert(
			fc.property(pointSet, (p) => {
				const f = paretoFront(p, E, G);
				const onFront = new Set(f);
				for (const q of p) {
					if (onFront.has(q)) expect(isDominated(q, p, E, G)).toBe(false);
					else expect(isDominated(q, p, E, G)).toBe(true);
				}
			}),
			{ numRuns: 300 }
		);
	});

	it('should be independent of input order up to the order of duplicates', () => {
		// Deterministic result (brief requirement; common practice, no source).
		fc.assert(
			fc.property(pointSet, fc.integer(), (p, shift) => {
				const n = p.length || 1;
				const k = ((shift % n) + n) % n;
				const rotated = [...p.slice(k), ...p.slice(0, k)];
				const key = (ps: P[]) => ps.map((q) => `${q.energy_Wh},${q.timeSaved_s}`);
				expect(key(paretoFront(rotated, E, G))).toEqual(key(paretoFront(p, E, G)));
			}),
			{ numRuns: 200 }
		);
	});
});

describe('dominates', () => {
	it('should require at least one strict improvement', () => {
		// Definition of Pareto dominance (common practice, no source).
		const [a, b, c] = pts([
			[1, 1],
			[1, 1],
			[1, 2]
		]);
		expect(dominates(a, b, E, G)).toBe(false);
		expect(dominates(c, a, E, G)).toBe(true);
		expect(dominates(a, c, E, G)).toBe(false);
	});
});
