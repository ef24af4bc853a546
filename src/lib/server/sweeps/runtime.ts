/**
 * Starting and stopping everything the web process owns for sweeps:
 *   1. the database (migrations),
 *   2. Redis — REDIS_URL, or a private supervised redis-server under <PARETHERM_DATA_DIR>/redis,
 *   3. the queue producer and its event listener (stores results as chunks complete),
 *   4. a reconciliation pass (jobs finished or lost while the web process was down), repeated
 *      every PARETHERM_RECONCILE_MS (default 15 s) as a safety net for missed events,
 *   5. the app's own worker, unless workers run elsewhere.
 *
 * Own worker: on by default when REDIS_URL is unset (the newcomer's single `npm start`), off by
 * default with REDIS_URL (separate `npm run worker` processes do the computing).
 * PARETHERM_IN_PROCESS_WORKER=1 or =0 overrides either default. It runs as a child process at a
 * lower OS priority (PARETHERM_WORKER_NICE, default 10), so requests are answered first while it
 * computes; PARETHERM_WORKER_PROCESS=0 keeps it in this process's threads instead.
 *
 * Everything here uses relative imports and reads settings through ../config.ts (process.env outside
 * SvelteKit), so scripts and tests run it under tsx.
 */
import { dataDir, ensureDb } from '../db/index';
import { resolveRedis, describeTarget, type RedisTarget } from '../queue/connection';
import type { PrivateRedis } from '../queue/redis-server';
import { SweepQueue } from '../queue/producer';
import { startSweepWorker } from '../queue/worker-runtime';
import { startWorkerProcess } from '../queue/worker-process';
import { activeQueue, recordProgress, setActiveQueue } from './registry';
import { collectJob, handleJobFailed, reconcileSweeps } from './service';
import { closeSeriesPool } from './results';
import { config, parseConfig, type Env } from '../config';
import { collectYearJob, handleYearJobFailed, isYearJob, reconcileYearRuns } from '../year-exact';

/** The app's own worker, in a child process or in this process. */
export interface LocalWorker {
	workerId: string;
	threads: number;
	/** 'process': a child process; 'threads': this process's threads. */
	mode: 'process' | 'threads';
	close(timeout_ms?: number): Promise<void>;
}

export interface SweepRuntime {
	target: RedisTarget;
	queue: SweepQueue;
	privateRedis: PrivateRedis | null;
	worker: LocalWorker | null;
	stop(): Promise<void>;
}

export interface SweepRuntimeOptions {
	/** Run the app's own worker (default: see the module comment). */
	inProcessWorker?: boolean;
	/** Run it as a child process (default true, PARETHERM_WORKER_PROCESS=0 turns it off). */
	workerProcess?: boolean;
	/** Its simulation threads (default PARETHERM_WORKER_THREADS or the CPU count). */
	threads?: number;
	/** Its nice value when it is a child process (default PARETHERM_WORKER_NICE or 10). */
	workerNice?: number;
	/** Drop the child process's per-chunk log (benchmarks). */
	quietWorker?: boolean;
	reconcileInterval_ms?: number;
}

const log = (m: string) => console.log(`[paretherm] ${m}`);

// Kept on globalThis: in `vite dev` server modules are re-evaluated after edits, and a second
// runtime would start a second redis-server on the same files.
const holder = globalThis as typeof globalThis & { __parethermSweepRuntime?: Promise<SweepRuntime> | null };
let current: Promise<SweepRuntime> | null = holder.__parethermSweepRuntime ?? null;
function setCurrent(p: Promise<SweepRuntime> | null): void {
	current = p;
	holder.__parethermSweepRuntime = p;
}

export function inProcessWorkerWanted(env?: Env): boolean {
	const c = env ? parseConfig(env) : config();
	return c.inProcessWorker ?? !c.redis.url;
}

export function workerProcessWanted(env?: Env): boolean {
	return (env ? parseConfig(env) : config()).workerProcess;
}

const workerLog = (m: string) => console.log(`[paretherm worker] ${m}`);

async function startLocalWorker(target: RedisTarget, opts: SweepRuntimeOptions): Promise<LocalWorker> {
	if (opts.workerProcess ?? workerProcessWanted()) {
		const h = await startWorkerProcess({ target, threads: opts.threads, nice: opts.workerNice, quiet: opts.quietWorker, log });
		return { get workerId() { return h.workerId; }, threads: h.threads, mode: 'process', close: (t) => h.close(t) };
	}
	const h = await startSweepWorker({ target, threads: opts.threads, log: workerLog });
	return { workerId: h.workerId, threads: h.threads, mode: 'threads', close: (t) => h.close(t) };
}

/** Start the sweep runtime once per process (later calls return the same runtime). */
export function startSweepRuntime(opts: SweepRuntimeOptions = {}): Promise<SweepRuntime> {
	if (!current)
		setCurrent(
			start(opts).catch((e) => {
				setCurrent(null);
				throw e;
			})
		);
	return current!;
}

/** The started runtime, or null. */
export async function sweepRuntime(): Promise<SweepRuntime | null> {
	return current ? current.catch(() => null) : null;
}

export async function stopSweepRuntime(): Promise<void> {
	const rt = await sweepRuntime();
	setCurrent(null);
	await rt?.stop();
}

/** Start the app's own worker on the runtime's Redis (the runtime must be started). */
export async function startInProcessWorker(opts: Omit<SweepRuntimeOptions, 'inProcessWorker' | 'reconcileInterval_ms'> = {}): Promise<LocalWorker> {
	const rt = await sweepRuntime();
	if (!rt) throw new Error('Start the sweep runtime (startSweepRuntime) before its own worker.');
	if (rt.worker) return rt.worker;
	rt.worker = await startLocalWorker(rt.target, opts);
	return rt.worker;
}

async function start(opts: SweepRuntimeOptions): Promise<SweepRuntime> {
	await ensureDb();
	const { target, privateServer } = await resolveRedis({ dataDir: dataDir(), log });
	if (!privateServer) log(`sweep queue on ${describeTarget(target)}`);
	const queue = new SweepQueue(target);
	const wait_ms = config().redisWait_ms;
	const reached = await Promise.race([
		queue.ready().then(() => true),
		new Promise<false>((r) => setTimeout(() => r(false), wait_ms).unref())
	]);
	if (!reached) {
		await queue.close().catch(() => {});
		await privateServer?.stop();
		throw new Error(
			`Cannot reach the sweep queue's Redis at ${describeTarget(target)} within ${wait_ms / 1000} s. ` +
				(privateServer
					? `See ${privateServer.logFile}.`
					: 'Check REDIS_URL (host, port, password) and that the server is running, or unset REDIS_URL to let Paretherm run its own redis-server.')
		);
	}

	// Events may arrive in any order and more than once; every handler below is idempotent.
	const safely = (what: string, p: Promise<unknown>) => p.catch((e) => log(`${what}: ${(e as Error).message}`));
	await queue.listen({
		onCompleted: (jobId) => void safely(`storing the result of ${jobId}`, isYearJob(jobId) ? collectYearJob(queue, jobId) : collectJob(queue, jobId)),
		onFailed: (jobId, reason) =>
			void safely(`handling the failure of ${jobId}`, isYearJob(jobId) ? handleYearJobFailed(queue, jobId, reason) : handleJobFailed(queue, jobId, reason)),
		onProgress: (jobId, p) => recordProgress(jobId, p)
	});
	setActiveQueue(queue);

	const report = await reconcileSweeps(queue);
	if (report.sweeps > 0)
		log(`reconciled ${report.sweeps} unfinished sweep(s): ${report.collected} chunk result(s) collected, ${report.requeued} job(s) re-queued`);
	const years = await reconcileYearRuns(queue);
	if (years.runs > 0)
		log(`reconciled ${years.runs} unfinished exact year run(s): ${years.collected} chunk result(s) collected, ${years.requeued} job(s) re-queued`);

	const intervalMs = opts.reconcileInterval_ms ?? config().reconcile_ms;
	let reconciling = false;
	const timer = setInterval(() => {
		if (reconciling) return;
		reconciling = true;
		safely('periodic reconciliation', reconcileSweeps(queue).then(() => reconcileYearRuns(queue))).finally(() => (reconciling = false));
	}, intervalMs);
	timer.unref();

	const rt: SweepRuntime = {
		target,
		queue,
		privateRedis: privateServer,
		worker: null,
		async stop() {
			clearInterval(timer);
			if (activeQueue() === queue) setActiveQueue(null);
			await rt.worker?.close();
			await closeSeriesPool();
			await queue.close();
			await privateServer?.stop();
		}
	};
	if (opts.inProcessWorker ?? inProcessWorkerWanted()) {
		try {
			rt.worker = await startLocalWorker(target, opts);
		} catch (e) {
			await rt.stop().catch(() => {});
			throw e;
		}
	} else {
		log('no in-process sweep worker: start `npm run worker` processes against the same Redis');
	}

	// adapter-node emits this on SIGINT/SIGTERM after the HTTP server has closed.
	process.once('sveltekit:shutdown' as never, () => void stopSweepRuntime());
	return rt;
}
