/**
 * The sweep queue end to end on a REAL redis-server (BullMQ does not run on ioredis-mock): this
 * process is the web side (producer, result persistence), and two separate worker processes
 * (the compiled `npm run worker` program, one simulation thread each) share one sweep. Every grid point must be
 * computed exactly once, every chunk must report progress, and the sweep's progress must rise
 * monotonically to 100 %.
 *
 * The workers run behind the chunk gate: after 2 chunks each worker takes one more and is held,
 * so both of them compute part of the sweep and its progress is seen mid-way, whatever the timing.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { QueueEvents } from 'bullmq';

process.env.PARETHERM_DATA_DIR = fs.mkdtempSync(path.join(os.tmpdir(), 'paretherm-queue-'));
process.env.PARETHERM_IN_PROCESS_WORKER = '0';
process.env.PARETHERM_QUEUE_PREFIX = `ptest${process.pid}`;

const { startTestRedis, seedSweepProgram, smallSweepRequest, waitFor, ROOT } = await import('../helpers/sweeps');
const { ChunkGate } = await import('../helpers/chunk-gate');
const gate = ChunkGate.create(2, process.env.PARETHERM_DATA_DIR);
type TestRedis = Awaited<ReturnType<typeof startTestRedis>>;

interface WorkerProc {
	proc: ChildProcess;
	out: string;
	exit: Promise<number | null>;
}

function startWorker(redisUrl: string): WorkerProc {
	const proc = spawn(process.execPath, ['build/worker/index.mjs'], {
		cwd: ROOT,
		env: { ...process.env, REDIS_URL: redisUrl, PARETHERM_WORKER_THREADS: '1', ...gate.env },
		stdio: ['ignore', 'pipe', 'pipe']
	});
	const w: WorkerProc = { proc, out: '', exit: new Promise((r) => proc.once('exit', (code) => r(code))) };
	proc.stdout!.on('data', (d) => (w.out += d));
	proc.stderr!.on('data', (d) => (w.out += d));
	return w;
}

/** "sweep 3 chunk 7: 2 simulations in 61 ms (attempt 1)" lines of a worker's log. */
function computedChunks(log: string, sweepId: number): { chunk: number; simulations: number; attempt: number }[] {
	const re = new RegExp(`sweep ${sweepId} chunk (\\d+): (\\d+) simulations in \\d+ ms \\(attempt (\\d+)\\)`, 'g');
	return [...log.matchAll(re)].map((m) => ({ chunk: Number(m[1]), simulations: Number(m[2]), attempt: Number(m[3]) }));
}

describe('sweep queue with two worker processes', () => {
	let redis: TestRedis;
	let workers: WorkerProc[] = [];
	let events: QueueEvents;
	const progressByJob = new Map<string, { done: number; total: number }[]>();
	let stopRuntime: () => Promise<void>;

	beforeAll(async () => {
		redis = await startTestRedis();
		process.env.REDIS_URL = redis.url;
		workers = [startWorker(redis.url), startWorker(redis.url)];
		await waitFor('both workers to consume the queue', async () => workers.every((w) => /consuming/.test(w.out)), 120_000);

		const { QUEUE_PREFIX, SWEEP_QUEUE } = await import('../../src/lib/server/queue/names');
		events = new QueueEvents(SWEEP_QUEUE, { connection: { host: '127.0.0.1', port: Number(new URL(redis.url).port) }, prefix: QUEUE_PREFIX });
		events.on('progress', ({ jobId, data }) => {
			const list = progressByJob.get(jobId) ?? [];
			list.push(data as { done: number; total: number });
			progressByJob.set(jobId, list);
		});
		await events.waitUntilReady();

		const runtime = await import('../../src/lib/server/sweeps/runtime');
		await runtime.startSweepRuntime({ inProcessWorker: false });
		stopRuntime = runtime.stopSweepRuntime;
	}, 240_000);

	afterAll(async () => {
		await stopRuntime?.();
		await events?.close();
		for (const w of workers) if (w.proc.exitCode === null) w.proc.kill('SIGKILL');
		await redis?.stop();
		fs.rmSync(process.env.PARETHERM_DATA_DIR!, { recursive: true, force: true });
	});

	it('should compute every point exactly once, split between both workers, with progress rising to 100 %', async () => {
		const { createSweep } = await import('../../src/lib/server/sweeps/service');
		const { sweepStatus } = await import('../../src/lib/server/sweeps/results');
		const { Sweep, SweepChunk, SweepPoint } = await import('../../src/lib/server/db/models/index');
		const { chunkJobId } = await import('../../src/lib/server/queue/names');

		const programId = await seedSweepProgram('Queue test');
		// 2 ambients × 4 lead times × 3 set-points = 24 points + 2 baselines, 2 per chunk → 13 chunks.
		const sweep = await createSweep(programId, null, smallSweepRequest({ leadTimes_s: [0, 200, 400, 600], chunkSize: 2 }));
		expect(sweep.simulation_count).toBe(26);
		expect(sweep.chunk_count).toBe(13);

		const percents: number[] = [];
		const statuses: string[] = [];
		const look = async () => {
			await sweep.reload();
			const view = sweepStatus(sweep);
			percents.push(view.progress.percent);
			statuses.push(view.status);
			return view;
		};
		// Held: chunks 0 and 1 stored, each worker holding one more.
		await waitFor('two stored chunks, each worker holding one more', async () => (await look()).progress.chunksDone >= 2 && workers.every((w) => new RegExp(`sweep ${sweep.id} chunk \\d+: held by the chunk gate`).test(w.out)), 240_000, 20);
		expect(sweep.chunks_done).toBe(2);
		expect(statuses.at(-1)).toBe('running');
		gate.open();
		await waitFor(
			'the sweep to finish',
			async () => {
				const view = await look();
				return view.status === 'done' || view.status === 'failed' ? view : null;
			},
			240_000,
			10
		);
		expect(sweep.status, sweep.failure_reason ?? '').toBe('done');

		// Progress: monotone, ends at 100, and was seen in between (not a jump from 0 to 100).
		for (let i = 1; i < percents.length; i++) expect(percents[i]).toBeGreaterThanOrEqual(percents[i - 1]);
		expect(percents.at(-1)).toBe(100);
		expect(percents.some((p) => p > 0 && p < 100)).toBe(true);
		expect(statuses).toContain('running');

		// Stored exactly once.
		const points = await SweepPoint.findAll({ where: { sweep_id: sweep.id } });
		expect(points).toHaveLength(26);
		expect(new Set(points.map((p) => `${p.scenario_index}/${p.strategy_index}`)).size).toBe(26);
		const chunks = await SweepChunk.findAll({ where: { sweep_id: sweep.id } });
		expect(chunks.map((c) => c.chunk_index).sort((a, b) => a - b)).toEqual([...Array(13).keys()]);
		expect(chunks.every((c) => c.attempt === 1)).toBe(true);

		// Computed exactly once, by the worker logs: each chunk appears once across both workers.
		await waitFor('every chunk in the worker logs', async () => workers.flatMap((w) => computedChunks(w.out, sweep.id)).length >= 13, 60_000);
		const perWorker = workers.map((w) => computedChunks(w.out, sweep.id));
		const all = perWorker.flat();
		expect(all.map((c) => c.chunk).sort((a, b) => a - b)).toEqual([...Array(13).keys()]);
		expect(all.reduce((s, c) => s + c.simulations, 0)).toBe(26);
		expect(perWorker[0].length).toBeGreaterThan(0);
		expect(perWorker[1].length).toBeGreaterThan(0);
		expect(new Set(chunks.map((c) => c.worker)).size).toBe(2);

		// Every chunk reported progress, ending with all of its simulations done.
		for (let i = 0; i < 13; i++) {
			const list = progressByJob.get(chunkJobId(sweep.id, sweep.queue_token, i)) ?? [];
			expect(list.length, `progress of chunk ${i}`).toBeGreaterThan(0);
			expect(list.at(-1)!.done).toBe(list.at(-1)!.total);
		}

		// Completed jobs are removed once stored; the fronts are there.
		const fresh = await Sweep.findByPk(sweep.id);
		expect(fresh!.chunks_done).toBe(13);
		const { sweepFronts } = await import('../../src/lib/server/sweeps/results');
		const fronts = await sweepFronts(fresh!);
		expect(fronts.scenarios).toHaveLength(2);
		expect(fronts.scenarios.every((s) => s.seriesStatus === 'stored')).toBe(true);
	}, 360_000);

	it('should close the workers gracefully on SIGTERM', async () => {
		for (const w of workers) w.proc.kill('SIGTERM');
		const codes = await Promise.all(workers.map((w) => w.exit));
		expect(codes).toEqual([0, 0]);
		for (const w of workers) expect(w.out).toMatch(/SIGTERM: finishing running chunks/);
	}, 240_000);
});
