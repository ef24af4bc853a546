import { describe, expect, it } from 'vitest';
import {
	latinHypercube,
	saltelliRows,
	sampleValues,
	seededRng,
	unitDesign,
	validateUncertaintySet,
	quantile,
	quantileSorted,
	summarise,
	mean
} from '../../src/lib/engine/robust/index';

/** Stratum index of each value of a column: floor(u·N). */
const strata = (column: number[], n: number) => column.map((u) => Math.floor(u * n)).sort((a, b) => a - b);
const identity = (n: number) => Array.from({ length: n }, (_, i) => i);

describe('Latin hypercube design', () => {
	// Defining property (McKay, Beckman & Conover, Technometrics 21 (1979) 239–245, §2):
	// each input's range is cut into N equally probable strata and each stratum holds exactly one sample.
	it.each([
		[1, 3],
		[10, 2],
		[64, 7],
		[257, 4]
	])('N = %i, k = %i: exactly one sample per stratum per input', (n, k) => {
		const rows = latinHypercube(n, k, seededRng(42));
		expect(rows).toHaveLength(n);
		for (let j = 0; j < k; j++) {
			const col = rows.map((r) => r[j]);
			expect(col.every((u) => u >= 0 && u < 1)).toBe(true);
			expect(strata(col, n)).toEqual(identity(n));
		}
	});

	it('the sensitivity design keeps A and B Latin hypercubes and builds A_B^(i) from them (Saltelli et al. 2010, §3)', () => {
		const n = 32;
		const k = 3;
		const rows = saltelliRows(n, k, seededRng(5));
		expect(rows).toHaveLength(n * (k + 2));
		const A = rows.slice(0, n);
		const B = rows.slice(n, 2 * n);
		for (const M of [A, B]) for (let j = 0; j < k; j++) expect(strata(M.map((r) => r[j]), n)).toEqual(identity(n));
		for (let i = 0; i < k; i++) {
			const ABi = rows.slice((2 + i) * n, (3 + i) * n);
			ABi.forEach((r, j) => {
				for (let c = 0; c < k; c++) expect(r[c]).toBe(c === i ? B[j][c] : A[j][c]);
			});
		}
	});

	it('is repeatable from its seed and changes with it (common practice, no source)', () => {
		const u = validateUncertaintySet({ seed: 11, samples: 20, inputs: { ambientError_K: { kind: 'uniform', lower: -3, upper: 3 } } });
		expect(sampleValues(u)).toEqual(sampleValues(u));
		const other = sampleValues({ ...u, seed: 12 });
		expect(other).not.toEqual(sampleValues(u));
	});

	it('an input left out of the set stays nominal (0) in every sample', () => {
		const u = validateUncertaintySet({ seed: 1, samples: 10, inputs: { arrivalSocError: { kind: 'uniform', lower: -0.05, upper: 0.05 } } });
		for (const v of sampleValues(u)) {
			expect(v.ambientError_K).toBe(0);
			expect(v.cellCapacitySpread).toBe(0);
			expect(Math.abs(v.arrivalSocError)).toBeLessThanOrEqual(0.05);
		}
		expect(unitDesign(u).inputs).toEqual(['arrivalSocError']);
	});
});

describe('quantiles (Hyndman & Fan 1996, definition 7)', () => {
	it('match hand-worked values', () => {
		// Definition 7: h = (n − 1)p + 1 (1-based); Q = x_⌊h⌋ + (h − ⌊h⌋)(x_⌊h⌋+1 − x_⌊h⌋).
		const x = [1, 2, 3, 4, 10];
		expect(quantileSorted(x, 0)).toBe(1);
		expect(quantileSorted(x, 1)).toBe(10);
		expect(quantileSorted(x, 0.5)).toBe(3);
		expect(quantileSorted(x, 0.9)).toBeCloseTo(4 + 0.6 * 6, 12); // h = 4.6
		expect(quantile([10, 4, 3, 2, 1], 0.1)).toBeCloseTo(1.4, 12); // h = 1.4
		expect(mean(x)).toBe(4);
	});
});

/**
 * A known distribution pushed through a linear function g(x) = α + βx: quantiles map through g
 * (β > 0) and the mean too. The Latin hypercube bounds the sampling error: with one sample per
 * stratum, the i-th smallest sample lies in stratum i, so the design's empirical p-quantile lies
 * between the distribution's quantiles at p − 1/N and p + 1/N (derivation: common practice).
 */
describe('quantiles of known distributions through a linear function', () => {
	const N = 1000;
	const g = (x: number) => 3 + 2 * x;

	it('normal (sd 2, bounds ±8 sd: truncation below 1e-15): P10/P90 = ∓1.2815516·sd, P50 = mean', () => {
		// z_0.90 = 1.2815516 (Abramowitz & Stegun, Handbook of Mathematical Functions, Table 26.5).
		const u = validateUncertaintySet({ seed: 3, samples: N, inputs: { ambientError_K: { kind: 'normal', sd: 2, lower: -16, upper: 16 } } });
		const y = sampleValues(u).map((v) => g(v.ambientError_K));
		const s = summarise(y);
		// 1/N in probability is Δz ≈ (1/N)/φ(1.2816) = 0.001/0.1755 = 0.0057 at P10/P90, 0.0025 at P50; × sd × β.
		expect(Math.abs(s.p10 - g(-1.2815516 * 2))).toBeLessThan(0.0057 * 2 * 2 * 1.1);
		expect(Math.abs(s.p90 - g(1.2815516 * 2))).toBeLessThan(0.0057 * 2 * 2 * 1.1);
		expect(Math.abs(s.p50 - g(0))).toBeLessThan(0.0025 * 2 * 2 * 1.1);
		// Mean: a few standard errors of a stratified mean (≈ 0.003·β here; common practice).
		expect(Math.abs(s.mean - g(0))).toBeLessThan(0.03);
	});

	it('uniform [−10, +15] min: quantiles and mean exact to the stratum width', () => {
		// U(l, u): Q(p) = l + p(u − l), mean (l + u)/2. Each sample sits in its own stratum of width (u − l)/N,
		// so the sample mean is within half a stratum of the true mean.
		const lo = -600;
		const hi = 900;
		const u = validateUncertaintySet({ seed: 9, samples: N, inputs: { arrivalTimeError_s: { kind: 'uniform', lower: lo, upper: hi } } });
		const y = sampleValues(u).map((v) => g(v.arrivalTimeError_s));
		const s = summarise(y);
		const tol = (2 * (hi - lo)) / N;
		expect(Math.abs(s.p10 - g(lo + 0.1 * (hi - lo)))).toBeLessThanOrEqual(tol);
		expect(Math.abs(s.p50 - g(lo + 0.5 * (hi - lo)))).toBeLessThanOrEqual(tol);
		expect(Math.abs(s.p90 - g(lo + 0.9 * (hi - lo)))).toBeLessThanOrEqual(tol);
		expect(Math.abs(s.mean - g((lo + hi) / 2))).toBeLessThanOrEqual(tol / 2);
		expect(s.min).toBeGreaterThanOrEqual(g(lo));
		expect(s.max).toBeLessThanOrEqual(g(hi));
	});

	it('triangular (a, c, b) = (−10 %, 0, +20 %): mean (a + b + c)/3, median b − √((b − a)(b − c)/2)', () => {
		// Triangular distribution: mean (a + b + c)/3; for c ≤ (a + b)/2 the median is b − √((b − a)(b − c)/2)
		// (standard closed forms; from memory).
		const a = -0.1;
		const c = 0;
		const b = 0.2;
		const u = validateUncertaintySet({ seed: 4, samples: N, inputs: { cellCapacitySpread: { kind: 'triangular', lower: a, mode: c, upper: b } } });
		const y = sampleValues(u).map((v) => g(v.cellCapacitySpread));
		const s = summarise(y);
		const median = b - Math.sqrt(((b - a) * (b - c)) / 2);
		// Density at the median 2(b − x)/((b − a)(b − c)); 1/N in probability is Δx = 0.001/density.
		const dx = 0.001 / ((2 * (b - median)) / ((b - a) * (b - c)));
		expect(Math.abs(s.p50 - g(median))).toBeLessThan(2 * dx * 1.1);
		expect(Math.abs(s.mean - g((a + b + c) / 3))).toBeLessThan(2 * ((b - a) / N));
		expect(s.min).toBeGreaterThanOrEqual(g(a));
		expect(s.max).toBeLessThanOrEqual(g(b));
	});
});
