/**
 * Seeded sample designs of a robust study.
 *
 * Latin hypercube (M. D. McKay, R. J. Beckman, W. J. Conover, "A Comparison of Three Methods for
 * Selecting Values of Input Variables in the Analysis of Output from a Computer Code",
 * Technometrics 21 (1979) 239–245): for N samples each input's unit interval is cut into N equal
 * strata; an independent random permutation π_j per input places exactly one sample in each
 * stratum, at a uniform position inside it: u_ij = (π_j(i) + U_ij)/N.
 *
 * Sensitivity design (A. Saltelli, P. Annoni, I. Azzini, F. Campolongo, M. Ratto, S. Tarantola,
 * "Variance based sensitivity analysis of model output. Design and estimator for the total
 * sensitivity index", Comput. Phys. Commun. 181 (2010) 259–270, §3): two independent N × k
 * matrices A and B (here the first and last k columns of one N × 2k Latin hypercube, so each is a
 * Latin hypercube itself) and, for every input i, A_B^(i): A with its column i taken from B.
 * Rows are laid out A, B, A_B^(1), …, A_B^(k): N·(k + 2) rows.
 *
 * Random numbers: seedrandom's ARC4 generator seeded with "paretherm-robust:<seed>", so the same
 * seed and set give the same design on every machine.
 */
import seedrandom from 'seedrandom';
import { quantileOf } from './distributions';
import { activeInputs, distributionOf, UNCERTAIN_INPUTS, type UncertainInput, type UncertaintySet } from './uncertainty';

export type Rng = () => number;

export function seededRng(seed: number | string): Rng {
	return seedrandom(`paretherm-robust:${seed}`);
}

/** N × k Latin hypercube in the unit cube (rows = samples). */
export function latinHypercube(n: number, k: number, rng: Rng): number[][] {
	if (!Number.isInteger(n) || n < 1) throw new RangeError(`A Latin hypercube needs a whole number of samples ≥ 1 (got ${n}).`);
	if (!Number.isInteger(k) || k < 0) throw new RangeError(`A Latin hypercube needs a whole number of inputs ≥ 0 (got ${k}).`);
	const rows: number[][] = Array.from({ length: n }, () => new Array<number>(k));
	const perm = new Array<number>(n);
	for (let j = 0; j < k; j++) {
		for (let i = 0; i < n; i++) perm[i] = i;
		// Fisher–Yates shuffle (Knuth, TAOCP vol. 2, Algorithm P).
		for (let i = n - 1; i > 0; i--) {
			const r = Math.floor(rng() * (i + 1));
			const t = perm[i];
			perm[i] = perm[r];
			perm[r] = t;
		}
		for (let i = 0; i < n; i++) rows[i][j] = (perm[i] + rng()) / n;
	}
	return rows;
}

/**
 * Rows A, B, A_B^(1), …, A_B^(k) (N·(k + 2) rows of k values) of the sensitivity design, A and B
 * being the first and last k columns of one N × 2k Latin hypercube.
 */
export function saltelliRows(n: number, k: number, rng: Rng): number[][] {
	const AB = latinHypercube(n, 2 * k, rng);
	const A = AB.map((r) => r.slice(0, k));
	const B = AB.map((r) => r.slice(k));
	const rows = [...A, ...B];
	for (let i = 0; i < k; i++) {
		for (let j = 0; j < n; j++) {
			const r = A[j].slice();
			r[i] = B[j][i];
			rows.push(r);
		}
	}
	return rows;
}

/** The sample matrices of a study, in the unit cube, columns in `inputs` order. */
export interface UnitDesign {
	inputs: UncertainInput[];
	/** N base samples (rows of A). */
	samples: number;
	/** All design rows: A, then (with sensitivity) B and A_B^(1…k). */
	rows: number[][];
	sensitivity: boolean;
}

export function unitDesign(u: UncertaintySet): UnitDesign {
	const inputs = activeInputs(u);
	const k = inputs.length;
	const n = u.samples;
	const rng = seededRng(u.seed);
	if (!u.sensitivity) return { inputs, samples: n, rows: latinHypercube(n, k, rng), sensitivity: false };
	return { inputs, samples: n, rows: saltelliRows(n, k, rng), sensitivity: true };
}

/** Values of every uncertain input for one design row (inputs not in the set are 0: nominal). */
export type SampleValues = Record<UncertainInput, number>;

export const NOMINAL_SAMPLE: Readonly<SampleValues> = Object.freeze(
	Object.fromEntries(UNCERTAIN_INPUTS.map((k) => [k, 0])) as SampleValues
);

/** Map a unit design to input values through each input's quantile function. */
export function sampleValues(u: UncertaintySet, design: UnitDesign = unitDesign(u)): SampleValues[] {
	return design.rows.map((row) => {
		const v: SampleValues = { ...NOMINAL_SAMPLE };
		design.inputs.forEach((k, c) => {
			v[k] = quantileOf(distributionOf(u, k)!, row[c]);
		});
		return v;
	});
}
