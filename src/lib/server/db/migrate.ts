/**
 * Versioned migrations. Each migration runs once, inside a transaction, and its id is recorded in
 * `schema_migrations`. Migrations only ever add; a release never drops or rewrites user data, so
 * an older database is always brought forward, never rebuilt (no `sequelize.sync({ force })`).
 */
import type { Sequelize } from 'sequelize';
import { migrations } from './migrations/index';

export async function runMigrations(sequelize: Sequelize): Promise<string[]> {
	const qi = sequelize.getQueryInterface();
	await sequelize.query(
		'CREATE TABLE IF NOT EXISTS schema_migrations (id TEXT PRIMARY KEY, applied_at TEXT NOT NULL)'
	);
	const [rows] = await sequelize.query('SELECT id FROM schema_migrations');
	const applied = new Set((rows as { id: string }[]).map((r) => r.id));
	const ids = migrations.map((m) => m.id);
	if (new Set(ids).size !== ids.length) throw new Error('Two migrations share an id; give each a unique id.');
	const ran: string[] = [];
	for (const m of migrations) {
		if (applied.has(m.id)) continue;
		await sequelize.transaction(async (transaction) => {
			await m.up(qi, transaction);
			await sequelize.query('INSERT INTO schema_migrations (id, applied_at) VALUES (?, ?)', {
				replacements: [m.id, new Date().toISOString()],
				transaction
			});
		});
		ran.push(m.id);
	}
	return ran;
}
