/**
 * The chunk gate the sweep tests hold sweeps with (src/lib/server/queue/chunk-gate.ts): what the
 * gate file means, and that a held chunk starts when the file lets it and not before.
 * Common practice, no source.
 */
import { describe, expect, it } from 'vitest';
import fs from 'node:fs';
import path from 'node:path';
import { chunkGateFile, parseChunkGate, passChunkGate } from '../../src/lib/server/queue/chunk-gate';
import { ChunkGate } from '../helpers/chunk-gate';

describe('chunk gate', () => {
	it('should read a whole number as the chunks allowed, "open" as all of them, anything else as none', () => {
		expect(parseChunkGate('12\n')).toBe(12);
		expect(parseChunkGate('0')).toBe(0);
		expect(parseChunkGate(' open ')).toBe(Infinity);
		for (const closed of [null, '', '1.5', '-3', 'opened', '12 chunks']) expect(parseChunkGate(closed), String(closed)).toBe(0);
	});

	it('should be off unless PARETHERM_CHUNK_GATE names a file', async () => {
		expect(chunkGateFile({})).toBeNull();
		expect(chunkGateFile({ PARETHERM_CHUNK_GATE: '  ' })).toBeNull();
		expect(chunkGateFile({ PARETHERM_CHUNK_GATE: '/tmp/gate' })).toBe('/tmp/gate');
		expect(await passChunkGate(1_000_000, () => false, undefined, null)).toBe('start');
	});

	it('should let chunks below the allowance start and hold the others until the file lets them', async () => {
		const gate = ChunkGate.create(2);
		try {
			expect(await passChunkGate(0, () => false, undefined, gate.file)).toBe('start');
			expect(await passChunkGate(1, () => false, undefined, gate.file)).toBe('start');
			let held!: () => void;
			const holding = new Promise<void>((r) => (held = r));
			let outcome: string | null = null;
			const passing = passChunkGate(2, () => false, () => held(), gate.file).then((o) => (outcome = o));
			await holding;
			expect(outcome).toBeNull();
			gate.allow(3);
			expect(await passing).toBe('start');
			gate.open();
			expect(await passChunkGate(1_000_000, () => false, undefined, gate.file)).toBe('start');
		} finally {
			fs.rmSync(path.dirname(gate.file), { recursive: true, force: true });
		}
	});

	describe('error handling', () => {
		it('should hold every chunk while the gate file is missing, and give up when told to stop', async () => {
			const gate = ChunkGate.create(5);
			fs.rmSync(path.dirname(gate.file), { recursive: true, force: true });
			let stop = false;
			const passing = passChunkGate(0, () => stop, () => (stop = true), gate.file);
			expect(await passing).toBe('stopped');
		});

		it('should refuse an allowance that is not a whole number', () => {
			const gate = ChunkGate.create('open');
			try {
				expect(() => gate.allow(-1)).toThrow(/whole number/);
				expect(() => gate.allow(2.5)).toThrow(/whole number/);
				expect(fs.readFileSync(gate.file, 'utf8')).toBe('open');
			} finally {
				fs.rmSync(path.dirname(gate.file), { recursive: true, force: true });
			}
		});
	});
});
