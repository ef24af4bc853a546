/**
 * Background services the web process owns: the sweep runtime (Redis, queue, in-process worker,
 * result persistence) and the mail outbox. Started once from `hooks.server.ts` `init`.
 * Set PARETHERM_NO_RUNTIME=1 to serve pages without them (used by some tests).
 */
import { startSweepRuntime } from './sweeps/runtime';
import { startMailDispatcher } from './mail/index';

let started: Promise<void> | null = null;

export function startRuntime(): Promise<void> {
	if (process.env.PARETHERM_NO_RUNTIME === '1') return Promise.resolve();
	started ??= (async () => {
		startMailDispatcher(); // first: mail works even when the sweep runtime cannot start
		await startSweepRuntime();
	})();
	return started;
}
