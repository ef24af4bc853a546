/**
 * Multilinear interpolation on a rectilinear grid (here: ambient × arrival state of charge ×
 * state of health of a sweep's scenarios). Pure.
 *
 * - Each axis holds strictly increasing node values. A query coordinate x on an axis falls in
 *   the cell [x_i, x_{i+1}] and gets the weight t = (x − x_i)/(x_{i+1} − x_i) on the upper node
 *   and 1 − t on the lower; a value is the weighted sum over the 2^d corners of the cell
 *   (product of the per-axis weights). Corners with weight exactly 0 are skipped, so a query on
 *   a node returns that node's value exactly (1 × v), even beside a missing node.
 * - Between nodes the result is linear along each axis, so wherever the table is monotone along
 *   an axis (for every fixed value of the other axes) the interpolant is monotone along it too.
 * - Outside an axis' range the coordinate is clamped to its first or last node, never
 *   extrapolated, and the clamp is reported per axis (below / above) for counting.
 * - An axis with a single node takes every query to that node (clamped when it differs).
 * - A missing node (NaN) with a non-zero weight makes the result NaN: the caller counts it as
 *   an event without stored figures rather than guessing.
 */

export interface Grid {
	/** Strictly increasing node values per axis. */
	axes: number[][];
	/** Node values, row-major (last axis fastest). NaN marks a missing node. */
	values: Float64Array | number[];
}

export type Clamp = -1 | 0 | 1;

export interface Lookup {
	value: number;
	/** Per axis: −1 clamped to the first node, +1 clamped to the last, 0 inside the range. */
	clamped: Clamp[];
}

export function gridSize(axes: readonly (readonly number[])[]): number {
	return axes.reduce((n, a) => n * a.length, 1);
}

export function checkGrid(g: Grid): void {
	g.axes.forEach((a, k) => {
		if (a.length === 0) throw new RangeError(`axis ${k} has no nodes`);
		for (let i = 1; i < a.length; i++) if (!(a[i] > a[i - 1])) throw new RangeError(`axis ${k} is not strictly increasing at node ${i}`);
	});
	if (g.values.length !== gridSize(g.axes)) throw new RangeError(`grid has ${g.values.length} values for ${gridSize(g.axes)} nodes`);
}

/** Position of x on an axis: lower node index, weight of the upper node, clamp flag. */
export function locate(axis: readonly number[], x: number): { i: number; t: number; clamped: Clamp } {
	const n = axis.length;
	if (n === 1) return { i: 0, t: 0, clamped: x < axis[0] ? -1 : x > axis[0] ? 1 : 0 };
	if (x <= axis[0]) return { i: 0, t: 0, clamped: x < axis[0] ? -1 : 0 };
	if (x >= axis[n - 1]) return { i: n - 2, t: 1, clamped: x > axis[n - 1] ? 1 : 0 };
	let lo = 0;
	let hi = n - 1;
	while (hi - lo > 1) {
		const mid = (lo + hi) >> 1;
		if (axis[mid] <= x) lo = mid;
		else hi = mid;
	}
	return { i: lo, t: (x - axis[lo]) / (axis[lo + 1] - axis[lo]), clamped: 0 };
}

export function interpolate(g: Grid, x: readonly number[]): Lookup {
	const d = g.axes.length;
	const pos = g.axes.map((a, k) => locate(a, x[k]));
	const strides = new Array<number>(d);
	let s = 1;
	for (let k = d - 1; k >= 0; k--) {
		strides[k] = s;
		s *= g.axes[k].length;
	}
	let value = 0;
	for (let corner = 0; corner < 1 << d; corner++) {
		let w = 1;
		let idx = 0;
		for (let k = 0; k < d; k++) {
			const upper = (corner >> k) & 1;
			const wk = upper ? pos[k].t : 1 - pos[k].t;
			if (wk === 0) {
				w = 0;
				break;
			}
			w *= wk;
			idx += (pos[k].i + upper) * strides[k];
		}
		if (w === 0) continue;
		const v = g.values[idx];
		if (Number.isNaN(v)) return { value: NaN, clamped: pos.map((p) => p.clamped) };
		value += w * v;
	}
	return { value, clamped: pos.map((p) => p.clamped) };
}
