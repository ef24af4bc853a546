/** Pure helpers of the model-check pages: citations in strategy text, thinning long series for charts. */

/** "check #12", "Check #12" — not "check #123" for 12. */
export function citesCheck(text: string, checkId: number): boolean {
	return new RegExp(`\\bcheck\\s*#${checkId}(?![0-9])`, 'i').test(text);
}

/**
 * Indices to draw: at most `maxPoints`, one per bucket — the sample with the largest voltage error,
 * so spikes stay visible when a long log is thinned for the page (the CSV has every sample).
 */
export function chartIndices(measured: readonly number[], simulated: readonly number[], maxPoints = 4000): number[] {
	const n = measured.length;
	if (n <= maxPoints) return Array.from({ length: n }, (_, i) => i);
	const out: number[] = [];
	const size = n / maxPoints;
	for (let b = 0; b < maxPoints; b++) {
		const from = Math.floor(b * size);
		const to = Math.min(n, Math.floor((b + 1) * size));
		let best = from;
		let worst = -1;
		for (let i = from; i < to; i++) {
			const e = Math.abs(simulated[i] - measured[i]);
			if (e > worst) {
				worst = e;
				best = i;
			}
		}
		out.push(best);
	}
	if (out[out.length - 1] !== n - 1) out.push(n - 1);
	if (out[0] !== 0) out.unshift(0);
	return out;
}
