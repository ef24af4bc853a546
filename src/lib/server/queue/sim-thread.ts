/**
 * Simulation thread entry, compiled to build/worker/sim-thread.mjs (scripts/build-workers.mjs) and
 * run by the piscina pool in thread-pool.ts: one task at a time per thread, so the owning
 * process's event loop stays free to renew BullMQ job locks and answer HTTP.
 *
 * A task may carry a MessagePort for progress ({ done, total } after each simulation) and a nice
 * value: the thread lowers its own OS priority to at least that (on Linux the nice value is per
 * thread), so simulations yield to the web server's requests.
 */
import os from 'node:os';
import { threadId, type MessagePort } from 'node:worker_threads';
import { computeChunk, computeFrontSeries } from './compute';
import type { ChunkJobData, SeriesJobData } from './jobs';

interface TaskCommon {
	/** Lower this thread's priority to at least this nice value (0–19). */
	nice?: number;
	progress?: MessagePort;
}

export type ThreadTask =
	| (TaskCommon & { kind: 'chunk'; data: ChunkJobData })
	| (TaskCommon & { kind: 'series'; data: SeriesJobData })
	| (TaskCommon & { kind: 'ping' });

export interface PingResult {
	threadId: number;
	nice: number | null;
}

function applyNice(nice: number | undefined): number | null {
	try {
		const now = os.getPriority(0);
		if (nice !== undefined && nice > now) os.setPriority(0, Math.min(19, nice));
		return os.getPriority(0);
	} catch {
		return null; // not permitted or not supported here: run at the inherited priority
	}
}

export default function runTask(task: ThreadTask): unknown {
	if (task.nice) applyNice(task.nice);
	if (task.kind === 'ping') return { threadId, nice: applyNice(undefined) } satisfies PingResult;
	const port = task.progress;
	const progress = port ? (done: number, total: number) => port.postMessage({ done, total }) : undefined;
	try {
		return task.kind === 'chunk' ? computeChunk(task.data, progress) : computeFrontSeries(task.data, progress);
	} finally {
		port?.close();
	}
}
