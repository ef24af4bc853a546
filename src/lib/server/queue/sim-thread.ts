/**
 * Worker-thread entry: runs engine simulations for the pool in thread-pool.ts, one request at a
 * time, so the owning process's event loop stays free to renew BullMQ job locks and answer HTTP.
 * Loaded through tsx's loader (registered by the pool's bootstrap), hence relative imports only.
 */
import { parentPort } from 'node:worker_threads';
import { computeChunk, computeFrontSeries } from './compute';
import type { ChunkJobData, SeriesJobData } from './jobs';

export type ThreadRequest =
	| { id: number; kind: 'chunk'; data: ChunkJobData }
	| { id: number; kind: 'series'; data: SeriesJobData };

export type ThreadMessage =
	| { type: 'ready' }
	| { type: 'progress'; id: number; done: number; total: number }
	| { type: 'result'; id: number; result: unknown }
	| { type: 'error'; id: number; message: string; stack?: string };

const port = parentPort;
if (!port) throw new Error('sim-thread.ts must be started as a worker thread by thread-pool.ts.');

port.on('message', (req: ThreadRequest) => {
	const progress = (done: number, total: number) => port.postMessage({ type: 'progress', id: req.id, done, total } satisfies ThreadMessage);
	try {
		const result = req.kind === 'chunk' ? computeChunk(req.data, progress) : computeFrontSeries(req.data, progress);
		port.postMessage({ type: 'result', id: req.id, result } satisfies ThreadMessage);
	} catch (e) {
		const err = e instanceof Error ? e : new Error(String(e));
		port.postMessage({ type: 'error', id: req.id, message: err.message, stack: err.stack } satisfies ThreadMessage);
	}
});

port.postMessage({ type: 'ready' } satisfies ThreadMessage);
