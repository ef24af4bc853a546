/**
 * Data safety: `npm run backup` while the app runs and a sweep stores results, `npm run restore`
 * into a fresh data folder, and the app started on the restored database.
 *
 * What "consistent" means here: a chunk's points, its receipt and the sweep's counters are written
 * in one transaction, so in any consistent snapshot sweeps.simulations_done equals the number of
 * stored points and chunks_done the number of receipts. A torn copy (pages from before and after a
 * commit) would break that.
 *
 * The sweep runs behind the chunk gate, so the backups land mid-way on purpose, not by luck: one
 * while the sweep is held after 2 of its 38 chunks, two while chunks 3 to 12 are being stored (the
 * gate holds chunk 13, so the sweep cannot finish under them), one while it runs to its end.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import sqlite3 from 'sqlite3';
import { ROOT, runChild, startApp, type RunningApp } from '../helpers/app';
import { ChunkGate } from '../helpers/chunk-gate';
import { databaseChecksum, queryDb } from '../helpers/db-checksum';
import { DEMO, lookUpIds, seedHardening, signedIn, type Ids } from './helpers';

const TSX = path.join(ROOT, 'node_modules/.bin/tsx');
const work = fs.mkdtempSync(path.join(os.tmpdir(), 'paretherm-backup-test-'));
const gate = ChunkGate.create(2, work);

function npmScript(script: 'backup' | 'restore', args: string[], dataDir: string) {
	return runChild(TSX, [`scripts/${script}.ts`, ...args], { env: { ...process.env, PARETHERM_DATA_DIR: dataDir }, timeout_ms: 180_000 });
}

/** A data folder holding `file` as its database, to read a backup with the usual helpers. */
function asDataDir(file: string): string {
	const dir = fs.mkdtempSync(path.join(work, 'view-'));
	fs.copyFileSync(file, path.join(dir, 'paretherm.sqlite'));
	return dir;
}

interface Counters {
	id: number;
	status: string;
	simulations_done: number;
	chunks_done: number;
	points: number;
	chunks: number;
}
async function counters(dataDir: string, sweepId: number): Promise<Counters> {
	const [row] = await queryDb<Counters>(
		dataDir,
		`SELECT id, status, simulations_done, chunks_done,
			(SELECT COUNT(*) FROM sweep_points WHERE sweep_id = s.id) AS points,
			(SELECT COUNT(*) FROM sweep_chunks WHERE sweep_id = s.id) AS chunks
		FROM sweeps s WHERE id = ?`,
		[sweepId]
	);
	return row;
}

const rowsOf = (dataDir: string, sql: string, params: unknown[] = []) => queryDb(dataDir, sql, params).then((r) => JSON.stringify(r));

let app: RunningApp;
let ids: Ids;
let running: number;
let finishedFronts: string;
const backups: { file: string; before: Counters; after: Counters }[] = [];

beforeAll(async () => {
	app = await startApp({ dataDir: await seedHardening(), seed: false, env: { PARETHERM_WORKER_THREADS: '1', ...gate.env } });
	ids = await lookUpIds(app);
	const engineer = await signedIn(app, DEMO.engineer);
	finishedFronts = await (await engineer.get(`/api/programs/${ids.programId}/sweeps/${ids.sweepId}/fronts`)).text();
	// One simulation per chunk: many small commits for the backups to land between.
	const res = await engineer.json(`/api/programs/${ids.programId}/sweeps`, 'POST', {
		name: 'Sweep writing during the backup',
		scenarioId: 'cold-morning-depot',
		chunkSize: 1,
		definition: { cellIds: ['demo-nmc-pouch'], packIds: ['demo-van-pack'], ambients_K: [253.15, 263.15], statesOfHealth: [1], arrivalSocs: [0.2], leadTimes_s: [0, 300, 600, 900, 1200, 1800], setpoints_K: [288.15, 298.15, 308.15] }
	});
	expect(res.status).toBe(201);
	running = (await res.json()).id;
}, 300_000);

afterAll(async () => {
	gate.open();
	await app?.stop();
	fs.rmSync(work, { recursive: true, force: true });
});

describe('backup while the app runs', () => {
	it('should take consistent snapshots while a sweep stores its chunks', async () => {
		const chunksStored = async (n: number) => {
			const deadline = Date.now() + 240_000; // a bound for a broken sweep, not a race: the gate holds it at n
			while ((await counters(app.dataDir, running)).chunks_done < n) {
				if (Date.now() > deadline) throw new Error(`the sweep did not store ${n} chunks within 240 s:\n${app.log()}`);
				await new Promise((r) => setTimeout(r, 100));
			}
		};
		const backup = (i: number) => {
			const file = path.join(work, `backup-${i}.sqlite`);
			return async () => {
				const before = await counters(app.dataDir, running);
				const r = await npmScript('backup', ['--out', file], app.dataDir);
				const after = await counters(app.dataDir, running);
				expect(r.code, r.out).toBe(0);
				expect(r.out).toContain(`Backup written: ${file}`);
				backups.push({ file, before, after });
			};
		};
		// Held after 2 chunks: nothing is written while this backup runs.
		await chunksStored(2);
		await backup(0)();
		expect(backups[0].before.chunks_done).toBe(2);
		expect(backups[0].after.chunks_done).toBe(2);
		// Chunks 3 to 12 are stored while these two run; the gate holds the sweep before its end.
		gate.allow(12);
		await backup(1)();
		await backup(2)();
		// Released: the last one runs while the sweep goes on to its end (mid-way or not, it must be consistent).
		gate.open();
		await backup(3)();

		let midway = 0;
		for (const b of backups) {
			const view = asDataDir(b.file);
			const c = await counters(view, running);
			if ((c.status === 'running' || c.status === 'queued') && c.points > 0) midway++;
			// Consistent: counters and rows agree, as they do after every commit.
			expect(c.simulations_done).toBe(c.points);
			expect(c.chunks_done).toBe(c.chunks);
			// Taken between the two readings.
			expect(c.points).toBeGreaterThanOrEqual(b.before.points);
			expect(c.points).toBeLessThanOrEqual(b.after.points);
			const [{ integrity_check }] = await queryDb<{ integrity_check: string }>(view, 'PRAGMA integrity_check');
			expect(integrity_check).toBe('ok');
			// No WAL beside a backup: it is one self-contained file.
			expect(fs.existsSync(`${b.file}-wal`)).toBe(false);
		}
		// The backups caught the sweep mid-way, with some chunks stored (the point of the exercise):
		// at least the three taken while the gate held its end back.
		expect(midway).toBeGreaterThanOrEqual(3);
	}, 420_000);

	it('should refuse to restore into the data folder of the running app', async () => {
		const r = await npmScript('restore', [backups[0].file], app.dataDir);
		expect(r.code).toBe(1);
		expect(r.out).toMatch(/is open in pid \d+|redis-server \(pid \d+\) is running/);
		expect(fs.existsSync(path.join(app.dataDir, 'paretherm.sqlite.before-restore'))).toBe(false);
	});
});

describe('restore', () => {
	let restoredDir: string;
	let chosen: (typeof backups)[number];

	it('should restore a backup into a fresh data folder with the same content', async () => {
		// The backup that caught the sweep furthest from its end, so the restored app has work left.
		chosen = [...backups].sort((a, b) => a.before.points - b.before.points)[0];
		restoredDir = fs.mkdtempSync(path.join(work, 'restored-'));
		const r = await npmScript('restore', [chosen.file], restoredDir);
		expect(r.code, r.out).toBe(0);
		expect(r.out).toContain('Restored');
		expect(await databaseChecksum(restoredDir)).toBe(await databaseChecksum(asDataDir(chosen.file)));
	});

	it('should hold what was there at backup time: people, programs, inputs, strategies and the finished sweep', async () => {
		const stable = [
			['SELECT id, email, name, password_hash, is_admin, active FROM users ORDER BY id'],
			['SELECT * FROM programs ORDER BY id'],
			['SELECT * FROM memberships ORDER BY id'],
			['SELECT * FROM parameter_sets ORDER BY id'],
			['SELECT * FROM strategies ORDER BY id'],
			['SELECT * FROM schema_migrations ORDER BY id'],
			['SELECT * FROM sweep_points WHERE sweep_id = ? ORDER BY id', [ids.sweepId]],
			['SELECT * FROM sweep_scenarios WHERE sweep_id = ? ORDER BY id', [ids.sweepId]],
			['SELECT id, point_id, encoding, length(data) AS bytes FROM sweep_series WHERE sweep_id = ? ORDER BY id', [ids.sweepId]]
		] as const;
		for (const [sql, params] of stable) expect(await rowsOf(restoredDir, sql, params ? [...params] : []), sql).toBe(await rowsOf(app.dataDir, sql, params ? [...params] : []));
	});

	it('should start the app on the restored database, serve the same fronts and finish the interrupted sweep exactly once', async () => {
		const restoredApp = await startApp({ dataDir: restoredDir, seed: false, env: { PARETHERM_WORKER_THREADS: '1', PARETHERM_RECONCILE_MS: '1000' } });
		try {
			const engineer = await signedIn(restoredApp, DEMO.engineer);
			expect(await (await engineer.get(`/api/programs/${ids.programId}/sweeps/${ids.sweepId}/fronts`)).text()).toBe(finishedFronts);
			const deadline = Date.now() + 300_000;
			let c = await counters(restoredDir, running);
			while (c.status !== 'done') {
				if (c.status === 'failed' || c.status === 'cancelled') throw new Error(`restored sweep ended ${c.status}`);
				if (Date.now() > deadline) throw new Error(`restored sweep still ${c.status} after 300 s (${c.points} points)`);
				await new Promise((r) => setTimeout(r, 250));
				c = await counters(restoredDir, running);
			}
			const [{ simulation_count, chunk_count }] = await queryDb<{ simulation_count: number; chunk_count: number }>(restoredDir, 'SELECT simulation_count, chunk_count FROM sweeps WHERE id = ?', [running]);
			expect(c.points).toBe(simulation_count);
			expect(c.chunks).toBe(chunk_count);
			const distinct = await queryDb<{ n: number }>(restoredDir, 'SELECT COUNT(DISTINCT scenario_index || \'/\' || IFNULL(strategy_index, -1)) AS n FROM sweep_points WHERE sweep_id = ?', [running]);
			expect(distinct[0].n).toBe(simulation_count);
			const fronts = await (await engineer.get(`/api/programs/${ids.programId}/sweeps/${running}/fronts`)).json();
			expect(fronts.scenarios.length).toBeGreaterThan(0);
		} finally {
			await restoredApp.stop();
		}
	}, 420_000);

	it('should keep the replaced database as .before-restore', async () => {
		const target = await seedHardening(fs.mkdtempSync(path.join(work, 'replaced-')), { sweeps: false });
		const old = await databaseChecksum(target);
		const r = await npmScript('restore', [backups[0].file], target);
		expect(r.code, r.out).toBe(0);
		expect(r.out).toContain('paretherm.sqlite.before-restore');
		expect(await databaseChecksum(asDataDir(path.join(target, 'paretherm.sqlite.before-restore')))).toBe(old);
		expect(await databaseChecksum(target)).toBe(await databaseChecksum(asDataDir(backups[0].file)));
	}, 240_000);

	describe('error handling', () => {
		it('should refuse a file that is not a Paretherm database and change nothing', async () => {
			const target = fs.mkdtempSync(path.join(work, 'refuse-'));
			const notSqlite = path.join(work, 'notes.txt');
			fs.writeFileSync(notSqlite, 'not a database');
			let r = await npmScript('restore', [notSqlite], target);
			expect(r.code).toBe(1);
			expect(r.out).toContain('not an SQLite database');

			const otherSqlite = path.join(work, 'other.sqlite');
			await new Promise<void>((resolve, reject) => {
				const db = new sqlite3.Database(otherSqlite);
				db.exec('CREATE TABLE t (x INTEGER); INSERT INTO t VALUES (1);', (err) => db.close(() => (err ? reject(err) : resolve())));
			});
			r = await npmScript('restore', [otherSqlite], target);
			expect(r.code).toBe(1);
			expect(r.out).toContain('not a Paretherm one (it has no schema_migrations table)');

			const truncated = path.join(work, 'truncated.sqlite');
			const bytes = fs.readFileSync(backups[0].file);
			fs.writeFileSync(truncated, bytes.subarray(0, Math.floor(bytes.length / 3)));
			r = await npmScript('restore', [truncated], target);
			expect(r.code).toBe(1);
			expect(r.out).toMatch(/damaged|malformed|not a database|disk image/i);

			r = await npmScript('restore', [path.join(work, 'missing.sqlite')], target);
			expect(r.code).toBe(1);
			expect(r.out).toContain('No file at');
			expect(fs.readdirSync(target)).toEqual([]);
		});

		it('should never overwrite an existing backup', async () => {
			const r = await npmScript('backup', ['--out', backups[0].file], app.dataDir);
			expect(r.code).toBe(1);
			expect(r.out).toContain('exists already');
		});
	});
});
