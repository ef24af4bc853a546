/** Every page and JSON route, read from the route tree itself so a new route cannot be forgotten. */
import fs from 'node:fs';
import path from 'node:path';
import { ROOT } from './app';

export interface RouteFile {
	id: string; // e.g. /programs/[programId]/sweeps
	kind: 'page' | 'endpoint';
	methods: string[]; // for endpoints: exported handlers; for pages: GET plus named form actions
	actions: string[];
}

export function listRoutes(): RouteFile[] {
	const base = path.join(ROOT, 'src/routes');
	const out: RouteFile[] = [];
	const walk = (dir: string) => {
		for (const entry of fs.readdirSync(dir, { withFileTypes: true })) {
			const full = path.join(dir, entry.name);
			if (entry.isDirectory()) walk(full);
			else if (
				entry.name === '+server.ts' ||
				entry.name === '+page.svelte' ||
				(entry.name === '+page.server.ts' && !fs.existsSync(path.join(dir, '+page.svelte')))
			) {
				const rel = '/' + path.relative(base, dir).split(path.sep).filter((s) => !/^\(.*\)$/.test(s)).join('/');
				const id = rel === '/' ? '/' : rel.replace(/\/$/, '');
				if (entry.name === '+server.ts') {
					const src = fs.readFileSync(full, 'utf8');
					const methods = [...src.matchAll(/export\s+(?:const|async function|function)\s+(GET|POST|PUT|PATCH|DELETE)\b/g)].map((m) => m[1]);
					out.push({ id, kind: 'endpoint', methods, actions: [] });
				} else {
					const serverFile = path.join(dir, '+page.server.ts');
					const src = fs.existsSync(serverFile) ? fs.readFileSync(serverFile, 'utf8') : '';
					const block = /export const actions[^=]*=\s*\{([\s\S]*)\};?/.exec(src)?.[1] ?? '';
					const actions = [...block.matchAll(/^\t(\w+):\s*async/gm)].map((m) => m[1]);
					out.push({ id, kind: 'page', methods: ['GET'], actions });
				}
			}
		}
	};
	walk(base);
	return out.sort((a, b) => a.id.localeCompare(b.id) || a.kind.localeCompare(b.kind));
}
