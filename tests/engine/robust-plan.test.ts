import { describe, expect, it } from 'vitest';
import { robustChunks, robustRunTimeEstimate_s, robustTaskAt, robustTaskCount } from '../../src/lib/engine/robust/index';

// Exactly-once planning (product rule for sweeps: every simulation stored once; common practice, no source).
describe('robust study plan', () => {
	it.each([
		[1, 0, 10, 4],
		[2, 3, 5, 7],
		[3, 480, 64, 64]
	])('%i scenarios × %i strategies × %i rows in chunks of %i: every run exactly once, in order', (sc, st, rows, size) => {
		const chunks = robustChunks(sc, st, rows, size);
		const flat = chunks.flatMap((c) => c.tasks);
		expect(flat).toHaveLength(robustTaskCount(sc, st, rows));
		expect(flat.length).toBe(sc * rows * (st + 1));
		const keys = new Set(flat.map((t) => `${t.scenarioIndex}/${t.rowIndex}/${t.strategyIndex}`));
		expect(keys.size).toBe(flat.length);
		chunks.forEach((c, i) => {
			expect(c.chunkIndex).toBe(i);
			expect(c.tasks.length).toBeGreaterThan(0);
			expect(c.tasks.length).toBeLessThanOrEqual(size);
		});
		// The baseline of each row comes first, then strategies 0…st−1.
		expect(flat[0]).toEqual({ scenarioIndex: 0, rowIndex: 0, strategyIndex: null });
		if (st > 0) expect(flat[1]).toEqual({ scenarioIndex: 0, rowIndex: 0, strategyIndex: 0 });
		expect(flat[flat.length - 1]).toEqual({ scenarioIndex: sc - 1, rowIndex: rows - 1, strategyIndex: st > 0 ? st - 1 : null });
		flat.forEach((t, p) => expect(robustTaskAt(p, st, rows)).toEqual(t));
	});

	it('refuses a chunk size below one', () => {
		expect(() => robustChunks(1, 1, 10, 0)).toThrow(/chunk size/);
	});

	it('run-time estimate: simulations × cost ÷ threads', () => {
		expect(robustRunTimeEstimate_s(30784, 0.004, 2)).toBeCloseTo(61.568, 9);
		expect(() => robustRunTimeEstimate_s(10, 0.1, 0)).toThrow(/thread/);
	});
});
