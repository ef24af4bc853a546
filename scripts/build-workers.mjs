/**
 * Compiles the sweep compute code to plain JavaScript (part of `npm run build`, after `vite build`):
 *
 *   build/worker/sim-thread.mjs  the simulation thread entry (engine + compute, one self-contained
 *                                bundle) that every thread pool loads — the web process, the
 *                                worker process and scripts alike, so threads never compile
 *                                TypeScript at run time;
 *   build/worker/index.mjs       the worker process (`npm run worker`, and the web app's own
 *                                worker child); npm packages stay external (node_modules).
 *   build/worker/manifest.json   the source files each bundle was built from, with their sizes and
 *                                modification times, so code running from TypeScript source (tsx,
 *                                vitest, `vite dev`) can tell a stale bundle and rebuild it.
 *
 * Usage: `node scripts/build-workers.mjs`; also imported by src/lib/server/queue/compiled.ts.
 */
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

export const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
export const OUT_DIR = path.join(ROOT, 'build', 'worker');

const ENTRIES = [
	{ name: 'sim-thread', source: 'src/lib/server/queue/sim-thread.ts', bundleAll: true },
	{ name: 'index', source: 'worker/index.ts', bundleAll: false }
];

/** Write through a temporary file and rename, so a concurrent reader never sees half a file. */
function writeAtomic(file, contents) {
	const tmp = `${file}.${process.pid}.${Date.now()}.tmp`;
	fs.writeFileSync(tmp, contents);
	fs.renameSync(tmp, file);
}

export async function buildWorkers({ quiet = false } = {}) {
	const esbuild = await import('esbuild');
	fs.mkdirSync(OUT_DIR, { recursive: true });
	const inputs = new Set();
	const t0 = Date.now();
	for (const entry of ENTRIES) {
		const result = await esbuild.build({
			absWorkingDir: ROOT,
			entryPoints: [entry.source],
			outfile: path.join(OUT_DIR, `${entry.name}.mjs`),
			bundle: true,
			platform: 'node',
			format: 'esm',
			target: 'node20',
			sourcemap: 'linked',
			// The worker process keeps bullmq, ioredis and piscina as installed packages (piscina
			// starts its threads from its own files); the thread bundle carries everything.
			packages: entry.bundleAll ? undefined : 'external',
			// Some bundled CommonJS packages call require() for Node built-ins.
			banner: entry.bundleAll ? { js: "import { createRequire as __pCreateRequire } from 'node:module'; const require = __pCreateRequire(import.meta.url);" } : undefined,
			metafile: true,
			write: false,
			logLevel: 'warning',
			legalComments: 'none'
		});
		for (const file of result.outputFiles) writeAtomic(file.path, file.contents);
		for (const input of Object.keys(result.metafile.inputs)) if (!input.includes('node_modules')) inputs.add(input);
	}
	const files = {};
	for (const rel of [...inputs].sort()) {
		const st = fs.statSync(path.join(ROOT, rel));
		files[rel] = { size: st.size, mtime_ms: st.mtimeMs };
	}
	writeAtomic(path.join(OUT_DIR, 'manifest.json'), JSON.stringify({ builtAt: new Date().toISOString(), files }, null, '\t'));
	if (!quiet) console.log(`compiled the worker process and simulation thread into ${path.relative(ROOT, OUT_DIR)}/ (${inputs.size} source files, ${Date.now() - t0} ms)`);
}

/** Source files changed (or gone) since the bundles were built; empty when they are current. */
export function staleSources() {
	let manifest;
	try {
		manifest = JSON.parse(fs.readFileSync(path.join(OUT_DIR, 'manifest.json'), 'utf8'));
	} catch {
		return ['(no build/worker/manifest.json)'];
	}
	for (const entry of ENTRIES) if (!fs.existsSync(path.join(OUT_DIR, `${entry.name}.mjs`))) return [`(no build/worker/${entry.name}.mjs)`];
	const changed = [];
	for (const [rel, was] of Object.entries(manifest.files ?? {})) {
		try {
			const st = fs.statSync(path.join(ROOT, rel));
			if (st.size !== was.size || st.mtimeMs !== was.mtime_ms) changed.push(rel);
		} catch {
			changed.push(rel);
		}
	}
	return changed;
}

if (process.argv[1] && import.meta.url === pathToFileURL(path.resolve(process.argv[1])).href) {
	try {
		await buildWorkers();
	} catch (e) {
		console.error(e instanceof Error ? e.message : e);
		process.exit(1);
	}
}
