/**
 * Process-wide state of the sweep runtime that request handlers need: the queue producer (null
 * until the runtime has started, or when it is disabled) and the latest progress each running
 * job reported. Kept apart from runtime.ts so the service can use it without an import cycle.
 */
import type { JobProgress } from '../queue/jobs';
import type { SweepQueue } from '../queue/producer';

// On globalThis so that `vite dev` re-evaluating this module does not forget the running queue.
const state = ((globalThis as typeof globalThis & { __parethermSweepRegistry?: { queue: SweepQueue | null; inFlight: Map<string, JobProgress> } })
	.__parethermSweepRegistry ??= { queue: null, inFlight: new Map() });
const inFlight = state.inFlight;

export function setActiveQueue(q: SweepQueue | null): void {
	state.queue = q;
	if (!q) inFlight.clear();
}

export function activeQueue(): SweepQueue | null {
	return state.queue;
}

export function recordProgress(jobId: string, p: JobProgress): void {
	inFlight.set(jobId, p);
}

export function clearProgress(jobId: string): void {
	inFlight.delete(jobId);
}

/** Simulations finished inside chunks that are still running, for one sweep (by job-id prefix). */
export function inFlightSimulations(jobIdPrefix: string): number {
	let n = 0;
	for (const [id, p] of inFlight) if (id.startsWith(jobIdPrefix)) n += Math.max(0, Math.min(p.done, p.total));
	return n;
}
