/**
 * Runs once before the suites: `svelte-kit sync` writes .svelte-kit/tsconfig.json, which
 * tsconfig.json extends. In a fresh clone after `npm ci` that file is missing and no TypeScript
 * file (test or source) can be transformed. Plain JavaScript on purpose: a TypeScript setup file
 * would itself need the missing file.
 */
import { execFileSync } from 'node:child_process';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');

export default function setup() {
	execFileSync(process.execPath, [path.join(ROOT, 'node_modules/@sveltejs/kit/svelte-kit.js'), 'sync'], { cwd: ROOT, stdio: 'inherit' });
}
