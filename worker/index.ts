/**
 * `npm run worker`: a sweep worker process. It needs only Redis — jobs carry their inputs and
 * return results, and the web process stores them — so any number of these can run on any
 * machine that reaches the web app's Redis.
 *
 * Environment:
 *   REDIS_URL                 redis://host:6379 (or unix:///path/to/redis.sock) — the web app's Redis.
 *                             Unset: the private server of a local web app (<PARETHERM_DATA_DIR>/redis/redis.sock).
 *   PARETHERM_WORKER_THREADS  simulation threads (default: the number of CPU cores).
 *   PARETHERM_WORKER_NICE     OS priority (nice, 0–19) of the process and its threads (default 0;
 *                             the web app starts its own worker child at 10).
 *
 * Runs compiled: `npm run build` writes build/worker/index.mjs (scripts/build-workers.mjs), which
 * `npm run worker` starts. When started by the web app (an IPC channel to it exists) it reports
 * { type: 'ready' } once it consumes the queue, and exits when that channel closes (the web
 * process is gone, even by SIGKILL), so it never outlives the app that owns it.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { config, ConfigError } from '../src/lib/server/config';
import { targetFromEnv, describeTarget, type RedisTarget } from '../src/lib/server/queue/connection';
import { startSweepWorker, type SweepWorkerHandle } from '../src/lib/server/queue/worker-runtime';

function resolveTarget(): RedisTarget {
	const fromEnv = targetFromEnv();
	if (fromEnv) return fromEnv;
	const socket = path.join(config().dataDir, 'redis', 'redis.sock');
	if (fs.existsSync(socket)) return { kind: 'socket', path: socket };
	console.error(
		'[paretherm worker] No Redis to work for. Set REDIS_URL to the Redis server the web app uses ' +
			'(for example REDIS_URL=redis://10.0.0.5:6379 npm run worker), or start the web app first ' +
			`with the same PARETHERM_DATA_DIR so its private Redis socket exists (looked for ${socket}).`
	);
	process.exit(2);
}

/** Lower this process's priority before any thread starts (threads inherit it on Linux). */
function lowerPriority(): number {
	const wanted = config().workerNice ?? 0;
	try {
		if (wanted > os.getPriority(0)) os.setPriority(0, wanted);
		return os.getPriority(0);
	} catch (e) {
		console.error(`[paretherm worker] could not lower the priority to nice ${wanted}: ${(e as Error).message}`);
		return wanted;
	}
}

let handle: SweepWorkerHandle | null = null;
let stopping = false;

function stop(signal: string): void {
	if (stopping) {
		console.log(`[paretherm worker] ${signal} again: exiting now`);
		process.exit(1);
	}
	stopping = true;
	if (!handle) process.exit(0); // still starting: nothing taken yet
	console.log(`[paretherm worker] ${signal}: finishing running chunks, then exiting`);
	handle
		.close()
		.then(() => process.exit(0))
		.catch((e) => {
			console.error('[paretherm worker] error while closing:', e);
			process.exit(1);
		});
}

async function main() {
	process.on('SIGINT', () => stop('SIGINT'));
	process.on('SIGTERM', () => stop('SIGTERM'));
	// Started by the web app: its exit (even a SIGKILL) closes the channel. Running chunks are
	// dropped; their locks expire and another worker retries them.
	if (process.send)
		process.once('disconnect', () => {
			console.log('[paretherm worker] the web process that started this worker is gone: exiting');
			setTimeout(() => process.exit(0), 3_000).unref();
			if (!handle) process.exit(0);
			void handle.close(0).finally(() => process.exit(0));
		});

	const nice = lowerPriority();
	const target = resolveTarget();
	console.log(`[paretherm worker] connecting to ${describeTarget(target)}${nice ? ` (nice ${nice})` : ''}`);
	const started = await startSweepWorker({ target, nice });
	handle = started;
	if (stopping) return void started.close().finally(() => process.exit(0));
	if (process.connected) process.send?.({ type: 'ready', workerId: started.workerId, threads: started.threads });
}

main().catch((e) => {
	console.error('[paretherm worker] failed to start:', e instanceof Error ? e.message : e);
	process.exit(e instanceof ConfigError ? 2 : 1);
});
