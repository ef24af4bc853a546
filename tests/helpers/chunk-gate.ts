/**
 * The test side of the chunk gate (src/lib/server/queue/chunk-gate.ts): a file a worker reads
 * before each chunk when PARETHERM_CHUNK_GATE names it. Tests hold a sweep mid-way on purpose —
 * `allow(n)` lets chunks 0 … n-1 start and holds the rest — act, then `open()` it, instead of
 * racing the sweep against the clock.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';

export class ChunkGate {
	private constructor(readonly file: string) {}

	/** A gate in `dir` (default: a new temporary folder), closed unless `initial` says otherwise. */
	static create(initial: number | 'open' | 'closed' = 'closed', dir = fs.mkdtempSync(path.join(os.tmpdir(), 'paretherm-gate-'))): ChunkGate {
		const gate = new ChunkGate(path.join(dir, 'chunk-gate'));
		if (initial === 'open') gate.open();
		else gate.allow(initial === 'closed' ? 0 : initial);
		return gate;
	}

	/** The environment that puts a worker (or an app with its in-process worker) behind this gate. */
	get env(): Record<string, string> {
		return { PARETHERM_CHUNK_GATE: this.file };
	}

	/** Chunks with an index below `chunks` may start; later ones wait. */
	allow(chunks: number): void {
		if (!Number.isInteger(chunks) || chunks < 0) throw new Error(`allow() needs a whole number of chunks, not ${chunks}`);
		this.write(String(chunks));
	}

	open(): void {
		this.write('open');
	}

	/** Written beside the gate and renamed over it, so a worker never reads half a value. */
	private write(text: string): void {
		const tmp = `${this.file}.${process.pid}.tmp`;
		fs.writeFileSync(tmp, text);
		fs.renameSync(tmp, this.file);
	}
}
