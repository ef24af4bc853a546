/**
 * Bounded input distributions of a robust study, as inverse cumulative distribution functions
 * (quantile functions) u ∈ [0, 1) → x: a sample design gives u, the quantile function turns it
 * into a value. Every distribution lives between its bounds [lower, upper].
 *
 * - normal: N(mean, sd²) truncated to [lower, upper]; quantile by inversion,
 *   x = mean + sd·Φ⁻¹(Φ(α) + u·(Φ(β) − Φ(α))) with α = (lower − mean)/sd, β = (upper − mean)/sd
 *   (inversion method for a truncated distribution: L. Devroye, "Non-Uniform Random Variate
 *   Generation", Springer 1986, ch. II.2; from memory). sd = 0 gives the mean.
 * - uniform on [lower, upper]: x = lower + u·(upper − lower).
 * - triangular(lower, mode, upper): with F_c = (mode − lower)/(upper − lower),
 *   x = lower + √(u·(upper − lower)·(mode − lower)) for u < F_c, else
 *   upper − √((1 − u)·(upper − lower)·(upper − mode)) (closed-form inverse of the triangular
 *   distribution function; common practice, no source).
 *
 * Φ and Φ⁻¹ come from jstat (error function by a Chebyshev series, inverse by a rational
 * start and two Newton steps).
 */
import jstatPkg from 'jstat';

const { jStat } = jstatPkg;

export type Distribution =
	| { kind: 'normal'; mean: number; sd: number; lower: number; upper: number }
	| { kind: 'uniform'; lower: number; upper: number }
	| { kind: 'triangular'; lower: number; mode: number; upper: number };

/** Standard normal distribution function Φ(z). */
export function normalCdf(z: number): number {
	return jStat.normal.cdf(z, 0, 1);
}

/** Standard normal quantile Φ⁻¹(p), p ∈ (0, 1). */
export function normalQuantile(p: number): number {
	return jStat.normal.inv(p, 0, 1);
}

const clamp = (x: number, lo: number, hi: number) => (x < lo ? lo : x > hi ? hi : x);

/** Quantile function of a bounded distribution at u ∈ [0, 1]; the result stays within the bounds. */
export function quantileOf(d: Distribution, u: number): number {
	if (!(u >= 0 && u <= 1)) throw new RangeError(`A sample design value must lie in [0, 1] (got ${u}).`);
	switch (d.kind) {
		case 'uniform':
			return clamp(d.lower + u * (d.upper - d.lower), d.lower, d.upper);
		case 'triangular': {
			const { lower: a, mode: c, upper: b } = d;
			if (b === a) return a;
			const Fc = (c - a) / (b - a);
			const x = u < Fc ? a + Math.sqrt(u * (b - a) * (c - a)) : b - Math.sqrt((1 - u) * (b - a) * (b - c));
			return clamp(x, a, b);
		}
		case 'normal': {
			if (d.sd === 0 || d.upper === d.lower) return clamp(d.mean, d.lower, d.upper);
			const pa = normalCdf((d.lower - d.mean) / d.sd);
			const pb = normalCdf((d.upper - d.mean) / d.sd);
			const p = pa + u * (pb - pa);
			if (p <= 0) return d.lower;
			if (p >= 1) return d.upper;
			return clamp(d.mean + d.sd * normalQuantile(p), d.lower, d.upper);
		}
	}
}

/** True when the distribution always gives the same value (zero spread). */
export function isDegenerate(d: Distribution): boolean {
	if (d.kind === 'normal') return d.sd === 0 || d.lower === d.upper;
	return d.lower === d.upper;
}
