/**
 * Background services the web process owns: the sweep runtime (Redis, queue, in-process worker,
 * result persistence), the mail outbox, and the sign-in throttle's counters on the same Redis.
 * Started once from `hooks.server.ts` `init`. Set PARETHERM_NO_RUNTIME=1 to serve pages without
 * them (used by some tests; the sign-in throttle then counts in memory).
 */
import { startSweepRuntime } from './sweeps/runtime';
import { startMailDispatcher } from './mail/index';
import { createRedisClient } from './queue/connection';
import { useThrottleStore } from './auth/throttle';

let started: Promise<void> | null = null;

export function startRuntime(): Promise<void> {
	if (process.env.PARETHERM_NO_RUNTIME === '1') return Promise.resolve();
	started ??= (async () => {
		startMailDispatcher(); // first: mail works even when the sweep runtime cannot start
		const rt = await startSweepRuntime();
		// A client of its own that fails fast instead of queueing commands while Redis is away,
		// so a sign-in never waits on Redis (the throttle falls back to memory meanwhile). A Redis
		// that is connected but frozen (stopped, swapping) never answers: the command timeout
		// turns that into an error too, or a sign-in would hang until the client gives up.
		const redis = createRedisClient(rt.target, { maxRetriesPerRequest: 1, enableOfflineQueue: false, commandTimeout: 1_000 });
		redis.on('error', () => {});
		useThrottleStore(redis);
		process.once('sveltekit:shutdown' as never, () => {
			useThrottleStore(null);
			redis.disconnect();
		});
	})();
	return started;
}
