/**
 * A small version of `npm run load` (scripts/load-test.ts): 10 concurrent readers on the sweep
 * page, progress, fronts and points while a sweep runs, against the built app on loopback.
 * Only correctness is asserted — every answer a 200, no errors, no timeouts; the speed figures
 * come from `npm run load`, never from a test.
 *
 * Bounded by count, not by time: each connection walks the round robin of 5 paths exactly
 * ROUNDS times, so every path is read the same number of times however slow the machine is.
 * The sweep runs behind the chunk gate, which holds it before its last chunks, so it is still
 * running when the readers are done.
 */
import { afterAll, describe, expect, it } from 'vitest';
import fs from 'node:fs';
import path from 'node:path';
import { runLoad } from '../../scripts/load-test';
import { ChunkGate } from '../helpers/chunk-gate';

const CONNECTIONS = 10;
const PATHS = 5;
const ROUNDS = 3;
// 3 ambients × 2 states of health × 2 arrival SoCs = 12 scenarios, each 3 lead times × 6
// set-points + 1 baseline = 19 simulations: 228 simulations, 57 chunks of 4. The gate lets 40 start.
const gate = ChunkGate.create(40);

afterAll(() => fs.rmSync(path.dirname(gate.file), { recursive: true, force: true }));

describe('reading under load', () => {
	it('should answer every request with 200 while a sweep runs', async () => {
		const logs: string[] = [];
		const r = await runLoad({
			connections: CONNECTIONS,
			requests: CONNECTIONS * PATHS * ROUNDS,
			sweepLeadTimes_s: [0, 600, 1200],
			sweepChunkSize: 4,
			appEnv: gate.env,
			log: (m) => logs.push(m)
		});
		expect(r.requests).toBeGreaterThanOrEqual(CONNECTIONS * PATHS * ROUNDS);
		expect(r.errors).toBe(0);
		expect(r.timeouts).toBe(0);
		expect(r.non2xx).toBe(0);
		expect(Object.keys(r.statusCodes)).toEqual(['200']);
		// Every path of the round robin was read, once per connection and round.
		expect(Object.keys(r.perPath)).toHaveLength(PATHS);
		for (const [p, v] of Object.entries(r.perPath)) expect(v.count, p).toBe(CONNECTIONS * ROUNDS);
		// The sweep was running throughout: the gate holds it before its end.
		expect(r.sweep.statusAfter).toBe('running');
		expect(logs.join('\n')).not.toMatch(/unexpected errors/);
	}, 600_000); // seeding the demo (with its sweep) dominates; several minutes on a busy 2-core machine
});
