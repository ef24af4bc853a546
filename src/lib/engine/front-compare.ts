/**
 * Comparing fronts of several variants (cell versions, pack designs) on one scenario: the time a
 * front saves at a given energy, read off the front by linear interpolation between its points.
 *
 * A front here is the set of non-dominated (energy, time saved) pairs of one variant in one
 * scenario, with the baseline (0 Wh, 0 s) included when no strategy dominates it (see
 * calibration.ts). Between two neighbouring front points the trade-off is taken as linear:
 * piecewise-linear interpolation, the usual reading of a sampled curve (common practice, no
 * source). It is defined only inside the front's energy range; outside it the front says
 * nothing (below its cheapest point no strategy of the grid spends that little; above its dearest
 * point the grid did not try more), so the answer there is null rather than an extrapolation.
 */

export interface FrontSample {
	energy_Wh: number;
	timeSaved_s: number;
}

/**
 * The front's points in energy order, with the baseline origin put in front when it is on the
 * front (no point spends ≤ 0 Wh while saving time or saves ≥ 0 s for < 0 Wh). Points slower than
 * the baseline and non-finite points are ignored. Equal energies keep the larger time saved.
 */
export function frontCurve(points: readonly FrontSample[], includeBaseline = true): FrontSample[] {
	const usable = points.filter((p) => Number.isFinite(p.energy_Wh) && Number.isFinite(p.timeSaved_s) && p.timeSaved_s >= 0);
	const baselineDominated = usable.some((p) => p.energy_Wh <= 0 && (p.energy_Wh < 0 || p.timeSaved_s > 0));
	const all = includeBaseline && !baselineDominated ? [{ energy_Wh: 0, timeSaved_s: 0 }, ...usable] : [...usable];
	all.sort((a, b) => a.energy_Wh - b.energy_Wh || b.timeSaved_s - a.timeSaved_s);
	const out: FrontSample[] = [];
	for (const p of all) {
		const last = out[out.length - 1];
		if (last && last.energy_Wh === p.energy_Wh) continue; // keep the best of an equal-energy group
		out.push({ energy_Wh: p.energy_Wh, timeSaved_s: p.timeSaved_s });
	}
	return out;
}

/**
 * Time saved at `energy_Wh` on the front (piecewise-linear between neighbouring points), or null
 * when the energy lies outside the front's range or the front is empty.
 */
export function timeSavedAt(curve: readonly FrontSample[], energy_Wh: number): number | null {
	if (!Number.isFinite(energy_Wh) || curve.length === 0) return null;
	const first = curve[0];
	const last = curve[curve.length - 1];
	if (energy_Wh < first.energy_Wh || energy_Wh > last.energy_Wh) return null;
	for (let i = 1; i < curve.length; i++) {
		const a = curve[i - 1];
		const b = curve[i];
		if (energy_Wh <= b.energy_Wh) {
			const f = (energy_Wh - a.energy_Wh) / (b.energy_Wh - a.energy_Wh);
			return a.timeSaved_s + f * (b.timeSaved_s - a.timeSaved_s);
		}
	}
	return first.timeSaved_s; // a single point, exactly at its energy
}

/**
 * Energies at which to compare several fronts: `count` evenly spaced values across the range all
 * curves share (from the largest cheapest point to the smallest dearest point), ends included.
 * Empty when the curves share no range.
 */
export function sharedEnergies(curves: readonly (readonly FrontSample[])[], count = 4): number[] {
	const nonEmpty = curves.filter((c) => c.length > 0);
	if (nonEmpty.length === 0 || nonEmpty.length < curves.length) return [];
	const lo = Math.max(...nonEmpty.map((c) => c[0].energy_Wh));
	const hi = Math.min(...nonEmpty.map((c) => c[c.length - 1].energy_Wh));
	if (!(hi >= lo)) return [];
	if (hi === lo || count < 2) return [lo];
	return Array.from({ length: count }, (_, i) => lo + ((hi - lo) * i) / (count - 1));
}
