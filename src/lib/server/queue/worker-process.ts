/**
 * The web app's own sweep worker, run as a supervised child process (the compiled
 * build/worker/index.mjs, the same program as `npm run worker`) at a lower OS priority than the
 * web process, so simulations never take a core away from a request that is waiting for one.
 *
 * The child reports { type: 'ready' } over its IPC channel once it consumes the queue and exits
 * when that channel closes, so it never outlives this process, even after a SIGKILL. If it dies on
 * its own it is started again after a back-off (1 s, doubling to 30 s); BullMQ retries the chunk
 * it was computing once the lock expires.
 */
import { fork, type ChildProcess } from 'node:child_process';
import { compiledFile } from './compiled';
import type { RedisTarget } from './connection';
import { defaultThreadCount } from './thread-pool';
import { config, parseConfig, type Env } from '../config';

export interface WorkerProcessOptions {
	target: RedisTarget;
	threads?: number;
	/** Nice value (0–19) of the child and its threads; default PARETHERM_WORKER_NICE or 10. */
	nice?: number;
	log?: (msg: string) => void;
	/** How long to wait for the first start, ms (default 60 s). */
	startTimeout_ms?: number;
	/** Drop the child's standard output (its per-chunk log); errors still show. */
	quiet?: boolean;
}

export interface WorkerProcessHandle {
	workerId: string;
	threads: number;
	nice: number;
	/** The running child's pid (null between a crash and its restart). */
	pid(): number | null;
	/** SIGTERM (finish running chunks, up to `timeout_ms`), then SIGKILL. */
	close(timeout_ms?: number): Promise<void>;
}

/** The web app's own worker child runs at nice 10 unless PARETHERM_WORKER_NICE says otherwise. */
export function defaultWorkerNice(env?: Env): number {
	return (env ? parseConfig(env) : config()).workerNice ?? 10;
}

function redisEnv(target: RedisTarget): Record<string, string | undefined> {
	if (target.kind === 'socket') return { REDIS_SOCKET: target.path, REDIS_URL: undefined };
	if (target.kind === 'tcp') return { REDIS_URL: `redis://${target.host}:${target.port}`, REDIS_SOCKET: undefined };
	return { REDIS_URL: target.url, REDIS_SOCKET: undefined };
}

export async function startWorkerProcess(opts: WorkerProcessOptions): Promise<WorkerProcessHandle> {
	const log = opts.log ?? ((m: string) => console.log(`[paretherm] ${m}`));
	const entry = await compiledFile('index');
	const threads = opts.threads ?? defaultThreadCount();
	const nice = opts.nice ?? defaultWorkerNice();
	const env: NodeJS.ProcessEnv = { ...process.env };
	for (const [k, v] of Object.entries({ ...redisEnv(opts.target), PARETHERM_WORKER_THREADS: String(threads), PARETHERM_WORKER_NICE: String(nice) })) {
		if (v === undefined) delete env[k];
		else env[k] = v;
	}

	let child: ChildProcess | null = null;
	let stopping = false;
	let restartDelay_ms = 1_000;
	let restartTimer: NodeJS.Timeout | null = null;
	let workerId = '';

	/** Start one child; resolves when it is ready, rejects when it exits before that. */
	const spawnOnce = (): Promise<void> =>
		new Promise<void>((resolve, reject) => {
			// Plain node (no loader flags of a parent under tsx); output goes where ours goes.
			const proc = fork(entry, [], { env, execArgv: [], stdio: ['ignore', opts.quiet ? 'ignore' : 'inherit', 'inherit', 'ipc'] });
			child = proc;
			let ready = false;
			proc.on('message', (m: { type?: string; workerId?: string }) => {
				if (m?.type !== 'ready' || ready) return;
				ready = true;
				workerId = m.workerId ?? `pid ${proc.pid}`;
				restartDelay_ms = 1_000;
				resolve();
			});
			proc.once('error', (e) => {
				if (!ready) reject(e);
			});
			proc.once('exit', (code, signal) => {
				if (child === proc) child = null;
				if (!ready) return reject(new Error(`the worker process exited during start-up (${signal ?? `code ${code}`}); see its output above`));
				if (stopping) return;
				log(`sweep worker process ${proc.pid} exited (${signal ?? `code ${code}`}); starting another in ${restartDelay_ms / 1000} s`);
				scheduleRestart();
			});
		});

	const scheduleRestart = () => {
		restartTimer = setTimeout(() => {
			restartTimer = null;
			if (stopping) return;
			spawnOnce().catch((e) => {
				log(`sweep worker process did not start: ${(e as Error).message}`);
				restartDelay_ms = Math.min(30_000, restartDelay_ms * 2);
				scheduleRestart();
			});
		}, restartDelay_ms);
		restartTimer.unref();
	};

	const startTimeout_ms = opts.startTimeout_ms ?? 60_000;
	let timer: NodeJS.Timeout | undefined;
	try {
		await Promise.race([
			spawnOnce(),
			new Promise<never>((_, reject) => {
				timer = setTimeout(() => reject(new Error(`the worker process was not ready within ${startTimeout_ms / 1000} s`)), startTimeout_ms);
			})
		]);
	} catch (e) {
		stopping = true;
		(child as ChildProcess | null)?.kill('SIGKILL');
		throw e;
	} finally {
		clearTimeout(timer);
	}
	log(`sweep worker process ${(child as ChildProcess | null)?.pid} ready: ${threads} simulation thread(s) at nice ${nice}`);

	let closing: Promise<void> | null = null;
	return {
		get workerId() {
			return workerId;
		},
		threads,
		nice,
		pid: () => (child as ChildProcess | null)?.pid ?? null,
		close(timeout_ms = 30_000) {
			closing ??= (async () => {
				stopping = true;
				if (restartTimer) clearTimeout(restartTimer);
				const proc = child as ChildProcess | null;
				if (!proc || proc.exitCode !== null || proc.signalCode !== null) return;
				const exited = new Promise((r) => proc.once('exit', r));
				proc.kill('SIGTERM');
				const kill = setTimeout(() => proc.kill('SIGKILL'), timeout_ms + 5_000);
				await exited;
				clearTimeout(kill);
			})();
			return closing;
		}
	};
}
