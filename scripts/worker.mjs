// `npm run worker`: starts the compiled sweep worker process (build/worker/index.mjs, written by
// `npm run build`). See worker/index.ts for what it does and the environment it reads.
import fs from 'node:fs';
import { staleSources } from './build-workers.mjs';

const entry = new URL('../build/worker/index.mjs', import.meta.url);
if (!fs.existsSync(entry)) {
	console.error('No compiled worker found. Run `npm run build` first (or `npm run build:workers` for the worker alone).');
	process.exit(1);
}
const stale = staleSources();
if (stale.length) console.warn(`[paretherm worker] note: sources changed since the last build (${stale.slice(0, 3).join(', ')}…); run \`npm run build:workers\` to include them.`);
await import(entry.href);
