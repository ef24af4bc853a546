/**
 * Kneedle knee detection, offline form.
 *
 * Published method: V. Satopää, J. Albrecht, D. Irwin, B. Raghavan,
 * "Finding a 'Kneedle' in a Haystack: Detecting Knee Points in System
 * Behavior", 31st ICDCS Workshops (2011) 166–171. The steps below follow the
 * paper as we remember it (no copy of the paper was at hand when this was
 * written; the step list agrees with the widely used open-source
 * implementation of the method):
 *
 *  1. (Paper) smooth the data with a spline. Skipped here: our curves are
 *     Pareto fronts of deterministic simulation results, not noisy samples,
 *     and smoothing would move the knee off an actual strategy.
 *  2. Normalise x and y to the unit square: x_s = (x − x_min)/(x_max − x_min),
 *     likewise y.
 *  3. Difference curve for a concave increasing curve: d_i = y_s,i − x_s,i
 *     (how far the curve rises above the chord y = x).
 *  4. Local maxima of d.
 *  5. Threshold for each local maximum: T = d_lmx − S · mean(Δx_s), with
 *     mean(Δx_s) = Σ(x_s,i+1 − x_s,i)/(n − 1) = 1/(n − 1) after normalisation;
 *     S is the sensitivity (S = 1 is the paper's suggested offline default).
 *  6. Walking on from a local maximum, if d drops below T before the next
 *     local maximum, that local maximum is a knee; a new local maximum
 *     replaces the current candidate. The paper also "resets the threshold"
 *     when d reaches a local minimum first. Offline, with the threshold test
 *     made before anything else at each point, that reset cannot change the
 *     result (a minimum that was not below T is followed by larger values up
 *     to the next maximum, which replaces the candidate anyway), so it is not
 *     coded separately.
 *
 * The offline recommendation is the FIRST knee detected (lowest x): on a
 * Pareto front of energy vs time saved this is the first point after which
 * extra energy buys markedly less time. All detected knees are also returned.
 *
 * Only the concave increasing shape is supported (our front: time saved
 * against energy spent). For other shapes, flip the data into that shape
 * before calling.
 */

export interface KneedleOptions {
	/** Sensitivity S ≥ 0; larger is more conservative (fewer knees). Default 1. */
	sensitivity?: number;
}

export interface KneedleResult {
	/** Index (into the input arrays) of the recommended knee, or null if none. */
	kneeIndex: number | null;
	/** Indices of all knees detected, in increasing x. */
	kneeIndices: number[];
	/** Normalised x (unit interval); empty when the curve is degenerate. */
	xNormalised: number[];
	/** Normalised y (unit interval); empty when the curve is degenerate. */
	yNormalised: number[];
	/** Difference curve d_i = y_s,i − x_s,i; empty when the curve is degenerate. */
	difference: number[];
}

/**
 * Find the knee of a concave increasing curve given as samples (x_i, y_i)
 * with x non-decreasing. Returns `kneeIndex: null` when there are fewer than
 * three points, when x or y has zero range, or when no local maximum of the
 * difference curve passes the threshold.
 *
 * @throws RangeError if lengths differ, values are not finite, x is not
 *   sorted ascending, or the sensitivity is negative or not finite.
 */
export function kneedle(
	x: readonly number[],
	y: readonly number[],
	options: KneedleOptions = {}
): KneedleResult {
	const S = options.sensitivity ?? 1;
	if (!Number.isFinite(S) || S < 0) {
		throw new RangeError(`Kneedle sensitivity must be a finite number ≥ 0 (got ${S}).`);
	}
	if (x.length !== y.length) {
		throw new RangeError(`Kneedle needs as many x as y values (got ${x.length} and ${y.length}).`);
	}
	const n = x.length;
	for (let i = 0; i < n; i++) {
		if (!Number.isFinite(x[i]) || !Number.isFinite(y[i])) {
			throw new RangeError(`Kneedle point ${i} is not finite (x=${x[i]}, y=${y[i]}).`);
		}
		if (i > 0 && x[i] < x[i - 1]) {
			throw new RangeError(`Kneedle needs x sorted ascending; x[${i}] < x[${i - 1}].`);
		}
	}

	const none: KneedleResult = {
		kneeIndex: null,
		kneeIndices: [],
		xNormalised: [],
		yNormalised: [],
		difference: []
	};
	if (n < 3) return none;

	const xMin = x[0];
	const xMax = x[n - 1];
	let yMin = Infinity;
	let yMax = -Infinity;
	for (const v of y) {
		if (v < yMin) yMin = v;
		if (v > yMax) yMax = v;
	}
	if (!(xMax > xMin) || !(yMax > yMin)) return none;

	// Step 2: unit square.
	const xs = x.map((v) => (v - xMin) / (xMax - xMin));
	const ys = y.map((v) => (v - yMin) / (yMax - yMin));
	// Step 3: difference curve (concave increasing).
	const d = xs.map((v, i) => ys[i] - v);
	// Step 5 spacing term: mean of consecutive normalised x gaps (= 1/(n−1)).
	const meanGap = (xs[n - 1] - xs[0]) / (n - 1);

	// Step 4: interior local maxima. A plateau counts once, at its first
	// point, so results do not depend on floating-point ties.
	const isMax = (i: number) => d[i] > d[i - 1] && d[i] >= d[i + 1];

	// Step 6: walk the difference curve.
	const knees: number[] = [];
	let candidate = -1;
	let threshold = -Infinity;
	for (let i = 1; i < n; i++) {
		if (candidate >= 0 && d[i] < threshold) {
			knees.push(candidate);
			candidate = -1;
			threshold = -Infinity;
		}
		if (i === n - 1) break;
		if (isMax(i)) {
			candidate = i;
			threshold = d[i] - S * meanGap;
		}
	}

	return {
		kneeIndex: knees.length > 0 ? knees[0] : null,
		kneeIndices: knees,
		xNormalised: xs,
		yNormalised: ys,
		difference: d
	};
}
