/**
 * The BullMQ consumer of every worker process (worker/index.ts: `npm run worker` and the web
 * app's own worker child) and of a worker kept inside a process (tests, benchmarks with
 * PARETHERM_WORKER_PROCESS=0). Compute runs in a SimulationPool of worker threads; the BullMQ worker's
 * concurrency equals the thread count so every core has a chunk while this event loop stays free
 * to renew job locks (a blocked loop would let BullMQ think the job stalled and hand it to
 * another worker, computing it twice).
 */
import os from 'node:os';
import { WaitingError, Worker, type Job } from 'bullmq';
import type { Redis } from 'ioredis';
import { createRedisClient, type RedisTarget } from './connection';
import type { ChunkJobData, ChunkJobResult, ComputedPoint, JobProgress, SeriesJobData, SeriesJobResult, YearChunkJobData, YearChunkJobResult } from './jobs';
import { JOB_FRONT_SERIES, JOB_SWEEP_CHUNK, JOB_YEAR_CHUNK, QUEUE_PREFIX, SWEEP_QUEUE, cancelledKey, yearCancelledKey } from './names';
import { SimulationPool, defaultThreadCount } from './thread-pool';
import { passChunkGate } from './chunk-gate';
import { config } from '../config';

export interface SweepWorkerOptions {
	target: RedisTarget;
	/** Worker threads (and BullMQ concurrency). Default: PARETHERM_WORKER_THREADS or the CPU count. */
	threads?: number;
	/** How long a job lock lasts without renewal; a dead worker's chunk is retried after about this. */
	lockDuration_ms?: number;
	/** How often this worker looks for stalled jobs of dead workers. */
	stalledInterval_ms?: number;
	log?: (msg: string) => void;
	/** Label written into results (default hostname:pid). */
	workerId?: string;
	/** Nice value of the simulation threads (default PARETHERM_WORKER_NICE or 0). */
	nice?: number;
}

export interface SweepWorkerHandle {
	workerId: string;
	threads: number;
	/** The BullMQ worker (null when it runs in a child process: worker-process.ts). */
	worker: Worker | null;
	/** Finish the chunks in progress (up to `timeout_ms`), then stop threads and connections. */
	close(timeout_ms?: number): Promise<void>;
}

/** Lock and stall timings; env overrides let the restart test run in seconds, not minutes. */
export function lockSettings(opts: { lockDuration_ms?: number; stalledInterval_ms?: number } = {}) {
	const lockDuration = opts.lockDuration_ms ?? config().jobLock_ms ?? 30_000;
	const stalledInterval = opts.stalledInterval_ms ?? config().stalledCheck_ms ?? Math.max(1_000, Math.round(lockDuration / 2));
	return { lockDuration, stalledInterval };
}

export async function startSweepWorker(opts: SweepWorkerOptions): Promise<SweepWorkerHandle> {
	const log = opts.log ?? ((m: string) => console.log(`[paretherm worker] ${m}`));
	const threads = opts.threads ?? defaultThreadCount();
	const workerId = opts.workerId ?? `${os.hostname()}:${process.pid}`;
	const nice = opts.nice ?? config().workerNice ?? 0;
	const pool = new SimulationPool(threads, { nice, log });
	await pool.ready();
	const connection = createRedisClient(opts.target);
	connection.on('error', (e) => log(`Redis connection error: ${e.message}`));
	const { lockDuration, stalledInterval } = lockSettings(opts);

	const isCancelled = async (redis: Redis, sweepId: number, token: string) => (await redis.exists(cancelledKey(sweepId, token))) === 1;

	let closing = false;
	const processor = async (job: Job, token?: string): Promise<ChunkJobResult | SeriesJobResult | YearChunkJobResult> => {
		let t0 = Date.now();
		const redis = (await worker.client) as unknown as Redis;
		// Progress is reported as {done,total}; throttled so a fast chunk does not flood Redis.
		let lastProgressAt = 0;
		const progress = (done: number, total: number) => {
			const now = Date.now();
			if (done < total && now - lastProgressAt < 200) return;
			lastProgressAt = now;
			job.updateProgress({ done, total } satisfies JobProgress).catch((e) => log(`progress update failed: ${e.message}`));
		};

		if (job.name === JOB_SWEEP_CHUNK) {
			const data = job.data as ChunkJobData;
			// Held by the chunk gate (PARETHERM_CHUNK_GATE, off by default)? A closing worker hands the chunk back without using an attempt.
			const gate = await passChunkGate(data.chunkIndex, () => closing, () => log(`sweep ${data.sweepId} chunk ${data.chunkIndex}: held by the chunk gate`));
			if (gate === 'stopped') {
				await job.moveToWait(token);
				throw new WaitingError();
			}
			t0 = Date.now();
			if (await isCancelled(redis, data.sweepId, data.queueToken))
				return { sweepId: data.sweepId, chunkIndex: data.chunkIndex, cancelled: true, points: [], worker: workerId, attempt: job.attemptsMade + 1, elapsed_ms: 0 };
			const points = await pool.run<ComputedPoint[]>({ kind: 'chunk', data }, progress);
			progress(points.length, points.length);
			const elapsed_ms = Date.now() - t0;
			log(`sweep ${data.sweepId} chunk ${data.chunkIndex}: ${points.length} simulations in ${elapsed_ms} ms (attempt ${job.attemptsMade + 1})`);
			return { sweepId: data.sweepId, chunkIndex: data.chunkIndex, cancelled: false, points, worker: workerId, attempt: job.attemptsMade + 1, elapsed_ms };
		}
		if (job.name === JOB_YEAR_CHUNK) {
			const data = job.data as YearChunkJobData;
			// The same gate as sweep chunks, so tests can hold an exact run mid-way.
			const gate = await passChunkGate(data.chunkIndex, () => closing, () => log(`year run ${data.runId} chunk ${data.chunkIndex}: held by the chunk gate`));
			if (gate === 'stopped') {
				await job.moveToWait(token);
				throw new WaitingError();
			}
			t0 = Date.now();
			const base = { runId: data.runId, chunkIndex: data.chunkIndex, worker: workerId, attempt: job.attemptsMade + 1 };
			if ((await redis.exists(yearCancelledKey(data.runId, data.queueToken))) === 1) return { ...base, cancelled: true, points: [], elapsed_ms: 0 };
			const chunk: ChunkJobData = { sweepId: data.runId, queueToken: data.queueToken, chunkIndex: data.chunkIndex, tasks: data.tasks, scenarios: data.scenarios, strategies: data.strategies };
			const points = await pool.run<ComputedPoint[]>({ kind: 'chunk', data: chunk }, progress);
			progress(points.length, points.length);
			const elapsed_ms = Date.now() - t0;
			log(`year run ${data.runId} chunk ${data.chunkIndex}: ${points.length} simulations in ${elapsed_ms} ms (attempt ${job.attemptsMade + 1})`);
			return { ...base, cancelled: false, points, elapsed_ms };
		}
		if (job.name === JOB_FRONT_SERIES) {
			const data = job.data as SeriesJobData;
			if (await isCancelled(redis, data.sweepId, data.queueToken))
				return { sweepId: data.sweepId, scenarioIndex: data.scenarioIndex, cancelled: true, series: [], worker: workerId, elapsed_ms: 0 };
			const series = await pool.run<{ pointId: number; gzipBase64: string }[]>({ kind: 'series', data }, progress);
			progress(series.length, series.length);
			const elapsed_ms = Date.now() - t0;
			log(`sweep ${data.sweepId} scenario ${data.scenarioIndex}: ${series.length} front time series in ${elapsed_ms} ms`);
			return { sweepId: data.sweepId, scenarioIndex: data.scenarioIndex, cancelled: false, series, worker: workerId, elapsed_ms };
		}
		// Throwing marks the job failed with this reason, which the web process shows on the sweep.
		throw new Error(`Unknown job “${job.name}” on the ${SWEEP_QUEUE} queue; this worker is older or newer than the web app.`);
	};

	const worker = new Worker(SWEEP_QUEUE, processor, {
		connection,
		prefix: QUEUE_PREFIX,
		concurrency: threads,
		lockDuration,
		stalledInterval,
		// A chunk whose worker died is retried twice before it counts as failed.
		maxStalledCount: 2,
		autorun: true
	});
	worker.on('error', (e) => log(`worker error: ${e.message}`));
	worker.on('failed', (job, err) => {
		if (job) log(`job ${job.id} failed (attempt ${job.attemptsMade} of ${job.opts.attempts ?? 1}): ${err.message}`);
	});
	await worker.waitUntilReady();
	const niceNote = pool.threads.some((t) => t.nice) ? ` at nice ${pool.threads.map((t) => t.nice ?? '?').join('/')}` : '';
	log(`worker ${workerId} consuming “${SWEEP_QUEUE}” with ${threads} simulation thread(s)${niceNote}`);

	let closed: Promise<void> | null = null;
	return {
		workerId,
		threads,
		worker,
		close(timeout_ms = 30_000) {
			closing = true;
			closed ??= (async () => {
				// Graceful: stop taking jobs and let running chunks finish; past the timeout, force.
				const graceful = worker.close();
				const timer = new Promise<'timeout'>((r) => setTimeout(() => r('timeout'), timeout_ms).unref());
				if ((await Promise.race([graceful.then(() => 'ok' as const), timer])) === 'timeout') {
					log(`chunks still running after ${timeout_ms} ms; stopping anyway (they will be retried)`);
					await worker.close(true);
				}
				await pool.close();
				connection.disconnect();
			})();
			return closed;
		}
	};
}
