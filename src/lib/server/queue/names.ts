/**
 * Every queue name, job name and job id used by the sweep runtime, in one place (BullMQ's
 * production guide: producers and workers must agree on names, and a typo silently creates a new
 * queue). Keep this module free of `$lib`/`$app`/`$env` imports: the worker process imports it
 * under tsx, outside the Vite build.
 */
import { config } from '../config';

/** Key prefix for every BullMQ key, so several Paretherm installs can share one Redis. */
export const QUEUE_PREFIX = config().queuePrefix;

/** The one queue that carries sweep work: grid-point chunks and front time-series jobs. */
export const SWEEP_QUEUE = 'sweeps';

/** Simulate a chunk of grid points (and baselines) of one sweep; returns their summaries. */
export const JOB_SWEEP_CHUNK = 'sweep-chunk';

/** Re-simulate the Pareto-front points of one scenario with `keepSeries` once the front is known. */
export const JOB_FRONT_SERIES = 'front-series';

/** Simulate a chunk of the charges of a year-of-use evaluation's exact run; returns their summaries. */
export const JOB_YEAR_CHUNK = 'year-chunk';

export type SweepJobName = typeof JOB_SWEEP_CHUNK | typeof JOB_FRONT_SERIES | typeof JOB_YEAR_CHUNK;

/**
 * Deterministic job ids make enqueueing idempotent: adding a job whose id already exists is a
 * no-op in BullMQ, so re-enqueueing after a crash can never duplicate a chunk. The sweep's random
 * `queueToken` keeps ids unique when a database is recreated but an external Redis keeps old jobs.
 * (BullMQ rejects custom ids containing ':' and purely numeric ids, hence '-' and the letters.)
 */
export function chunkJobId(sweepId: number, queueToken: string, chunkIndex: number): string {
	return `sweep-${sweepId}-${queueToken}-chunk-${chunkIndex}`;
}

export function seriesJobId(sweepId: number, queueToken: string, scenarioIndex: number): string {
	return `sweep-${sweepId}-${queueToken}-series-${scenarioIndex}`;
}

/** Job ids of exact year-of-use runs start with this, so the web process knows where a result belongs. */
export const YEAR_JOB_PREFIX = 'year-';

export function yearChunkJobId(runId: number, queueToken: string, chunkIndex: number): string {
	return `${YEAR_JOB_PREFIX}${runId}-${queueToken}-chunk-${chunkIndex}`;
}

/** Plain Redis key a worker checks before starting a chunk of an exact run, so a cancelled run stops quickly. */
export function yearCancelledKey(runId: number, queueToken: string): string {
	return `${QUEUE_PREFIX}:cancelled:year-${runId}-${queueToken}`;
}

/** Plain Redis key a worker checks before starting a chunk, so a cancelled sweep stops quickly. */
export function cancelledKey(sweepId: number, queueToken: string): string {
	return `${QUEUE_PREFIX}:cancelled:sweep-${sweepId}-${queueToken}`;
}

/**
 * Attempts per job before the sweep is marked failed; retries back off exponentially from 2 s
 * (2 s, then 4 s), long enough to ride out a worker restart. PARETHERM_JOB_BACKOFF_MS shortens it
 * for tests.
 */
export const JOB_ATTEMPTS = 3;
export const JOB_BACKOFF_DELAY_MS = config().jobBackoff_ms;
