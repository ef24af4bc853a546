/**
 * `npm run worker`: a sweep worker process. It needs only Redis — jobs carry their inputs and
 * return results, and the web process stores them — so any number of these can run on any
 * machine that reaches the web app's Redis.
 *
 * Environment:
 *   REDIS_URL                 redis://host:6379 (or unix:///path/to/redis.sock) — the web app's Redis.
 *                             Unset: the private server of a local web app (<PARETHERM_DATA_DIR>/redis/redis.sock).
 *   PARETHERM_WORKER_THREADS  simulation threads (default: the number of CPU cores).
 */
import fs from 'node:fs';
import path from 'node:path';
import { targetFromEnv, describeTarget, type RedisTarget } from '../src/lib/server/queue/connection';
import { startSweepWorker } from '../src/lib/server/queue/worker-runtime';

function resolveTarget(): RedisTarget {
	const fromEnv = targetFromEnv();
	if (fromEnv) return fromEnv;
	const socket = path.resolve(process.env.PARETHERM_DATA_DIR ?? './data', 'redis', 'redis.sock');
	if (fs.existsSync(socket)) return { kind: 'socket', path: socket };
	console.error(
		'[paretherm worker] No Redis to work for. Set REDIS_URL to the Redis server the web app uses ' +
			'(for example REDIS_URL=redis://10.0.0.5:6379 npm run worker), or start the web app first ' +
			`with the same PARETHERM_DATA_DIR so its private Redis socket exists (looked for ${socket}).`
	);
	process.exit(2);
}

async function main() {
	const target = resolveTarget();
	console.log(`[paretherm worker] connecting to ${describeTarget(target)}`);
	const handle = await startSweepWorker({ target });

	let stopping = false;
	const stop = (signal: string) => {
		if (stopping) {
			console.log(`[paretherm worker] ${signal} again: exiting now`);
			process.exit(1);
		}
		stopping = true;
		console.log(`[paretherm worker] ${signal}: finishing running chunks, then exiting`);
		handle
			.close()
			.then(() => process.exit(0))
			.catch((e) => {
				console.error('[paretherm worker] error while closing:', e);
				process.exit(1);
			});
	};
	process.on('SIGINT', () => stop('SIGINT'));
	process.on('SIGTERM', () => stop('SIGTERM'));
}

main().catch((e) => {
	console.error('[paretherm worker] failed to start:', e instanceof Error ? e.message : e);
	process.exit(1);
});
