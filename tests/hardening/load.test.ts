/**
 * A small version of `npm run load` (scripts/load-test.ts): 10 concurrent readers for 5 s on the
 * sweep page, progress, fronts and points while a sweep runs, against the built app on loopback.
 * Only correctness is asserted — every answer a 200, no errors, no timeouts; the speed figures
 * come from `npm run load`, never from a test.
 */
import { describe, expect, it } from 'vitest';
import { runLoad } from '../../scripts/load-test';

describe('reading under load', () => {
	it('should answer every request with 200 while a sweep runs', async () => {
		const logs: string[] = [];
		const r = await runLoad({ connections: 10, duration_s: 5, sweepLeadTimes_s: [0, 600, 1200], log: (m) => logs.push(m) });
		expect(r.requests).toBeGreaterThan(0);
		expect(r.errors).toBe(0);
		expect(r.timeouts).toBe(0);
		expect(r.non2xx).toBe(0);
		expect(Object.keys(r.statusCodes)).toEqual(['200']);
		// Every path of the round robin was read.
		expect(Object.keys(r.perPath)).toHaveLength(5);
		expect(logs.join('\n')).not.toMatch(/unexpected errors/);
	}, 180_000);
});
