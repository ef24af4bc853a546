/**
 * Open-circuit potentials (OCP) of electrode materials versus Li/Li+, as
 * functions of the stoichiometry θ = c/c_max (lithiation fraction) of the
 * particle surface.
 *
 * Two kinds:
 * - published fit functions (tanh/exponential fits of Chen et al.,
 *   "Development of Experimental Techniques for Parameterization of
 *   Multi-scale Lithium-ion Battery Models", J. Electrochem. Soc. 167 (2020)
 *   080534, eqs. for the graphite(–SiOx) negative electrode and the NMC 811
 *   positive electrode; coefficients reproduced from memory of the paper);
 * - user tables (θ, volts), interpolated by monotone piecewise cubic Hermite
 *   interpolation (Fritsch & Carlson, SIAM J. Numer. Anal. 17 (1980) 238),
 *   which never overshoots between points so a monotone table stays monotone.
 *
 * The entropic coefficient dU/dT (V/K) is always a table, interpolated
 * linearly; it shifts the OCP with temperature: U(θ,T) = U(θ,T_ref) + (T−T_ref)·dU/dT.
 */

export type PublishedOcpFit = 'graphite' | 'nmc811';

export interface OcpTable {
	stoichiometry: number[];
	potential_V: number[];
}

export type OcpSpec = { kind: 'fit'; fit: PublishedOcpFit } | ({ kind: 'table' } & OcpTable);

export interface EntropicTable {
	stoichiometry: number[];
	dUdT_V_per_K: number[];
}

/** Graphite OCP fit of Chen et al. (2020), θ = anode stoichiometry. */
export function graphiteOcpChen2020_V(sto: number): number {
	return (
		1.9793 * Math.exp(-39.3631 * sto) +
		0.2482 -
		0.0909 * Math.tanh(29.8538 * (sto - 0.1234)) -
		0.04478 * Math.tanh(14.9159 * (sto - 0.2769)) -
		0.0205 * Math.tanh(30.4444 * (sto - 0.6103))
	);
}

/** NMC 811 OCP fit of Chen et al. (2020), θ = cathode stoichiometry. */
export function nmc811OcpChen2020_V(sto: number): number {
	return (
		-0.809 * sto +
		4.4875 -
		0.0428 * Math.tanh(18.5138 * (sto - 0.5542)) -
		17.7326 * Math.tanh(15.789 * (sto - 0.3117)) +
		17.5842 * Math.tanh(15.9308 * (sto - 0.312))
	);
}

export const PUBLISHED_OCP_FITS: Record<PublishedOcpFit, { evaluate: (sto: number) => number; label: string; source: string }> = {
	graphite: {
		evaluate: graphiteOcpChen2020_V,
		label: 'Graphite (tanh/exponential fit)',
		source: 'Chen et al., J. Electrochem. Soc. 167 (2020) 080534'
	},
	nmc811: {
		evaluate: nmc811OcpChen2020_V,
		label: 'NMC 811 (tanh fit)',
		source: 'Chen et al., J. Electrochem. Soc. 167 (2020) 080534'
	}
};

/**
 * Monotone cubic Hermite interpolant (Fritsch–Carlson). Outside the table the
 * end segments are extended linearly, so a simulation that strays slightly
 * past the table keeps a finite, monotone potential.
 */
export function monotoneInterpolant(x: readonly number[], y: readonly number[]): (xq: number) => number {
	const n = x.length;
	if (n < 2 || y.length !== n) throw new RangeError('an interpolation table needs at least two points and equal lengths');
	const xs = Float64Array.from(x);
	const ys = Float64Array.from(y);
	const delta = new Float64Array(n - 1);
	for (let i = 0; i < n - 1; i++) delta[i] = (ys[i + 1] - ys[i]) / (xs[i + 1] - xs[i]);
	const m = new Float64Array(n);
	m[0] = delta[0];
	m[n - 1] = delta[n - 2];
	for (let i = 1; i < n - 1; i++) m[i] = delta[i - 1] * delta[i] <= 0 ? 0 : (delta[i - 1] + delta[i]) / 2;
	// Fritsch–Carlson limiter: keep (α, β) inside the circle of radius 3.
	for (let i = 0; i < n - 1; i++) {
		if (delta[i] === 0) {
			m[i] = 0;
			m[i + 1] = 0;
			continue;
		}
		const a = m[i] / delta[i];
		const b = m[i + 1] / delta[i];
		const s = a * a + b * b;
		if (s > 9) {
			const t = 3 / Math.sqrt(s);
			m[i] = t * a * delta[i];
			m[i + 1] = t * b * delta[i];
		}
	}
	return (xq: number): number => {
		if (xq <= xs[0]) return ys[0] + m[0] * (xq - xs[0]);
		if (xq >= xs[n - 1]) return ys[n - 1] + m[n - 1] * (xq - xs[n - 1]);
		let lo = 0;
		let hi = n - 1;
		while (hi - lo > 1) {
			const mid = (lo + hi) >> 1;
			if (xs[mid] <= xq) lo = mid;
			else hi = mid;
		}
		const h = xs[hi] - xs[lo];
		const t = (xq - xs[lo]) / h;
		const t2 = t * t;
		const t3 = t2 * t;
		return (
			(2 * t3 - 3 * t2 + 1) * ys[lo] +
			(t3 - 2 * t2 + t) * h * m[lo] +
			(-2 * t3 + 3 * t2) * ys[hi] +
			(t3 - t2) * h * m[hi]
		);
	};
}

/** Piecewise-linear interpolant, clamped to the end values outside the table. */
export function linearInterpolant(x: readonly number[], y: readonly number[]): (xq: number) => number {
	const n = x.length;
	const xs = Float64Array.from(x);
	const ys = Float64Array.from(y);
	if (n === 1) return () => ys[0];
	return (xq: number): number => {
		if (xq <= xs[0]) return ys[0];
		if (xq >= xs[n - 1]) return ys[n - 1];
		let lo = 0;
		let hi = n - 1;
		while (hi - lo > 1) {
			const mid = (lo + hi) >> 1;
			if (xs[mid] <= xq) lo = mid;
			else hi = mid;
		}
		const t = (xq - xs[lo]) / (xs[hi] - xs[lo]);
		return ys[lo] + t * (ys[hi] - ys[lo]);
	};
}

/** Build the OCP function U(θ) at the reference temperature. */
export function makeOcp(spec: OcpSpec): (sto: number) => number {
	if (spec.kind === 'fit') return PUBLISHED_OCP_FITS[spec.fit].evaluate;
	return monotoneInterpolant(spec.stoichiometry, spec.potential_V);
}

export function makeEntropic(table: EntropicTable): (sto: number) => number {
	return linearInterpolant(table.stoichiometry, table.dUdT_V_per_K);
}

/**
 * A fast version of f on [0, 1]: f sampled on a uniform grid of `points` and
 * interpolated linearly (O(1), no search). Used in the simulation's inner loop,
 * where the fits' tanh/exp terms dominated the run time. With 4097 points the
 * interpolation error of the published fits is below 0.05 mV (h²·max|U''|/8),
 * except within 0.2 % of stoichiometry 0 where the graphite fit's exponential
 * term makes it up to ~0.1 mV.
 */
export function tabulateUnit(f: (x: number) => number, points = 4097): (x: number) => number {
	const n = points - 1;
	const y = new Float64Array(points + 1);
	for (let i = 0; i <= n; i++) y[i] = f(i / n);
	y[points] = y[n];
	return (x: number): number => {
		let u = x * n;
		if (u < 0) u = 0;
		else if (u > n) u = n;
		const i = u | 0;
		const t = u - i;
		return y[i] + t * (y[i + 1] - y[i]);
	};
}

/**
 * Tabulated curves shared between simulations of the same cell: a sweep runs thousands of
 * simulations of a few cells, and rebuilding a 4097-point table of a tanh/exp fit each time cost
 * more than a short charge. Keyed by the curve's content, so equal specs share one table.
 */
const tableCache = new Map<string, (x: number) => number>();
export function cachedTable(key: string, build: () => (x: number) => number): (x: number) => number {
	let f = tableCache.get(key);
	if (!f) {
		if (tableCache.size >= 64) tableCache.delete(tableCache.keys().next().value as string);
		f = build();
		tableCache.set(key, f);
	}
	return f;
}

/** U(θ) of an OCP spec as a shared 4097-point table. */
export function tabulatedOcp(spec: OcpSpec): (sto: number) => number {
	return cachedTable(`ocp:${JSON.stringify(spec)}`, () => tabulateUnit(makeOcp(spec)));
}

/** dU/dT(θ) of an entropic table as a shared 1025-point table. */
export function tabulatedEntropic(table: EntropicTable): (sto: number) => number {
	return cachedTable(`dUdT:${JSON.stringify(table)}`, () => tabulateUnit(makeEntropic(table), 1025));
}
