/**
 * `npm run backup -- [--out file]`: a consistent snapshot of the SQLite database, taken while the
 * app runs (see src/lib/server/backup.ts for why VACUUM INTO). Default file:
 * <PARETHERM_DATA_DIR>/backups/paretherm-YYYYMMDD-HHMMSS.sqlite. Restore with `npm run restore`.
 */
import path from 'node:path';
import { BackupError, DATABASE_NAME, backupDatabase, defaultBackupFile } from '../src/lib/server/backup';
import { config } from '../src/lib/server/config';

const args = process.argv.slice(2);
if (args.includes('--help') || args.includes('-h')) {
	console.log('Usage: npm run backup -- [--out file]   (data folder: PARETHERM_DATA_DIR, default ./data)');
	process.exit(0);
}
const outAt = args.indexOf('--out');
if (outAt >= 0 && !args[outAt + 1]) {
	console.error('--out needs a file name, e.g. npm run backup -- --out /backups/paretherm.sqlite');
	process.exit(1);
}
const dataDir = config().dataDir;
const out = outAt >= 0 ? path.resolve(args[outAt + 1]) : defaultBackupFile(dataDir);

try {
	const t0 = Date.now();
	const r = await backupDatabase(path.join(dataDir, DATABASE_NAME), out);
	const rows = Object.entries(r.tables)
		.filter(([, n]) => n > 0)
		.map(([t, n]) => `${t} ${n}`)
		.join(', ');
	console.log(`Backup written: ${r.file} (${(r.bytes / 1024).toFixed(0)} kB in ${Date.now() - t0} ms)`);
	console.log(`  migrations: ${r.migrations.join(', ')}`);
	console.log(`  rows: ${rows}`);
	console.log(`Restore it with: npm run restore -- ${r.file}   (stop the app first)`);
} catch (e) {
	console.error(e instanceof BackupError ? e.message : e);
	process.exit(1);
}
