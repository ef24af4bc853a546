/**
 * Backup and restore of the SQLite database (`<PARETHERM_DATA_DIR>/paretherm.sqlite`).
 *
 * Backup uses `VACUUM INTO` on a separate read-only connection, while the app keeps running:
 * - The statement runs inside ONE read transaction, so the copy is the database exactly as it was
 *   at one commit — never half a chunk of sweep results. Under WAL a reader does not block the
 *   app's writer and the writer does not disturb the reader, so sweeps keep being stored meanwhile.
 * - The alternative, node-sqlite3's online backup API (`db.backup()`), copies pages in steps and
 *   restarts from the beginning whenever another connection writes between two steps; with a sweep
 *   storing a chunk every few hundred milliseconds it can restart again and again (or, done in one
 *   step, it is the same single read transaction as VACUUM INTO, without the compaction).
 * - The result is one self-contained, compacted file (no -wal/-shm sidecars), written under a
 *   temporary name and renamed, so a half-written backup never carries the final name.
 *
 * Restore replaces the database file with a verified backup. It refuses while any process has the
 * database open (the web app, `npm run seed`), because replacing a file under an open SQLite
 * connection corrupts what that process writes next. The replaced file is kept as
 * `paretherm.sqlite.before-restore`. The Redis queue is not part of the backup: after a restore,
 * the app's start-up reconciliation re-enqueues the restored database's queued and running sweeps,
 * and jobs of sweeps the restored database does not know are discarded (their queue token differs).
 *
 * Plain relative imports and raw sqlite3 (no Sequelize, no migrations): the commands run under tsx
 * and must never change the database they copy.
 */
import sqlite3 from 'sqlite3';
import fs from 'node:fs';
import path from 'node:path';
import { migrations } from './db/migrations/index';

export const DATABASE_NAME = 'paretherm.sqlite';

function open(file: string, mode: number): Promise<sqlite3.Database> {
	return new Promise((resolve, reject) => {
		const db = new sqlite3.Database(file, mode, (err) => (err ? reject(err) : resolve(db)));
	});
}
function all<T = Record<string, unknown>>(db: sqlite3.Database, sql: string, params: unknown[] = []): Promise<T[]> {
	return new Promise((resolve, reject) => db.all(sql, params, (err, rows) => (err ? reject(err) : resolve(rows as T[]))));
}
function run(db: sqlite3.Database, sql: string, params: unknown[] = []): Promise<void> {
	return new Promise((resolve, reject) => db.run(sql, params, (err) => (err ? reject(err) : resolve())));
}
function close(db: sqlite3.Database): Promise<void> {
	return new Promise((resolve) => db.close(() => resolve()));
}

export interface DatabaseSummary {
	migrations: string[];
	/** Row count per table (sqlite_* tables left out). */
	tables: Record<string, number>;
}

/** Thrown with a message that says what to do; the CLI prints it and exits 1. */
export class BackupError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'BackupError';
	}
}

/**
 * Checks that `file` is a sound Paretherm database: SQLite's quick_check passes, the
 * schema_migrations table exists and lists the first migration, and it lists no migration this
 * code does not know (a backup from a newer release cannot be opened by an older one).
 */
export async function verifyDatabase(file: string): Promise<DatabaseSummary> {
	if (!fs.existsSync(file)) throw new BackupError(`No file at ${file}.`);
	const head = Buffer.alloc(16);
	const fd = fs.openSync(file, 'r');
	try {
		fs.readSync(fd, head, 0, 16, 0);
	} finally {
		fs.closeSync(fd);
	}
	if (head.toString('latin1') !== 'SQLite format 3\0') throw new BackupError(`${file} is not an SQLite database (wrong file header).`);
	const db = await open(file, sqlite3.OPEN_READONLY);
	try {
		const check = await all<{ quick_check: string }>(db, 'PRAGMA quick_check');
		if (check.length !== 1 || check[0].quick_check !== 'ok')
			throw new BackupError(`${file} is damaged (SQLite quick_check: ${check.map((r) => r.quick_check).slice(0, 3).join('; ')}).`);
		const names = (await all<{ name: string }>(db, "SELECT name FROM sqlite_master WHERE type = 'table' AND name NOT LIKE 'sqlite_%' ORDER BY name")).map((r) => r.name);
		if (!names.includes('schema_migrations'))
			throw new BackupError(`${file} is an SQLite database but not a Paretherm one (it has no schema_migrations table).`);
		const applied = (await all<{ id: string }>(db, 'SELECT id FROM schema_migrations ORDER BY id')).map((r) => r.id);
		if (!applied.includes(migrations[0].id))
			throw new BackupError(`${file} has a schema_migrations table without Paretherm's first migration (${migrations[0].id}); it is not a Paretherm database.`);
		const known = new Set(migrations.map((m) => m.id));
		const newer = applied.filter((id) => !known.has(id));
		if (newer.length)
			throw new BackupError(`${file} was written by a newer Paretherm (migrations ${newer.join(', ')} are unknown here); restore it with that release.`);
		const tables: Record<string, number> = {};
		for (const t of names) tables[t] = (await all<{ n: number }>(db, `SELECT COUNT(*) AS n FROM "${t.replace(/"/g, '""')}"`))[0].n;
		return { migrations: applied, tables };
	} finally {
		await close(db);
	}
}

export interface BackupResult extends DatabaseSummary {
	file: string;
	bytes: number;
}

/** A consistent snapshot of `source` (see the module comment), written to `out`. */
export async function backupDatabase(source: string, out: string): Promise<BackupResult> {
	if (!fs.existsSync(source)) throw new BackupError(`No database at ${source}; check PARETHERM_DATA_DIR.`);
	const target = path.resolve(out);
	if (fs.existsSync(target)) throw new BackupError(`${target} exists already; choose another --out file (a backup never overwrites one).`);
	fs.mkdirSync(path.dirname(target), { recursive: true });
	const temp = `${target}.partial-${process.pid}`;
	fs.rmSync(temp, { force: true });
	// Read-only: the backup can never change the live database. The busy timeout lets it wait
	// out a checkpoint instead of failing.
	const db = await open(source, sqlite3.OPEN_READONLY);
	try {
		db.configure('busyTimeout', 10_000);
		await run(db, 'VACUUM INTO ?', [temp]);
	} catch (e) {
		fs.rmSync(temp, { force: true });
		throw new BackupError(`Could not copy ${source}: ${(e as Error).message}`);
	} finally {
		await close(db);
	}
	try {
		const fd = fs.openSync(temp, 'r+');
		fs.fsyncSync(fd);
		fs.closeSync(fd);
		const summary = await verifyDatabase(temp);
		fs.renameSync(temp, target);
		return { file: target, bytes: fs.statSync(target).size, ...summary };
	} catch (e) {
		fs.rmSync(temp, { force: true });
		throw e;
	}
}

/**
 * Processes (other than this one) that have `file` open, found through /proc on Linux. Returns
 * null where /proc is not available, so callers can say the check could not be made.
 */
export function processesUsing(file: string): { pid: number; command: string }[] | null {
	if (!fs.existsSync('/proc/self/fd')) return null;
	const wanted = new Set<string>();
	for (const f of [file, `${file}-wal`, `${file}-shm`]) {
		try {
			wanted.add(fs.realpathSync(f));
		} catch {
			/* not there */
		}
	}
	const found: { pid: number; command: string }[] = [];
	for (const entry of fs.readdirSync('/proc')) {
		const pid = Number(entry);
		if (!Number.isInteger(pid) || pid === process.pid) continue;
		let fds: string[];
		try {
			fds = fs.readdirSync(`/proc/${pid}/fd`);
		} catch {
			continue; // gone, or another user's process we may not inspect
		}
		for (const fd of fds) {
			let target: string;
			try {
				target = fs.readlinkSync(`/proc/${pid}/fd/${fd}`);
			} catch {
				continue;
			}
			if (wanted.has(target)) {
				let command = '';
				try {
					command = fs.readFileSync(`/proc/${pid}/cmdline`, 'utf8').split('\0').filter(Boolean).join(' ').slice(0, 200);
				} catch {
					/* exited meanwhile */
				}
				found.push({ pid, command });
				break;
			}
		}
	}
	return found;
}

export interface RestoreResult {
	restored: DatabaseSummary;
	database: string;
	/** Where the database that was replaced now is (null when there was none). */
	previous: string | null;
}

/**
 * Replace `<dataDir>/paretherm.sqlite` with the backup `file`. Refuses while a process has the
 * database open, and when the backup does not verify; keeps the replaced file (with the content
 * of its WAL folded in) as `paretherm.sqlite.before-restore`.
 */
export async function restoreDatabase(file: string, dataDir: string): Promise<RestoreResult> {
	const source = path.resolve(file);
	const database = path.join(path.resolve(dataDir), DATABASE_NAME);
	if (source === database) throw new BackupError('The backup file is the database itself; give the path of a backup file.');
	const restored = await verifyDatabase(source);

	const users = processesUsing(database);
	if (users && users.length)
		throw new BackupError(
			`The database ${database} is open in ${users.map((u) => `pid ${u.pid} (${u.command || 'unknown command'})`).join(', ')}. ` +
				'Stop the app (and any `npm run seed`) on this data folder first, then restore.'
		);
	// The app's private redis-server lives as long as the app (its pid file is in the data folder).
	const redisPid = Number(readIfExists(path.join(path.resolve(dataDir), 'redis', 'redis-server.pid'))?.trim());
	if (Number.isInteger(redisPid) && redisPid > 0 && alive(redisPid))
		throw new BackupError(`The app's redis-server (pid ${redisPid}) is running on this data folder: the app is probably running. Stop it first, then restore.`);
	if (users === null && fs.existsSync(`${database}-wal`) && fs.statSync(`${database}-wal`).size > 0)
		throw new BackupError(`${database}-wal is not empty: the app may be running on this data folder. Stop it first, then restore.`);

	fs.mkdirSync(path.dirname(database), { recursive: true });
	let previous: string | null = null;
	if (fs.existsSync(database)) {
		// Fold a WAL left by a crash into the main file, so the kept copy is complete on its own.
		const db = await open(database, sqlite3.OPEN_READWRITE);
		try {
			db.configure('busyTimeout', 5_000);
			await all(db, 'PRAGMA wal_checkpoint(TRUNCATE)');
			await run(db, 'PRAGMA journal_mode = DELETE');
		} finally {
			await close(db);
		}
		previous = `${database}.before-restore`;
		if (fs.existsSync(previous)) fs.renameSync(previous, `${previous}.${fs.statSync(previous).mtime.toISOString().replace(/[:.]/g, '-')}`);
		fs.renameSync(database, previous);
	}
	// A WAL or shared-memory file must never outlive the database it belongs to.
	for (const side of ['-wal', '-shm', '-journal']) fs.rmSync(`${database}${side}`, { force: true });
	const temp = `${database}.restoring-${process.pid}`;
	fs.copyFileSync(source, temp);
	const fd = fs.openSync(temp, 'r+');
	fs.fsyncSync(fd);
	fs.closeSync(fd);
	fs.renameSync(temp, database);
	return { restored, database, previous };
}

function readIfExists(file: string): string | null {
	try {
		return fs.readFileSync(file, 'utf8');
	} catch {
		return null;
	}
}

function alive(pid: number): boolean {
	try {
		process.kill(pid, 0);
		return true;
	} catch (e) {
		return (e as NodeJS.ErrnoException).code === 'EPERM';
	}
}

/** `backups/paretherm-20260314-101500.sqlite` under the data folder. */
export function defaultBackupFile(dataDir: string, now = new Date()): string {
	const stamp = now.toISOString().slice(0, 19).replace(/[-:]/g, '').replace('T', '-');
	return path.join(path.resolve(dataDir), 'backups', `paretherm-${stamp}.sqlite`);
}
