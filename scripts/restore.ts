/**
 * `npm run restore -- <backup file>`: replace the database of PARETHERM_DATA_DIR (default ./data)
 * with a backup made by `npm run backup`. Stop the app on that data folder first; the command
 * refuses while any process has the database open. The replaced database is kept as
 * paretherm.sqlite.before-restore. Start the app afterwards: it re-queues the restored
 * database's unfinished sweeps.
 */
import path from 'node:path';
import { BackupError, restoreDatabase } from '../src/lib/server/backup';
import { config } from '../src/lib/server/config';

const file = process.argv.slice(2).find((a) => !a.startsWith('-'));
if (!file || process.argv.includes('--help') || process.argv.includes('-h')) {
	console.log('Usage: npm run restore -- <backup file>   (data folder: PARETHERM_DATA_DIR, default ./data; stop the app first)');
	process.exit(file ? 0 : 1);
}
const dataDir = config().dataDir;

try {
	const r = await restoreDatabase(file, dataDir);
	console.log(`Restored ${path.resolve(file)} into ${r.database}.`);
	console.log(`  migrations: ${r.restored.migrations.join(', ')}`);
	console.log(`  rows: ${Object.entries(r.restored.tables).filter(([, n]) => n > 0).map(([t, n]) => `${t} ${n}`).join(', ')}`);
	if (r.previous) console.log(`The database it replaced is kept as ${r.previous}.`);
	console.log('Start the app now (npm start); unfinished sweeps of the restored database are queued again.');
} catch (e) {
	console.error(e instanceof BackupError ? e.message : e);
	process.exit(1);
}
