/**
 * One Sequelize instance over one SQLite file.
 *
 * The file lives in the data folder (`PARETHERM_DATA_DIR`, default `./data`). WAL lets readers work
 * while the single writer (the web process) stores sweep results; the busy timeout makes a second
 * writer (the seed or backup command) wait instead of failing.
 */
import { Sequelize, Transaction } from 'sequelize';
import sqlite3 from 'sqlite3';
import fs from 'node:fs';
import path from 'node:path';
import { runMigrations } from './migrate';
import { config, type Config } from '../config';

export function dataDir(): string {
	return config().dataDir;
}

export function databaseFile(dir = dataDir()): string {
	return path.join(dir, 'paretherm.sqlite');
}

/**
 * Sequelize's SQLite dialect opens a separate connection for each transaction and sets no busy
 * timeout on it, so concurrent writers would fail at once with SQLITE_BUSY instead of waiting.
 * Every connection we hand it therefore waits up to 5 s for the write lock.
 */
class WaitingDatabase extends sqlite3.Database {
	constructor(filename: string, mode: number, callback: (err: Error | null) => void) {
		super(filename, mode, (err) => {
			if (!err) this.configure('busyTimeout', 5000);
			callback(err);
		});
	}
}
const dialectModule = { ...sqlite3, Database: WaitingDatabase };

/** A Sequelize instance over the database file in `cfg.dataDir` (the folder is created if missing). */
export function createDatabase(cfg: Pick<Config, 'dataDir'>): Sequelize {
	fs.mkdirSync(cfg.dataDir, { recursive: true });
	return new Sequelize({
		dialect: 'sqlite',
		dialectModule,
		storage: databaseFile(cfg.dataDir),
		logging: false,
		// SQLite has one writer; a single pooled connection keeps transactions serialised.
		pool: { max: 1, min: 0, idle: 10_000 },
		retry: { max: 5, match: [/SQLITE_BUSY/] },
		// Each transaction has its own connection. A DEFERRED one that reads and then writes fails at
		// once with SQLITE_BUSY (no busy wait, and retrying the statement cannot help) when another
		// connection committed in between — e.g. saving an input while a sweep stores chunks answered
		// 500. IMMEDIATE takes the write lock at BEGIN, where the busy timeout does wait.
		transactionType: Transaction.TYPES.IMMEDIATE
	});
}

/**
 * The process's database, from the configuration. The models bind to it when they are defined
 * (Sequelize's `Model.init`), so it is made when this module is first imported.
 */
export const sequelize = createDatabase(config());

let ready: Promise<void> | null = null;

/** Connects, sets the pragmas and applies pending migrations. Safe to call many times. */
export function ensureDb(): Promise<void> {
	ready ??= (async () => {
		await sequelize.query('PRAGMA journal_mode = WAL;');
		await sequelize.query('PRAGMA busy_timeout = 5000;');
		await sequelize.query('PRAGMA foreign_keys = ON;');
		await sequelize.query('PRAGMA synchronous = NORMAL;');
		await runMigrations(sequelize);
	})();
	return ready;
}
