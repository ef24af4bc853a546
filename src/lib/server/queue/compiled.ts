/**
 * Where the compiled sweep compute code is: `build/worker/sim-thread.mjs` (the simulation thread
 * entry) and `build/worker/index.mjs` (the worker process), both written by
 * `scripts/build-workers.mjs` as part of `npm run build`.
 *
 * Threads always run this compiled JavaScript, whatever runs the code that starts them: the built
 * web server, the compiled worker process, or TypeScript source under tsx, vitest or `vite dev`.
 * From source, a bundle older than its sources is rebuilt first (esbuild, well under a second),
 * so scripts and tests never run threads on stale code.
 */
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { config } from '../config';

export type CompiledEntry = 'sim-thread' | 'index';

function moduleDir(): string | null {
	try {
		return path.dirname(fileURLToPath(import.meta.url));
	} catch {
		return null; // not a file URL in this bundle
	}
}

/** True when this module runs from TypeScript source (tsx, vitest, vite dev), not from a build. */
export function runningFromSource(): boolean {
	return import.meta.url.endsWith('.ts');
}

function ancestors(dir: string): string[] {
	const out: string[] = [];
	for (let d = dir; ; d = path.dirname(d)) {
		out.push(d);
		if (path.dirname(d) === d) break;
	}
	return out;
}

/** Candidate locations, nearest first: `<…>/build/worker/<name>.mjs` above this module, then the project root. */
function candidates(name: CompiledEntry): string[] {
	const file = `${name}.mjs`;
	const list: string[] = [];
	const here = moduleDir();
	if (here)
		for (const d of ancestors(here)) {
			if (path.basename(d) === 'build') list.push(path.join(d, 'worker', file));
			list.push(path.join(d, 'build', 'worker', file));
		}
	list.push(path.join(config().root ?? process.cwd(), 'build', 'worker', file));
	return list;
}

/** The project folder (holding scripts/build-workers.mjs) when running from source. */
function sourceRoot(): string | null {
	const here = moduleDir();
	for (const d of here ? ancestors(here) : [config().root ?? process.cwd()])
		if (fs.existsSync(path.join(d, 'scripts', 'build-workers.mjs')) && fs.existsSync(path.join(d, 'package.json'))) return d;
	return null;
}

let freshness: Promise<void> | null = null;

/** From source: rebuild the bundles when they are missing or older than their sources (once per process). */
function ensureFresh(): Promise<void> {
	if (!runningFromSource()) return Promise.resolve();
	freshness ??= (async () => {
		const root = sourceRoot();
		if (!root) return;
		const script = pathToFileURL(path.join(root, 'scripts', 'build-workers.mjs')).href;
		const builder = (await import(/* @vite-ignore */ script)) as {
			staleSources(): string[];
			buildWorkers(o: { quiet: boolean }): Promise<void>;
		};
		const stale = builder.staleSources();
		if (stale.length === 0) return;
		console.log(`[paretherm] compiling the simulation thread and worker (changed: ${stale.slice(0, 3).join(', ')}${stale.length > 3 ? ', …' : ''})`);
		await builder.buildWorkers({ quiet: true });
	})().catch((e) => {
		freshness = null;
		throw new Error(`Could not compile the simulation thread: ${(e as Error).message}. Run \`npm run build\`.`);
	});
	return freshness;
}

/** Absolute path of a compiled entry; throws a clear message when there is none. */
export async function compiledFile(name: CompiledEntry): Promise<string> {
	await ensureFresh();
	const list = candidates(name);
	const found = list.find((c) => fs.existsSync(c));
	if (!found)
		throw new Error(
			`The compiled ${name === 'index' ? 'worker process' : 'simulation thread'} is missing (looked at ${[...new Set(list)].slice(0, 4).join(', ')}, …). ` +
				'Run `npm run build` in the Paretherm folder (or set PARETHERM_ROOT to it).'
		);
	return found;
}
