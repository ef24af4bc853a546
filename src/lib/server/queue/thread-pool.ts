/**
 * A fixed pool of worker threads running sim-thread.ts. One request per thread at a time; extra
 * requests wait in FIFO order. A thread that dies takes only its own request down (rejected with
 * the reason) and is replaced.
 *
 * Why a bootstrap instead of `new Worker('sim-thread.ts')`: the engine is TypeScript, and the
 * thread must load it the same way whether the parent runs under tsx (`npm run worker`), vitest,
 * or the Vite-built web server (plain node, where this module is bundled and sim-thread.ts stays
 * in the source tree). The bootstrap registers tsx's ESM loader inside the thread, then imports
 * the entry by absolute file URL.
 */
import { Worker } from 'node:worker_threads';
import { createRequire } from 'node:module';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import type { ThreadMessage, ThreadRequest } from './sim-thread';

type RequestBody = ThreadRequest extends infer R ? (R extends { id: number } ? Omit<R, 'id'> : never) : never;

interface Pending {
	id: number;
	body: RequestBody;
	onProgress?: (done: number, total: number) => void;
	resolve: (v: unknown) => void;
	reject: (e: Error) => void;
}

interface Slot {
	worker: Worker;
	ready: boolean;
	current: Pending | null;
}

/** Where sim-thread.ts is: beside this module when unbundled, else under the project root. */
export function simThreadEntry(): string {
	const candidates: string[] = [];
	try {
		candidates.push(path.join(path.dirname(fileURLToPath(import.meta.url)), 'sim-thread.ts'));
	} catch {
		// import.meta.url is not a file URL in some bundles; fall through to the project root.
	}
	const root = process.env.PARETHERM_ROOT ?? process.cwd();
	candidates.push(path.join(root, 'src/lib/server/queue/sim-thread.ts'));
	const found = candidates.find((c) => fs.existsSync(c));
	if (!found)
		throw new Error(
			`Cannot find the simulation thread entry (looked at ${candidates.join(', ')}). ` +
				'Start Paretherm from its project folder or set PARETHERM_ROOT to it.'
		);
	return found;
}

function tsxApiUrl(): string {
	const roots = [process.env.PARETHERM_ROOT ?? process.cwd()];
	try {
		roots.unshift(path.dirname(fileURLToPath(import.meta.url)));
	} catch {
		/* bundled: use the working directory */
	}
	for (const root of roots) {
		try {
			const pkg = createRequire(path.join(root, 'noop.js')).resolve('tsx/package.json');
			const api = path.join(path.dirname(pkg), 'dist/esm/api/index.mjs');
			if (fs.existsSync(api)) return pathToFileURL(api).href;
		} catch {
			/* try the next root */
		}
	}
	throw new Error('The simulation threads need the `tsx` package (a dependency of Paretherm); run `npm ci` in the project folder.');
}

export function defaultThreadCount(): number {
	const fromEnv = Number(process.env.PARETHERM_WORKER_THREADS);
	if (Number.isInteger(fromEnv) && fromEnv > 0) return fromEnv;
	return typeof os.availableParallelism === 'function' ? os.availableParallelism() : os.cpus().length;
}

export class SimulationPool {
	readonly size: number;
	private readonly slots: Slot[] = [];
	private readonly queue: Pending[] = [];
	private nextId = 1;
	private closed = false;
	private startupFailures = 0;
	private readonly bootstrap: string;
	private readyWaiters: { resolve: () => void; reject: (e: Error) => void }[] = [];
	private readonly entryUrl: string;
	private readonly tsxUrl: string;

	constructor(size = defaultThreadCount()) {
		if (!Number.isInteger(size) || size < 1) throw new RangeError(`Thread count must be a positive whole number (got ${size}).`);
		this.size = size;
		this.entryUrl = pathToFileURL(simThreadEntry()).href;
		this.tsxUrl = tsxApiUrl();
		this.bootstrap =
			`const { workerData } = require('node:worker_threads');` +
			`import(workerData.tsxUrl).then((api) => { api.register(); return import(workerData.entryUrl); })` +
			`.catch((e) => { console.error('[paretherm] simulation thread failed to load:', e); process.exit(1); });`;
		for (let i = 0; i < size; i++) this.slots.push(this.spawn());
	}

	private spawn(): Slot {
		const worker = new Worker(this.bootstrap, {
			eval: true,
			// Do not inherit the parent's --import/--require loader flags: the bootstrap registers tsx itself.
			execArgv: [],
			workerData: { tsxUrl: this.tsxUrl, entryUrl: this.entryUrl }
		});
		const slot: Slot = { worker, ready: false, current: null };
		worker.on('message', (msg: ThreadMessage) => this.onMessage(slot, msg));
		worker.on('error', (err) => this.onDeath(slot, err));
		worker.on('exit', (code) => {
			if (!this.closed) this.onDeath(slot, new Error(`simulation thread exited with code ${code}`));
		});
		return slot;
	}

	private onMessage(slot: Slot, msg: ThreadMessage): void {
		if (msg.type === 'ready') {
			slot.ready = true;
			this.startupFailures = 0;
			if (this.slots.every((s) => s.ready)) for (const w of this.readyWaiters.splice(0)) w.resolve();
			this.dispatch();
			return;
		}
		const cur = slot.current;
		if (!cur || cur.id !== msg.id) return;
		if (msg.type === 'progress') {
			cur.onProgress?.(msg.done, msg.total);
			return;
		}
		slot.current = null;
		if (msg.type === 'result') cur.resolve(msg.result);
		else {
			const err = new Error(msg.message);
			if (msg.stack) err.stack = msg.stack;
			cur.reject(err);
		}
		this.dispatch();
	}

	private onDeath(slot: Slot, err: Error): void {
		const idx = this.slots.indexOf(slot);
		if (idx < 0) return; // already replaced (error and exit both fire)
		if (!slot.ready) this.startupFailures++;
		slot.current?.reject(new Error(`A simulation thread died while computing: ${err.message}`));
		slot.current = null;
		void slot.worker.terminate();
		if (this.closed) return;
		if (this.startupFailures >= 3) {
			// The thread cannot even load (broken install or syntax error): fail fast, do not spin.
			this.slots.splice(idx, 1);
			const reason = new Error(`Simulation threads fail to start (${err.message}); see the log above.`);
			if (this.slots.every((s) => !s.ready)) for (const p of this.queue.splice(0)) p.reject(reason);
			for (const w of this.readyWaiters.splice(0)) w.reject(reason);
			return;
		}
		this.slots[idx] = this.spawn();
	}

	private dispatch(): void {
		for (const slot of this.slots) {
			if (!slot.ready || slot.current || this.queue.length === 0) continue;
			const next = this.queue.shift()!;
			slot.current = next;
			slot.worker.postMessage({ id: next.id, ...next.body } as ThreadRequest);
		}
	}

	/**
	 * Resolves once every thread has loaded the engine (loading TypeScript in a fresh thread takes
	 * a second or two), so a worker does not take jobs, and a benchmark does not start its clock,
	 * before it can compute.
	 */
	ready(): Promise<void> {
		if (this.slots.length > 0 && this.slots.every((s) => s.ready)) return Promise.resolve();
		return new Promise((resolve, reject) => this.readyWaiters.push({ resolve, reject }));
	}

	run<T>(body: RequestBody, onProgress?: (done: number, total: number) => void): Promise<T> {
		if (this.closed) return Promise.reject(new Error('The simulation pool is closed.'));
		if (this.slots.length === 0) return Promise.reject(new Error('Simulation threads fail to start; see the log.'));
		return new Promise<T>((resolve, reject) => {
			this.queue.push({ id: this.nextId++, body, onProgress, resolve: resolve as (v: unknown) => void, reject });
			this.dispatch();
		});
	}

	/** Stops the threads; requests still waiting or running are rejected. */
	async close(): Promise<void> {
		this.closed = true;
		const reason = new Error('The simulation pool was closed.');
		for (const p of this.queue.splice(0)) p.reject(reason);
		for (const s of this.slots) s.current?.reject(reason);
		await Promise.all(this.slots.map((s) => s.worker.terminate()));
	}
}
