/**
 * First-order and total sensitivity indices (variance-based, Sobol') from the design A, B,
 * A_B^(i) (see design.ts), with bootstrap confidence intervals.
 *
 * Estimators (A. Saltelli et al., Comput. Phys. Commun. 181 (2010) 259–270, Table 2; from memory):
 * - first order, Table 2 (b):  V_i  ≈ (1/N) Σ_j f(B)_j · (f(A_B^(i))_j − f(A)_j)
 * - total, Table 2 (f), Jansen's estimator (M. J. W. Jansen, "Analysis of variance designs for
 *   model output", Comput. Phys. Commun. 117 (1999) 35–43):
 *                               V_Ti ≈ (1/2N) Σ_j (f(A)_j − f(A_B^(i))_j)²
 * - S_i = V_i / V(Y), S_Ti = V_Ti / V(Y), with V(Y) the sample variance of the 2N values
 *   f(A) ∪ f(B) (as in the paper's worked examples).
 * - f(B) in the first-order sum is centred on the mean of f(A) ∪ f(B): the expectation is the same
 *   (E[f(A_B^(i)) − f(A)] = 0) but an output far from zero (a time in seconds) no longer multiplies
 *   the sampling noise of the difference (common practice in variance-based sensitivity codes).
 *
 * Confidence intervals: percentile bootstrap (B. Efron, R. J. Tibshirani, "An Introduction to the
 * Bootstrap", Chapman & Hall 1993, ch. 13): resample the N rows j with replacement (the same rows
 * for A, B and every A_B^(i), keeping the pairing), recompute the indices, take the 2.5 % and
 * 97.5 % quantiles (Hyndman–Fan 7) of the replicates. Seeded, so repeatable.
 */
import { seededRng } from './design';
import { quantileSorted } from './statistics';

export interface SensitivityIndex {
	firstOrder: number;
	firstOrderCi: [number, number];
	total: number;
	totalCi: [number, number];
}

export interface SensitivityOptions {
	/** Bootstrap replicates (default 500). */
	bootstrap?: number;
	/** Confidence level of the intervals (default 0.95). */
	confidence?: number;
	/** Seed of the resampling (default 0). */
	seed?: number;
}

function estimate(fA: ArrayLike<number>, fB: ArrayLike<number>, fAB: ArrayLike<number>[], idx: ArrayLike<number>): { S: number[]; ST: number[] } {
	const n = idx.length;
	// Two-pass variance (no cancellation when the outputs sit far from zero, e.g. times in seconds).
	let sum = 0;
	for (let r = 0; r < n; r++) sum += fA[idx[r]] + fB[idx[r]];
	const m = 2 * n;
	const avg = sum / m;
	let ss = 0;
	for (let r = 0; r < n; r++) {
		const a = fA[idx[r]] - avg;
		const b = fB[idx[r]] - avg;
		ss += a * a + b * b;
	}
	const variance = ss / (m - 1);
	const S: number[] = [];
	const ST: number[] = [];
	for (const fi of fAB) {
		let v = 0;
		let vt = 0;
		for (let r = 0; r < n; r++) {
			const j = idx[r];
			const d = fi[j] - fA[j];
			v += (fB[j] - avg) * d;
			vt += d * d;
		}
		S.push(variance > 0 ? v / n / variance : NaN);
		ST.push(variance > 0 ? vt / (2 * n) / variance : NaN);
	}
	return { S, ST };
}

/**
 * Indices of every input from the model outputs on the design rows (A, B, A_B^(1…k), each N
 * long, in that order: `outputs.length` = N·(k + 2)). Returns NaN indices when the output does
 * not vary (zero variance: nothing to attribute).
 */
export function sobolIndices(outputs: readonly number[], samples: number, options: SensitivityOptions = {}): SensitivityIndex[] {
	const n = samples;
	if (!Number.isInteger(n) || n < 2) throw new RangeError(`Sensitivity indices need at least 2 base samples (got ${n}).`);
	if (outputs.length % n !== 0 || outputs.length / n < 3) {
		throw new RangeError(`Sensitivity indices need N·(k + 2) outputs with k ≥ 1 (got ${outputs.length} for N = ${n}).`);
	}
	for (let i = 0; i < outputs.length; i++) {
		if (!Number.isFinite(outputs[i])) throw new RangeError(`Sensitivity indices need finite outputs; design row ${i} gave ${outputs[i]}.`);
	}
	const k = outputs.length / n - 2;
	const fA = outputs.slice(0, n);
	const fB = outputs.slice(n, 2 * n);
	const fAB = Array.from({ length: k }, (_, i) => outputs.slice((2 + i) * n, (3 + i) * n));
	const all = Array.from({ length: n }, (_, j) => j);
	const point = estimate(fA, fB, fAB, all);

	const reps = options.bootstrap ?? 500;
	const level = options.confidence ?? 0.95;
	if (!Number.isInteger(reps) || reps < 10) throw new RangeError(`The bootstrap needs at least 10 replicates (got ${reps}).`);
	if (!(level > 0 && level < 1)) throw new RangeError(`The confidence level must lie in (0, 1) (got ${level}).`);
	const rng = seededRng(`bootstrap:${options.seed ?? 0}`);
	const bootS: number[][] = Array.from({ length: k }, () => []);
	const bootST: number[][] = Array.from({ length: k }, () => []);
	const idx = new Int32Array(n);
	for (let r = 0; r < reps; r++) {
		for (let j = 0; j < n; j++) idx[j] = Math.floor(rng() * n);
		const e = estimate(fA, fB, fAB, idx);
		for (let i = 0; i < k; i++) {
			bootS[i].push(e.S[i]);
			bootST[i].push(e.ST[i]);
		}
	}
	const lo = (1 - level) / 2;
	const hi = 1 - lo;
	const ci = (values: number[]): [number, number] => {
		const sorted = values.filter(Number.isFinite).sort((a, b) => a - b);
		return sorted.length ? [quantileSorted(sorted, lo), quantileSorted(sorted, hi)] : [NaN, NaN];
	};
	return Array.from({ length: k }, (_, i) => ({
		firstOrder: point.S[i],
		firstOrderCi: ci(bootS[i]),
		total: point.ST[i],
		totalCi: ci(bootST[i])
	}));
}
