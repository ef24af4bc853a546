/**
 * Starts the built app (`build/`) as a real server on loopback with its own data folder, seeded
 * with the demo program, and gives tests a small HTTP client that keeps cookies per user.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import net from 'node:net';
import { fileURLToPath } from 'node:url';

// import.meta.url, not __dirname: fixtures run this module under plain node + tsx (ESM), where __dirname is undefined.
export const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
export const DEMO_PASSWORD = 'demo-paretherm-2026';

export async function freePort(): Promise<number> {
	return new Promise((resolve, reject) => {
		const srv = net.createServer();
		srv.listen(0, '127.0.0.1', () => {
			const { port } = srv.address() as net.AddressInfo;
			srv.close(() => resolve(port));
		});
		srv.on('error', reject);
	});
}

export function tempDataDir(prefix = 'paretherm-test-'): string {
	return fs.mkdtempSync(path.join(os.tmpdir(), prefix));
}

/**
 * Runs a child process in the project folder to its end and gives its exit code and output.
 * Asynchronous on purpose: a test process blocked in a synchronous child for a minute (a seed on a
 * busy machine) cannot answer the test runner, which then reports the run as failed.
 */
export function runChild(command: string, args: string[], options: { env?: NodeJS.ProcessEnv; timeout_ms?: number } = {}): Promise<{ code: number | null; out: string }> {
	return new Promise((resolve, reject) => {
		const child = spawn(command, args, { cwd: ROOT, env: options.env ?? process.env, stdio: ['ignore', 'pipe', 'pipe'] });
		let out = '';
		child.stdout!.on('data', (d) => (out += d));
		child.stderr!.on('data', (d) => (out += d));
		const timer = options.timeout_ms ? setTimeout(() => child.kill('SIGKILL'), options.timeout_ms) : null;
		child.once('error', reject);
		child.once('close', (code) => {
			if (timer) clearTimeout(timer);
			resolve({ code, out });
		});
	});
}

export async function seed(dataDir: string, script = 'scripts/seed.ts', extraEnv: Record<string, string> = {}): Promise<void> {
	const r = await runChild(path.join(ROOT, 'node_modules/.bin/tsx'), [script], {
		env: { ...process.env, PARETHERM_DATA_DIR: dataDir, PARETHERM_BCRYPT_COST: '4', PARETHERM_SEED_SWEEP: '0', ...extraEnv }
	});
	if (r.code !== 0) throw new Error(`${script} failed (exit ${r.code}):\n${r.out}`);
}

export interface RunningApp {
	url: string;
	dataDir: string;
	proc: ChildProcess;
	log: () => string;
	stop: () => Promise<void>;
}

export async function startApp(options: { dataDir?: string; env?: Record<string, string>; seed?: boolean } = {}): Promise<RunningApp> {
	if (!fs.existsSync(path.join(ROOT, 'build/index.js')))
		throw new Error('No build/ found: run `npm run build` before the server tests (scripts/test.sh does).');
	const dataDir = options.dataDir ?? tempDataDir();
	if (options.seed !== false) await seed(dataDir);
	const port = await freePort();
	const url = `http://localhost:${port}`;
	let output = '';
	const proc = spawn(process.execPath, ['scripts/start.js'], {
		cwd: ROOT,
		env: {
			...process.env,
			PARETHERM_DATA_DIR: dataDir,
			PORT: String(port),
			ORIGIN: url,
			PARETHERM_BCRYPT_COST: '4',
			...options.env
		},
		stdio: ['ignore', 'pipe', 'pipe']
	});
	proc.stdout!.on('data', (d) => (output += d));
	proc.stderr!.on('data', (d) => (output += d));
	const deadline = Date.now() + 60_000;
	for (;;) {
		if (proc.exitCode !== null) throw new Error(`App exited early:\n${output}`);
		try {
			const r = await fetch(`${url}/login`);
			if (r.status === 200) break;
		} catch {
			/* not listening yet */
		}
		if (Date.now() > deadline) throw new Error(`App did not start within 60 s:\n${output}`);
		await new Promise((r) => setTimeout(r, 150));
	}
	return {
		url,
		dataDir,
		proc,
		log: () => output,
		stop: () =>
			new Promise<void>((resolve) => {
				if (proc.exitCode !== null) return resolve();
				proc.once('exit', () => resolve());
				proc.kill('SIGTERM');
				setTimeout(() => proc.kill('SIGKILL'), 5000).unref();
			})
	};
}

/** A browser-like client: keeps its cookies, sends the Origin header forms need. */
export class Client {
	cookies = new Map<string, string>();
	constructor(public base: string) {}

	cookieHeader(): string {
		return [...this.cookies].map(([k, v]) => `${k}=${v}`).join('; ');
	}

	async request(pathname: string, init: RequestInit = {}): Promise<Response> {
		const headers = new Headers(init.headers);
		if (this.cookies.size) headers.set('cookie', this.cookieHeader());
		headers.set('origin', this.base);
		const res = await fetch(this.base + pathname, { ...init, headers, redirect: 'manual' });
		for (const c of res.headers.getSetCookie()) {
			const [pair] = c.split(';');
			const i = pair.indexOf('=');
			const name = pair.slice(0, i);
			const value = pair.slice(i + 1);
			if (!value || /max-age=0/i.test(c)) this.cookies.delete(name);
			else this.cookies.set(name, value);
		}
		return res;
	}

	get(pathname: string) {
		return this.request(pathname);
	}

	/** Posts a form the way a browser without JavaScript does. */
	form(pathname: string, fields: Record<string, string>) {
		return this.request(pathname, {
			method: 'POST',
			headers: { 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html' },
			body: new URLSearchParams(fields).toString()
		});
	}

	/**
	 * After a successful form post (303 to the page, post/redirect/get), the page it leads to, read
	 * with this client's cookies (which carry a message shown once); any other answer as it is.
	 */
	async follow(res: Response): Promise<Response> {
		const location = res.headers.get('location');
		if (res.status !== 303 || !location) return res;
		return this.get(new URL(location, this.base).pathname + new URL(location, this.base).search);
	}

	json(pathname: string, method: string, body?: unknown) {
		return this.request(pathname, {
			method,
			headers: { 'content-type': 'application/json', accept: 'application/json' },
			body: body === undefined ? undefined : JSON.stringify(body)
		});
	}

	async signIn(email: string, password = DEMO_PASSWORD): Promise<Response> {
		return this.form('/login', { email, password });
	}
}

export const DEMO = {
	admin: 'admin@paretherm.test',
	engineer: 'engineer@paretherm.test',
	architect: 'architect@paretherm.test',
	manager: 'manager@paretherm.test',
	viewer: 'viewer@paretherm.test'
} as const;
