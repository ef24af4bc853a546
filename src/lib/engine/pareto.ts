/**
 * Two-objective Pareto front: minimise energy spent, maximise a gain (for
 * Paretherm, charging time saved against the scenario's baseline).
 *
 * Method: sort-and-sweep for the bi-objective "maxima of a point set" problem
 * (Kung, Luccio & Preparata, "On Finding the Maxima of a Set of Vectors",
 * J. ACM 22 (1975) 469–476; citation from memory): after sorting by the
 * first objective, a point is non-dominated iff its gain beats the best gain
 * of every strictly cheaper point. O(n log n) for the sort, O(n) for the sweep.
 *
 * Dominance (the one definition used everywhere, including the brute-force
 * reference in the tests): q dominates p iff
 *   energy(q) <= energy(p)  and  gain(q) >= gain(p)  and at least one is strict.
 *
 * Consequences, chosen deliberately and kept deterministic:
 * - Exact duplicates (equal energy AND equal gain) never dominate each other,
 *   so if one is on the front, ALL copies are kept (in input order). The front
 *   therefore shows every strategy that achieves a non-dominated trade-off;
 *   callers that want one representative can take the first of a run.
 * - Points with a non-finite energy or gain (NaN, ±Infinity) are infeasible:
 *   they are excluded before the sweep and can neither be on the front nor
 *   dominate anything.
 * - -0 and +0 compare equal (plain `<`/`===` semantics).
 *
 * The returned front is sorted by energy ascending; because of the definition,
 * equal energy on the front implies equal gain (duplicates), which stay in
 * input order. Along the front, gain is therefore non-decreasing in energy and
 * strictly increasing between distinct (energy, gain) pairs.
 */

/** True iff `q` dominates `p` (see the module comment for the definition). */
export function dominates<T>(
	q: T,
	p: T,
	energy: (p: T) => number,
	gain: (p: T) => number
): boolean {
	const eq = energy(q);
	const ep = energy(p);
	const gq = gain(q);
	const gp = gain(p);
	if (![eq, ep, gq, gp].every(Number.isFinite)) return false;
	return eq <= ep && gq >= gp && (eq < ep || gq > gp);
}

/**
 * True iff some point in `others` dominates `p`. O(n); meant for checks on a
 * single point (for whole sets use `paretoFront`). A non-finite `p` is reported
 * as dominated, since it is infeasible and can never be on a front.
 */
export function isDominated<T>(
	p: T,
	others: readonly T[],
	energy: (p: T) => number,
	gain: (p: T) => number
): boolean {
	if (!isFeasible(p, energy, gain)) return true;
	for (const q of others) {
		if (dominates(q, p, energy, gain)) return true;
	}
	return false;
}

function isFeasible<T>(p: T, energy: (p: T) => number, gain: (p: T) => number): boolean {
	return Number.isFinite(energy(p)) && Number.isFinite(gain(p));
}

/**
 * Non-dominated subset of `points` (minimise `energy`, maximise `gain`),
 * sorted by energy ascending, duplicates kept in input order.
 * The accessors are each called once per point.
 */
export function paretoFront<T>(
	points: readonly T[],
	energy: (p: T) => number,
	gain: (p: T) => number
): T[] {
	const items: { p: T; e: number; g: number; i: number }[] = [];
	points.forEach((p, i) => {
		const e = energy(p);
		const g = gain(p);
		if (Number.isFinite(e) && Number.isFinite(g)) items.push({ p, e, g, i });
	});

	// Energy ascending, then gain descending, then input order: the best point
	// of each equal-energy group comes first and ties are deterministic.
	items.sort((a, b) => a.e - b.e || b.g - a.g || a.i - b.i);

	const front: T[] = [];
	// Best gain among points with strictly lower energy than the current group.
	let bestGainCheaper = -Infinity;
	let k = 0;
	while (k < items.length) {
		const groupEnergy = items[k].e;
		const groupBestGain = items[k].g;
		// Within an equal-energy group only the points reaching the group's best
		// gain survive (the others are dominated by it through the strict gain),
		// and those survive only if no cheaper point reaches at least that gain.
		const survives = groupBestGain > bestGainCheaper;
		while (k < items.length && items[k].e === groupEnergy) {
			if (survives && items[k].g === groupBestGain) front.push(items[k].p);
			k++;
		}
		if (groupBestGain > bestGainCheaper) bestGainCheaper = groupBestGain;
	}
	return front;
}
