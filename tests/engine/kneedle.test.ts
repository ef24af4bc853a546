import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import { kneedle } from '../../src/lib/engine/kneedle';

const linspace = (a: number, b: number, n: number) =>
	Array.from({ length: n }, (_, i) => a + ((b - a) * i) / (n - 1));

describe('kneedle', () => {
	describe('worked example of the paper', () => {
		it('should find the knee of y = −1/(x + 0.1) + 5 sampled at 10 points on [0, 1] at x = 2/9', () => {
			// Source: Satopää et al. 2011, Fig. 2 (the curve y = −1/x + 5, shifted so
			// x = 0 is defined) — recalled from memory. The exact sampling
			// (10 points, x = linspace(0, 1, 10), y = −1/(x + 0.1) + 5) and the
			// expected knee x ≈ 0.22 are taken from the reference open-source
			// implementation's reproduction of that figure (arvkevi/kneed,
			// kneed/data_generator.py `figure2` and tests/test_sample.py
			// `test_figure2`), S = 1.
			const x = linspace(0, 1, 10);
			const y = x.map((v) => -1 / (v + 0.1) + 5);
			const r = kneedle(x, y, { sensitivity: 1 });
			expect(r.kneeIndex).toBe(2);
			expect(x[r.kneeIndex!]).toBeCloseTo(0.2222, 4);
			expect(y[r.kneeIndex!]).toBeCloseTo(1.8966, 4);
			// Hand check of the paper's steps 2–6 (own arithmetic):
			// y range = 10 − 1/1.1 = 9.090909; d(2/9) = (1.896552 + 5)/9.090909 − 2/9
			// = 0.536398, threshold = 0.536398 − 1/9 = 0.425287; d(3/9) = 0.5128 and
			// d(4/9) = 0.4535 stay above it, d(5/9) = 0.932203 − 0.555556 = 0.376648
			// falls below ⇒ knee at 2/9.
			expect(r.difference[2]).toBeCloseTo(0.536398, 5);
			expect(r.difference[5]).toBeCloseTo(0.376648, 5);
		});

		it('should approach the analytic difference-curve maximum of that curve on a fine grid', () => {
			// Own derivation from the method (Satopää et al. 2011: the knee is where
			// the difference curve y_s − x_s peaks, i.e. dy_s/dx_s = 1): for
			// y = −1/(x + 0.1) + 5 on [0, 1], dy_s/dx_s = 1/((x + 0.1)² · Δy) with
			// Δy = 10 − 1/1.1 = 100/11, so x* = √(11/100) − 0.1 = 0.231662.
			const x = linspace(0, 1, 20001);
			const y = x.map((v) => -1 / (v + 0.1) + 5);
			const r = kneedle(x, y);
			expect(Math.abs(x[r.kneeIndex!] - (Math.sqrt(0.11) - 0.1))).toBeLessThanOrEqual(1 / 20000);
		});
	});

	describe('analytic knees of smooth concave curves', () => {
		// Own derivation, common to all cases below: with x_s = (x − a)/(b − a)
		// and y_s = (y − y(a))/(y(b) − y(a)), the difference d = y_s − x_s is
		// maximal where dy_s/dx_s = y'(x)·(b − a)/(y(b) − y(a)) = 1 (Satopää et
		// al. 2011, difference curve; the derivative condition is ours).
		it.each([1, 3, 5, 10])('should find x* = ln(L/(1 − e^−L)) for y = 1 − e^−x on [0, %d]', (L) => {
			// y' = e^−x, y(L) − y(0) = 1 − e^−L  ⇒  L·e^−x/(1 − e^−L) = 1.
			const xStar = Math.log(L / (1 - Math.exp(-L)));
			const n = 10001;
			const x = linspace(0, L, n);
			const y = x.map((v) => 1 - Math.exp(-v));
			const r = kneedle(x, y);
			expect(Math.abs(x[r.kneeIndex!] - xStar)).toBeLessThanOrEqual(L / (n - 1));
		});

		it.each([2, 9, 99])('should find x* = L/ln(1 + L) − 1 for y = ln(1 + x) on [0, %d]', (L) => {
			// y' = 1/(1 + x), y(L) − y(0) = ln(1 + L)  ⇒  L/((1 + x)·ln(1 + L)) = 1.
			const xStar = L / Math.log(1 + L) - 1;
			const n = 10001;
			const x = linspace(0, L, n);
			const y = x.map((v) => Math.log1p(v));
			const r = kneedle(x, y);
			expect(Math.abs(x[r.kneeIndex!] - xStar)).toBeLessThanOrEqual(L / (n - 1));
		});

		it('should put the knee exactly on the corner of a two-segment line', () => {
			// Common practice, no source: for a polyline (0,0)→(0.2,0.8)→(1,1) the
			// difference curve is piecewise linear with its peak at the corner.
			const x = [...linspace(0, 0.2, 5), ...linspace(0.2, 1, 9).slice(1)];
			const y = x.map((v) => (v <= 0.2 ? 4 * v : 0.8 + 0.25 * (v - 0.2)));
			const r = kneedle(x, y);
			expect(x[r.kneeIndex!]).toBeCloseTo(0.2, 12);
		});
	});

	describe('threshold and sensitivity', () => {
		it('should reject a weak bump with S = 1 and accept it with a small S', () => {
			// Satopää et al. 2011, step 5: T = d_lmx − S/(n − 1). Here n = 5, so
			// the gap term is 0.25; d_lmx = 0.05 (hand computed).
			const x = [0, 0.25, 0.5, 0.75, 1];
			const y = [0, 0.25, 0.55, 0.75, 1];
			expect(kneedle(x, y, { sensitivity: 1 }).kneeIndex).toBeNull();
			// T = 0.05 − 0.1·0.25 = 0.025 and d(0.75) = 0 < T ⇒ knee at index 2.
			expect(kneedle(x, y, { sensitivity: 0.1 }).kneeIndex).toBe(2);
		});

		it('should pass over a local maximum when the curve rises again before falling below its threshold', () => {
			// Satopää et al. 2011, step 6 (a local maximum is a knee only if d falls
			// below its threshold before the next local maximum).
			// Built so normalisation is the identity (x, y already span [0, 1]):
			// y = x + d with the difference curve d below (hand-made).
			const x = linspace(0, 1, 11);
			const d = [0, 0.3, 0.32, 0.3, 0.29, 0.31, 0.35, 0.2, 0.1, 0.05, 0];
			const y = x.map((v, i) => v + d[i]);
			// First local max 0.32 at i = 2, T = 0.22; d bottoms out at 0.29 (i = 4)
			// and rises to a new max 0.35 at i = 6, T = 0.25; then 0.2 < T ⇒ knee at 6.
			const r = kneedle(x, y);
			expect(r.kneeIndices).toEqual([6]);
			expect(r.kneeIndex).toBe(6);
		});

		it('should take the first point of a flat-topped difference curve', () => {
			// Tie rule documented in kneedle.ts (ours; common practice, no source): on a
			// plateau the lower-x point, i.e. the cheaper strategy, is the knee.
			// d = [0, 0.3, 0.3, 0.1, 0] with identity normalisation; T = 0.3 − 0.25 = 0.05.
			const x = linspace(0, 1, 5);
			const d = [0, 0.3, 0.3, 0.1, 0];
			const r = kneedle(x, x.map((v, i) => v + d[i]));
			expect(r.kneeIndices).toEqual([1]);
		});

		it('should report every knee and recommend the first', () => {
			// Satopää et al. 2011, step 6 applied to two well-separated maxima (hand-made data).
			const x = linspace(0, 1, 11);
			const d = [0, 0.3, 0.4, 0.25, 0.2, 0.3, 0.35, 0.2, 0.1, 0.05, 0];
			const y = x.map((v, i) => v + d[i]);
			const r = kneedle(x, y);
			expect(r.kneeIndices).toEqual([2, 6]);
			expect(r.kneeIndex).toBe(2);
		});
	});

	describe('invariance', () => {
		it('should not depend on the units of x or y (affine rescaling)', () => {
			// Satopää et al. 2011, step 2 (normalisation to the unit square) makes
			// the result invariant to positive affine maps of either axis.
			fc.assert(
				fc.property(
					fc.double({ min: 1e-3, max: 1e4, noNaN: true }),
					fc.double({ min: -1e4, max: 1e4, noNaN: true }),
					fc.double({ min: 1e-3, max: 1e4, noNaN: true }),
					fc.double({ min: -1e4, max: 1e4, noNaN: true }),
					fc.integer({ min: 5, max: 60 }),
					(ax, bx, ay, by, n) => {
						const x = linspace(0, 4, n);
						const y = x.map((v) => 1 - Math.exp(-v));
						const ref = kneedle(x, y).kneeIndex;
						const r = kneedle(
							x.map((v) => ax * v + bx),
							y.map((v) => ay * v + by)
						).kneeIndex;
						expect(r).toBe(ref);
					}
				),
				{ numRuns: 200 }
			);
		});
	});

	describe('error handling', () => {
		it('should return no knee for fewer than three points or a flat axis', () => {
			// Common practice, no source: a knee needs an interior point and a range.
			expect(kneedle([], []).kneeIndex).toBeNull();
			expect(kneedle([0, 1], [0, 1]).kneeIndex).toBeNull();
			expect(kneedle([0, 1, 2], [5, 5, 5]).kneeIndex).toBeNull();
			expect(kneedle([1, 1, 1], [0, 1, 2]).kneeIndex).toBeNull();
		});

		it('should return no knee for a straight line', () => {
			// Common practice, no source: the difference curve of y = x is identically 0.
			const x = linspace(0, 1, 50);
			expect(kneedle(x, x.map((v) => 3 * v + 1)).kneeIndex).toBeNull();
		});

		it('should throw on mismatched lengths, unsorted x, non-finite values or a negative S', () => {
			// Common practice, no source: fail loudly on malformed input.
			expect(() => kneedle([0, 1, 2], [0, 1])).toThrow(RangeError);
			expect(() => kneedle([0, 2, 1], [0, 1, 2])).toThrow(/sorted ascending/);
			expect(() => kneedle([0, 1, 2], [0, NaN, 2])).toThrow(/not finite/);
			expect(() => kneedle([0, 1, 2], [0, 1, 2], { sensitivity: -1 })).toThrow(/sensitivity/);
		});
	});
});
