/**
 * The simulation thread pool: piscina running the compiled thread entry
 * (build/worker/sim-thread.mjs, see compiled.ts), a fixed number of threads, one task per thread
 * at a time; extra tasks wait in FIFO order. A thread that dies takes only its own task down
 * (rejected with the reason) and piscina starts a replacement.
 *
 * Progress travels over a MessageChannel per task, so a chunk can report after each simulation.
 */
import os from 'node:os';
import { MessageChannel } from 'node:worker_threads';
import { Piscina } from 'piscina';
import { compiledFile } from './compiled';
import { config } from '../config';
import type { PingResult, ThreadTask } from './sim-thread';

type Body = ThreadTask extends infer T ? (T extends { kind: 'chunk' | 'series' } ? Omit<T, 'nice' | 'progress'> : never) : never;

export function defaultThreadCount(): number {
	const fromEnv = config().workerThreads;
	if (fromEnv !== null) return fromEnv;
	return typeof os.availableParallelism === 'function' ? os.availableParallelism() : os.cpus().length;
}

export interface SimulationPoolOptions {
	/** Nice value the threads lower themselves to (0 = the owner's priority). */
	nice?: number;
	log?: (msg: string) => void;
}

export class SimulationPool {
	readonly size: number;
	readonly nice: number;
	private piscina: Piscina | null = null;
	private starting: Promise<void> | null = null;
	private closed = false;
	private readonly log: (msg: string) => void;
	/** Thread ids and nice values seen by the start-up ping. */
	threads: PingResult[] = [];

	constructor(size = defaultThreadCount(), opts: SimulationPoolOptions = {}) {
		if (!Number.isInteger(size) || size < 1) throw new RangeError(`Thread count must be a positive whole number (got ${size}).`);
		this.size = size;
		this.nice = Math.max(0, Math.min(19, Math.round(opts.nice ?? 0)));
		this.log = opts.log ?? ((m) => console.error(`[paretherm] ${m}`));
	}

	/**
	 * Resolves once every thread has loaded the compiled engine (one ping per thread, sent
	 * together so each lands on its own thread), so a worker does not take jobs, and a benchmark
	 * does not start its clock, before it can compute. Rejects when the threads cannot start.
	 */
	ready(): Promise<void> {
		this.starting ??= this.start().catch((e) => {
			this.starting = null;
			throw e;
		});
		return this.starting;
	}

	private async start(): Promise<void> {
		const filename = await compiledFile('sim-thread');
		if (this.closed) throw new Error('The simulation pool is closed.');
		const pool = new Piscina({
			filename,
			minThreads: this.size,
			maxThreads: this.size,
			concurrentTasksPerWorker: 1,
			// Plain node in the threads: no loader flags of a parent started under tsx.
			execArgv: [],
			recordTiming: false
		});
		// Emitted for a thread error outside any task; tasks get their own rejection.
		pool.on('error', (e: Error) => this.log(`simulation thread error: ${e.message}`));
		this.piscina = pool;
		this.threads = await Promise.all(Array.from({ length: this.size }, () => pool.run({ kind: 'ping', nice: this.nice } satisfies ThreadTask) as Promise<PingResult>));
	}

	async run<T>(body: Body, onProgress?: (done: number, total: number) => void): Promise<T> {
		if (this.closed) throw new Error('The simulation pool is closed.');
		await this.ready();
		const pool = this.piscina!;
		if (!onProgress) return (await pool.run({ ...body, nice: this.nice } as ThreadTask)) as T;
		const { port1, port2 } = new MessageChannel();
		port1.on('message', (m: { done: number; total: number }) => onProgress(m.done, m.total));
		try {
			return (await pool.run({ ...body, nice: this.nice, progress: port2 } as ThreadTask, { transferList: [port2] })) as T;
		} finally {
			// Progress still in flight is dropped: callers report completion themselves.
			port1.close();
		}
	}

	/** Stops the threads; tasks still waiting or running are rejected. */
	async close(): Promise<void> {
		this.closed = true;
		await this.starting?.catch(() => {});
		const pool = this.piscina;
		this.piscina = null;
		await pool?.destroy();
	}
}
