/**
 * What goes wrong on the queue, on a real redis-server with the in-process worker:
 *  - a chunk that fails every attempt (3, with back-off) fails its sweep with the engine's reason;
 *  - an engineer cancels a running sweep: its remaining jobs are withdrawn, late results discarded;
 *  - Redis loses every key mid-sweep (FLUSHALL, like a server replaced without its data): the
 *    periodic reconciliation re-enqueues what the database still expects, and every point is
 *    stored exactly once.
 * The worker runs behind the chunk gate, so the cancel and the FLUSHALL land mid-sweep on purpose.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { Redis } from 'ioredis';

process.env.PARETHERM_DATA_DIR = fs.mkdtempSync(path.join(os.tmpdir(), 'paretherm-recovery-'));
process.env.PARETHERM_QUEUE_PREFIX = `precover${process.pid}`;
process.env.PARETHERM_JOB_BACKOFF_MS = '100';
process.env.PARETHERM_RECONCILE_MS = '500';
process.env.PARETHERM_JOB_LOCK_MS = '2000';
const { ChunkGate } = await import('../helpers/chunk-gate');
const gate = ChunkGate.create('open', process.env.PARETHERM_DATA_DIR);
process.env.PARETHERM_CHUNK_GATE = gate.file;

const { startTestRedis, seedSweepProgram, smallSweepRequest, waitFor, sleep } = await import('../helpers/sweeps');
const { Sweep, SweepPoint, SweepChunk } = await import('../../src/lib/server/db/models/index');
const { createSweep, cancelSweep } = await import('../../src/lib/server/sweeps/service');
const { setActiveQueue, activeQueue } = await import('../../src/lib/server/sweeps/registry');
const { chunkJobId } = await import('../../src/lib/server/queue/names');

describe('sweep recovery on a real Redis', () => {
	let redis: Awaited<ReturnType<typeof startTestRedis>>;
	let programId: number;
	let stop: () => Promise<void>;

	beforeAll(async () => {
		redis = await startTestRedis();
		process.env.REDIS_URL = redis.url;
		programId = await seedSweepProgram('Recovery');
		const runtime = await import('../../src/lib/server/sweeps/runtime');
		await runtime.startSweepRuntime({ inProcessWorker: true, threads: 1 });
		stop = runtime.stopSweepRuntime;
	}, 240_000);

	afterAll(async () => {
		await stop?.();
		await redis?.stop();
		fs.rmSync(process.env.PARETHERM_DATA_DIR!, { recursive: true, force: true });
	});

	async function finished(sweep: InstanceType<typeof Sweep>, timeout_ms = 180_000) {
		return waitFor(`sweep ${sweep.id} to end`, async () => {
			await sweep.reload();
			return ['done', 'failed', 'cancelled'].includes(sweep.status) ? sweep.status : null;
		}, timeout_ms);
	}

	it('should fail the sweep with the engine’s reason once a chunk has used its 3 attempts', async () => {
		// Store the sweep while no queue is active, spoil its input snapshot (as if the engine
		// rejected it), then let reconciliation enqueue it.
		const queue = activeQueue()!;
		setActiveQueue(null);
		const sweep = await createSweep(programId, null, smallSweepRequest({ ambients_C: [0], leadTimes_s: [0, 300], setpoints_C: [25], chunkSize: 3 }));
		setActiveQueue(queue);
		const inputs = JSON.parse(sweep.inputs);
		inputs.cells.nmc.data.electrodeArea_m2 = -1;
		await Sweep.update({ inputs: JSON.stringify(inputs) }, { where: { id: sweep.id } });

		expect(await finished(sweep)).toBe('failed');
		expect(sweep.failure_reason).toMatch(/^Chunk 1 of 1 \(3 simulations from scenario 0\) failed after 3 attempts: /);
		expect(sweep.failure_reason).toMatch(/electrode area -1 m² is outside the accepted range/);
		expect(sweep.failure_reason).toMatch(/scenario 0 \(ambient 0\.0 °C/);
		expect(await SweepPoint.count({ where: { sweep_id: sweep.id } })).toBe(0);
		const job = await queue.getJob(chunkJobId(sweep.id, sweep.queue_token, 0));
		expect(job?.attemptsMade ?? 3).toBe(3);
	}, 300_000);

	it('should withdraw the remaining jobs of a cancelled sweep and discard late results', async () => {
		const queue = activeQueue()!;
		gate.allow(1); // held on chunk 1 of 13 (in progress) until the cancel is in
		const sweep = await createSweep(programId, null, smallSweepRequest({ leadTimes_s: [0, 200, 400, 600], chunkSize: 2 }));
		await waitFor('a first stored chunk', async () => (await sweep.reload()).chunks_done >= 1 || null, 240_000);
		expect(await cancelSweep(sweep.id)).toBe(true);
		gate.open();
		// Every job of the sweep leaves Redis: waiting ones at once, a running one when it ends.
		await waitFor('the sweep’s jobs to leave the queue', async () => {
			for (let i = 0; i < sweep.chunk_count; i++) if (await queue.getJob(chunkJobId(sweep.id, sweep.queue_token, i))) return null;
			return true;
		}, 120_000, 100);
		await sweep.reload();
		expect(sweep.status).toBe('cancelled');
		const stored = await SweepPoint.count({ where: { sweep_id: sweep.id } });
		expect(stored).toBe(2); // the one chunk stored before the cancel; the held one was skipped
		await sleep(1000);
		expect(await SweepPoint.count({ where: { sweep_id: sweep.id } })).toBe(stored);
	}, 300_000);

	it('should re-enqueue what Redis lost and store every point exactly once', async () => {
		gate.allow(2); // held on chunk 2 of 13 until Redis has lost everything
		const sweep = await createSweep(programId, null, smallSweepRequest({ leadTimes_s: [0, 200, 400, 600], chunkSize: 2 }));
		await waitFor('two stored chunks', async () => (await sweep.reload()).chunks_done >= 2 || null, 240_000);
		const client = new Redis(redis.url);
		await client.flushall();
		client.disconnect();
		expect((await sweep.reload()).status).toBe('running');
		gate.open();
		expect(await finished(sweep, 240_000)).toBe('done');
		const points = await SweepPoint.findAll({ where: { sweep_id: sweep.id } });
		expect(points).toHaveLength(sweep.simulation_count);
		expect(new Set(points.map((p) => `${p.scenario_index}/${p.strategy_index}`)).size).toBe(sweep.simulation_count);
		expect(await SweepChunk.count({ where: { sweep_id: sweep.id } })).toBe(sweep.chunk_count);
	}, 360_000);
});
