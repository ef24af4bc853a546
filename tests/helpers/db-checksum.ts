/** A SHA-256 over every row of every table, to prove a refused request changed nothing stored. */
import sqlite3 from 'sqlite3';
import crypto from 'node:crypto';
import path from 'node:path';

export async function databaseChecksum(dataDir: string, skip: string[] = []): Promise<string> {
	const db = new sqlite3.Database(path.join(dataDir, 'paretherm.sqlite'), sqlite3.OPEN_READONLY);
	const all = (sql: string) =>
		new Promise<Record<string, unknown>[]>((resolve, reject) =>
			db.all(sql, (err, rows) => (err ? reject(err) : resolve(rows as Record<string, unknown>[])))
		);
	try {
		const tables = (await all("SELECT name FROM sqlite_master WHERE type='table' ORDER BY name"))
			.map((r) => String(r.name))
			.filter((t) => !skip.includes(t));
		const h = crypto.createHash('sha256');
		for (const t of tables) {
			h.update(`#${t}\n`);
			for (const row of await all(`SELECT * FROM "${t}" ORDER BY rowid`)) h.update(JSON.stringify(row) + '\n');
		}
		return h.digest('hex');
	} finally {
		db.close();
	}
}

/** Runs one read-only query against the app's database (tests look up ids the UI would show). */
export async function queryDb<T = Record<string, unknown>>(dataDir: string, sql: string, params: unknown[] = []): Promise<T[]> {
	const db = new sqlite3.Database(path.join(dataDir, 'paretherm.sqlite'), sqlite3.OPEN_READONLY);
	try {
		return await new Promise<T[]>((resolve, reject) => db.all(sql, params, (err, rows) => (err ? reject(err) : resolve(rows as T[]))));
	} finally {
		db.close();
	}
}
