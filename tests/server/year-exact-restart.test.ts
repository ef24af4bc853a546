/**
 * Restart safety of an exact year-of-use run: the web process (with its private redis-server and
 * worker child) is killed with SIGKILL while the run is held mid-way by the chunk gate — one chunk
 * stored, the next one taken by the worker. A new process on the same data folder must collect,
 * retry and finish the run with every chunk stored exactly once, and its figures must still be the
 * known ones (constant climate on a sweep ambient, one kind of charge on a sweep node: exact =
 * lookup; common practice, no source).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Client, DEMO, seed, startApp, tempDataDir, type RunningApp } from '../helpers/app';
import { queryDb } from '../helpers/db-checksum';
import { ChunkGate } from '../helpers/chunk-gate';
import { waitFor } from '../helpers/sweeps';
import { climateCsv_C } from '../../src/lib/year/climate';

let dataDir = '';
let gate: ChunkGate;
let first: RunningApp | null = null;
let second: RunningApp | null = null;
let programId = 0;
let evaluationId = 0;

const env = () => ({ ...gate.env, PARETHERM_WORKER_THREADS: '1', PARETHERM_JOB_LOCK_MS: '3000', PARETHERM_STALLED_CHECK_MS: '1000', PARETHERM_RECONCILE_MS: '1000' });

async function signedIn(app: RunningApp): Promise<Client> {
	const c = new Client(app.url);
	expect((await c.signIn(DEMO.engineer)).status).toBe(303);
	return c;
}

type RunRow = { id: number; status: string; chunks_done: number; chunk_count: number; result: string | null; failure_reason: string | null };
const runOf = async () => (await queryDb<RunRow>(dataDir, 'SELECT * FROM year_exact_runs WHERE evaluation_id = ?', [evaluationId]))[0];

beforeAll(async () => {
	dataDir = tempDataDir();
	await seed(dataDir, 'scripts/seed.ts', { PARETHERM_SEED_YEAR_SWEEP: '1' });
	gate = ChunkGate.create(1);
	first = await startApp({ dataDir, seed: false, env: env() });
	const c = await signedIn(first);
	programId = Number(/\/programs\/(\d+)/.exec((await c.get('/')).headers.get('location')!)![1]);
	const post = (action: string, fields: Record<string, string>) => {
		const body = new FormData();
		for (const [k, v] of Object.entries(fields)) body.set(k, v);
		return c.request(`/programs/${programId}/year?/${action}`, { method: 'POST', headers: { accept: 'text/html' }, body });
	};
	expect((await post('uploadClimate', { name: 'Constant zero', csv: climateCsv_C(new Array(8760).fill(0)), fileName: 'zero.csv' })).status).toBe(303);
	const pattern = { eventsPerWeek: 1, monthWeights: new Array(12).fill(1), hourWeights: new Array(24).fill(1), arrivalSocs: [{ soc: 0.4, weight: 1 }], targetSoc: 0.8, scenarioSlug: 'cold-morning-depot' };
	expect((await post('savePattern', { name: 'Restart pattern', json: JSON.stringify(pattern) })).status).toBe(303);
	const climateId = (await queryDb<{ id: number }>(dataDir, "SELECT id FROM climates WHERE name = 'Constant zero'"))[0].id;
	const patternId = (await queryDb<{ id: number }>(dataDir, "SELECT id FROM charging_patterns WHERE name = 'Restart pattern'"))[0].id;
	const sweepId = (await queryDb<{ id: number }>(dataDir, "SELECT id FROM sweeps WHERE name LIKE 'Year-of-use grid%'"))[0].id;
	const ev = await c.form(`/programs/${programId}/year?/evaluate`, {
		name: 'Restart check',
		climateId: String(climateId),
		patternId: String(patternId),
		sweepId: String(sweepId),
		fixedLeadTime_min: '30',
		fixedSetpoint_C: '30',
		fixedBelowAmbient_C: '',
		fleetSize: '1'
	});
	expect(ev.status).toBe(303);
	evaluationId = Number(/year\/(\d+)$/.exec(ev.headers.get('location')!)![1]);
}, 300_000);
afterAll(async () => {
	gate?.open();
	await first?.stop();
	await second?.stop();
});

describe('exact year-of-use run across a SIGKILL', () => {
	it('should finish after a restart with every chunk stored once', async () => {
		const c = await signedIn(first!);
		expect((await c.form(`/programs/${programId}/year/${evaluationId}?/exact`, { mode: 'exact' })).status).toBe(303);
		const held = await waitFor('the first chunk stored', async () => {
			const r = await runOf();
			return r.chunks_done >= 1 ? r : null;
		});
		expect(held.chunk_count).toBeGreaterThanOrEqual(2); // baseline and the fixed rule at least
		expect(held.chunks_done).toBe(1); // the gate holds chunk 1 in the worker

		const exited = new Promise((r) => first!.proc.once('exit', r));
		first!.proc.kill('SIGKILL');
		await exited;
		first = null;

		gate.open();
		second = await startApp({ dataDir, seed: false, env: env() });
		const done = await waitFor('the exact run finished after the restart', async () => {
			const r = await runOf();
			if (r.status === 'failed') throw new Error(`exact run failed: ${r.failure_reason}`);
			return r.status === 'done' ? r : null;
		});
		const chunks = await queryDb<{ chunk_index: number }>(dataDir, 'SELECT chunk_index FROM year_exact_chunks WHERE run_id = ? ORDER BY chunk_index', [done.id]);
		expect(chunks.map((x) => x.chunk_index)).toEqual(Array.from({ length: done.chunk_count }, (_, i) => i));
		expect(done.chunks_done).toBe(done.chunk_count);

		const exact = JSON.parse(done.result!);
		const lookup = JSON.parse((await queryDb<{ result: string }>(dataDir, 'SELECT result FROM year_evaluations WHERE id = ?', [evaluationId]))[0].result);
		for (const kind of ['fixed', 'table']) {
			const x = exact.policies.find((p: { kind: string }) => p.kind === kind);
			const l = lookup.policies.find((p: { kind: string }) => p.kind === kind);
			expect(Math.abs(x.timeSaved_s - l.timeSaved_s)).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(l.timeSaved_s)));
			expect(Math.abs(x.energy_Wh - l.energy_Wh)).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(l.energy_Wh)));
		}
	});
});
