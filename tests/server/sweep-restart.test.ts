/**
 * Restart safety: the process running the sweep service (private redis-server child, in-process
 * worker) is killed with SIGKILL in the middle of a sweep — no chance to clean up, its Redis child
 * orphaned, a chunk possibly half computed. A new process on the same data folder must stop the
 * orphan, bring Redis back from its append-only file, collect what finished meanwhile, retry what
 * was interrupted, and complete the sweep with every point stored exactly once.
 *
 * The first process runs behind the chunk gate: it stores 4 of the 21 chunks and is held on the
 * 5th, so the kill lands mid-sweep on purpose, with a chunk in progress.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';

const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'paretherm-restart-'));
process.env.PARETHERM_DATA_DIR = dataDir;

const { ROOT, waitFor } = await import('../helpers/sweeps');
const { ChunkGate } = await import('../helpers/chunk-gate');
const gate = ChunkGate.create(4, dataDir);

interface Run {
	proc: ChildProcess;
	out: string;
	exit: Promise<number | null>;
}

function runService(): Run {
	const env: NodeJS.ProcessEnv = { ...process.env, PARETHERM_DATA_DIR: dataDir, PARETHERM_WORKER_THREADS: '1', PARETHERM_JOB_LOCK_MS: '3000', PARETHERM_STALLED_CHECK_MS: '1000', PARETHERM_RECONCILE_MS: '1000', ...gate.env };
	delete env.REDIS_URL; // the private redis-server path, as for a newcomer's `npm start`
	delete env.PARETHERM_IN_PROCESS_WORKER;
	// node with tsx's loader, not the tsx CLI: the CLI runs the script in a child process, and
	// SIGKILL to the CLI would leave that child running.
	const proc = spawn(process.execPath, ['--import', 'tsx', 'tests/server/fixtures/sweep-service.ts'], { cwd: ROOT, env, stdio: ['ignore', 'pipe', 'pipe'] });
	const run: Run = { proc, out: '', exit: new Promise((r) => proc.once('exit', (code) => r(code))) };
	proc.stdout!.on('data', (d) => (run.out += d));
	proc.stderr!.on('data', (d) => (run.out += d));
	return run;
}

function lastProgress(out: string): { done: number; total: number } | null {
	const all = [...out.matchAll(/PROGRESS (\d+) (\d+)/g)];
	const m = all.at(-1);
	return m ? { done: Number(m[1]), total: Number(m[2]) } : null;
}

function redisPid(): number | null {
	try {
		return Number(fs.readFileSync(path.join(dataDir, 'redis', 'redis-server.pid'), 'utf8').trim()) || null;
	} catch {
		return null;
	}
}

function alive(pid: number | null): boolean {
	if (!pid) return false;
	try {
		process.kill(pid, 0);
		return true;
	} catch {
		return false;
	}
}

describe('sweep restart after SIGKILL', () => {
	afterAll(() => {
		const pid = redisPid();
		if (alive(pid)) process.kill(pid!, 'SIGKILL');
		fs.rmSync(dataDir, { recursive: true, force: true });
	});

	it('should finish the sweep with every point stored exactly once', async () => {
		const first = runService();
		const atKill = await waitFor(
			'the first run to store 4 chunks and hold the 5th',
			async () => {
				const p = lastProgress(first.out);
				return p && p.done >= 8 && /chunk 4: held by the chunk gate/.test(first.out) ? p : null;
			},
			240_000,
			20
		);
		first.proc.kill('SIGKILL');
		await first.exit;
		expect(atKill).toEqual({ done: 8, total: 42 }); // killed mid-sweep, not after it
		const orphan = redisPid();
		expect(alive(orphan)).toBe(true); // its redis-server outlived it, as after a real crash

		gate.open();
		const second = runService();
		const code = await second.exit;
		expect(code, second.out).toBe(0);
		expect(second.out).toMatch(/DONE done/);
		expect(second.out).toMatch(new RegExp(`stopping redis-server pid ${orphan} left running`));
		expect(alive(orphan)).toBe(false);
		// Progress in the second run only rises.
		const seen = [...second.out.matchAll(/PROGRESS (\d+) (\d+)/g)].map((m) => Number(m[1]));
		for (let i = 1; i < seen.length; i++) expect(seen[i]).toBeGreaterThanOrEqual(seen[i - 1]);
		expect(seen[0]).toBeGreaterThanOrEqual(atKill.done);

		const { Sweep, SweepChunk, SweepPoint } = await import('../../src/lib/server/db/models/index');
		const sweep = (await Sweep.findOne({ order: [['id', 'ASC']] }))!;
		expect(sweep.status).toBe('done');
		const points = await SweepPoint.findAll({ where: { sweep_id: sweep.id } });
		expect(points).toHaveLength(42);
		expect(new Set(points.map((p) => `${p.scenario_index}/${p.strategy_index}`)).size).toBe(42);
		const chunks = await SweepChunk.findAll({ where: { sweep_id: sweep.id } });
		expect(chunks.map((c) => c.chunk_index).sort((a, b) => a - b)).toEqual([...Array(21).keys()]);
		expect(sweep.simulations_done).toBe(42);
		expect(sweep.chunks_done).toBe(21);
		// Two different processes stored chunks: the run before the kill and the one after.
		expect(new Set(chunks.map((c) => c.worker)).size).toBe(2);
	}, 420_000);
});
