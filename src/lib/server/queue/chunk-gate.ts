/**
 * The chunk gate: a control that holds a sweep mid-way on purpose, for tests and demonstrations
 * that must act at a known point of a sweep (take a backup, kill a process, cancel, freeze Redis)
 * instead of racing it. Off unless PARETHERM_CHUNK_GATE names a file; then, before a chunk starts,
 * the worker reads that file:
 *   - a whole number N: chunks with an index below N start, chunks N and later wait;
 *   - `open`: every chunk starts;
 *   - no file (or anything else): every chunk waits.
 * A waiting chunk re-reads the file every POLL_MS. Write the file atomically (write a temporary
 * file, then rename it over the gate) so a reader never sees half a number.
 */
import fs from 'node:fs/promises';
import { config, parseConfig, type Env } from '../config';

export const CHUNK_GATE_ENV = 'PARETHERM_CHUNK_GATE';
const POLL_MS = 50;

/** How many chunks (by index) the gate lets start: Infinity when open, 0 when closed. */
export function parseChunkGate(text: string | null): number {
	const t = text?.trim() ?? '';
	if (t === 'open') return Infinity;
	if (/^\d+$/.test(t)) return Number(t);
	return 0;
}

async function readGate(file: string): Promise<number> {
	try {
		return parseChunkGate(await fs.readFile(file, 'utf8'));
	} catch {
		return 0;
	}
}

/** The gate file named by the environment, or null when the gate is off. */
export function chunkGateFile(env?: Env): string | null {
	return (env ? parseConfig(env) : config()).chunkGateFile;
}

/**
 * Waits until the gate lets chunk `chunkIndex` start ('start') or `stop()` turns true ('stopped').
 * Calls `onHold` once if the chunk has to wait. Returns at once when the gate is off.
 */
export async function passChunkGate(chunkIndex: number, stop: () => boolean, onHold?: () => void, file = chunkGateFile()): Promise<'start' | 'stopped'> {
	if (!file) return 'start';
	let held = false;
	for (;;) {
		if (chunkIndex < (await readGate(file))) return 'start';
		if (stop()) return 'stopped';
		if (!held) {
			held = true;
			onHold?.();
		}
		await new Promise((r) => setTimeout(r, POLL_MS));
	}
}
