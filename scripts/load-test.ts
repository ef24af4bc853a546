/**
 * `npm run load [-- --connections 50 --duration 20 | --requests 5000]`: a bounded load test on loopback.
 *
 * Starts the BUILT app (`npm run build` first) on 127.0.0.1 with a fresh data folder seeded with
 * the demo (including its finished sweep), signs in as the demo engineer, queues a sweep, and while
 * that sweep runs lets `connections` concurrent users read, for `duration` seconds (or until
 * `requests` answers), round robin:
 * the running sweep's page, its progress JSON, the finished sweep's fronts and points JSON, and the
 * running sweep's points. Prints throughput, latency percentiles (p95 computed from every
 * response), status codes and errors; exits 1 on any error or non-2xx answer.
 *
 * Prints each figure beside its target (≥ 200 req/s, p95 ≤ 300 ms, no errors) and the machine's
 * load average, since on shared cores the figures measure the neighbours too.
 *
 * Speed figures live here and in `npm run bench`, never in tests; tests/hardening/load.test.ts runs
 * a small version and asserts only "no errors, no 5xx".
 */
import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import autocannon from 'autocannon';

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const EMAIL = 'engineer@paretherm.test';
const PASSWORD = 'demo-paretherm-2026';

export interface LoadOptions {
	connections: number;
	/** How long the readers read … */
	duration_s?: number;
	/** … or how many requests they send in all (takes precedence over duration_s). */
	requests?: number;
	/** Simulations per chunk of the running sweep (default: the service's choice). */
	sweepChunkSize?: number;
	/** Extra environment for the app process. */
	appEnv?: Record<string, string>;
	/** Grid of the sweep that runs during the load: lead times × set-points per scenario. */
	sweepLeadTimes_s?: number[];
	/** Print progress lines (the CLI does; the test does not). */
	log?: (m: string) => void;
	keepData?: boolean;
}

export interface LoadReport {
	requests: number;
	duration_s: number;
	throughput_rps: number;
	latency_ms: { p50: number; p95: number; p97_5: number; p99: number; max: number; mean: number };
	statusCodes: Record<string, number>;
	errors: number;
	timeouts: number;
	non2xx: number;
	sweep: { id: number; statusBefore: string; statusAfter: string; percentAfter: number };
	perPath: Record<string, { count: number; p95_ms: number }>;
}

async function freePort(): Promise<number> {
	return new Promise((resolve, reject) => {
		const srv = net.createServer();
		srv.listen(0, '127.0.0.1', () => {
			const { port } = srv.address() as net.AddressInfo;
			srv.close(() => resolve(port));
		});
		srv.on('error', reject);
	});
}

function percentile(sorted: number[], p: number): number {
	if (!sorted.length) return NaN;
	return sorted[Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1))];
}

export async function runLoad(opts: LoadOptions): Promise<LoadReport> {
	const log = opts.log ?? (() => {});
	if (!fs.existsSync(path.join(ROOT, 'build/index.js'))) throw new Error('No build/ found: run `npm run build` first.');
	const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'paretherm-load-'));
	let app: ChildProcess | null = null;
	let output = '';
	try {
		log(`seeding the demo into ${dataDir} …`);
		// Not execFileSync: a caller's event loop (a test runner's worker) must stay free while the demo seeds.
		await new Promise<void>((resolve, reject) => {
			const child = spawn(path.join(ROOT, 'node_modules/.bin/tsx'), ['scripts/seed.ts'], { cwd: ROOT, env: { ...process.env, PARETHERM_DATA_DIR: dataDir, PARETHERM_BCRYPT_COST: '4' }, stdio: ['ignore', 'pipe', 'pipe'] });
			let seedOutput = '';
			child.stdout!.on('data', (d) => (seedOutput += d));
			child.stderr!.on('data', (d) => (seedOutput += d));
			child.once('error', reject);
			child.once('close', (code) => (code === 0 ? resolve() : reject(new Error(`seeding the demo failed (exit ${code}):\n${seedOutput}`))));
		});

		const port = await freePort();
		const base = `http://127.0.0.1:${port}`;
		const env: NodeJS.ProcessEnv = { ...process.env, PARETHERM_DATA_DIR: dataDir, PORT: String(port), HOST: '127.0.0.1', ORIGIN: base, PARETHERM_BCRYPT_COST: '4', ...opts.appEnv };
		delete env.REDIS_URL; // the newcomer's set-up: private redis-server, in-process worker
		app = spawn(process.execPath, ['scripts/start.js'], { cwd: ROOT, env, stdio: ['ignore', 'pipe', 'pipe'] });
		app.stdout!.on('data', (d) => (output += d));
		app.stderr!.on('data', (d) => (output += d));
		const deadline = Date.now() + 60_000;
		for (;;) {
			if (app.exitCode !== null) throw new Error(`the app exited early:\n${output}`);
			try {
				if ((await fetch(`${base}/login`)).status === 200) break;
			} catch {
				/* not listening yet */
			}
			if (Date.now() > deadline) throw new Error(`the app did not start within 60 s:\n${output}`);
			await new Promise((r) => setTimeout(r, 150));
		}

		const signIn = await fetch(`${base}/login`, {
			method: 'POST',
			headers: { 'content-type': 'application/x-www-form-urlencoded', origin: base },
			body: new URLSearchParams({ email: EMAIL, password: PASSWORD }),
			redirect: 'manual'
		});
		const cookie = signIn.headers.getSetCookie().map((c) => c.split(';')[0]).find((c) => c.startsWith('paretherm_session='));
		if (!cookie) throw new Error(`sign-in answered ${signIn.status} without a session cookie`);
		const headers = { cookie, accept: 'application/json' };
		const programId = Number(/\/programs\/(\d+)/.exec((await fetch(`${base}/`, { headers, redirect: 'manual' })).headers.get('location') ?? '')?.[1]);
		const list = (await (await fetch(`${base}/api/programs/${programId}/sweeps`, { headers })).json()) as { sweeps: { id: number; status: string }[] };
		const finished = list.sweeps.find((s) => s.status === 'done');
		if (!finished) throw new Error('the seeded demo sweep is not there');

		// A sweep that keeps both cores busy while the readers read.
		const created = await fetch(`${base}/api/programs/${programId}/sweeps`, {
			method: 'POST',
			headers: { ...headers, 'content-type': 'application/json' },
			body: JSON.stringify({
				name: 'Load-test sweep',
				scenarioId: 'cold-morning-depot',
				...(opts.sweepChunkSize ? { chunkSize: opts.sweepChunkSize } : {}),
				definition: {
					cellIds: ['demo-nmc-pouch'],
					packIds: ['demo-van-pack'],
					ambients_K: [253.15, 263.15, 273.15],
					statesOfHealth: [1, 0.85],
					arrivalSocs: [0.2, 0.4],
					leadTimes_s: opts.sweepLeadTimes_s ?? [0, 300, 600, 900, 1200, 1500, 1800, 2100, 2400, 3000],
					setpoints_K: [283.15, 288.15, 293.15, 298.15, 303.15, 308.15]
				}
			})
		});
		if (created.status !== 201) throw new Error(`creating the sweep answered ${created.status}: ${await created.text()}`);
		const running = ((await created.json()) as { id: number }).id;
		const statusOf = async () => (await (await fetch(`${base}/api/programs/${programId}/sweeps/${running}`, { headers })).json()) as { status: string; progress: { percent: number } };
		const before = await statusOf();

		const paths = [
			`/programs/${programId}/sweeps/${running}`, // the sweep page (HTML, server-rendered)
			`/api/programs/${programId}/sweeps/${running}`, // progress
			`/api/programs/${programId}/sweeps/${finished.id}/fronts`,
			`/api/programs/${programId}/sweeps/${finished.id}/points?limit=200`,
			`/api/programs/${programId}/sweeps/${running}/points?limit=200`
		];
		// One read of each path first: the server loads a route's modules on its first request,
		// which is start-up, not the steady state the figures describe.
		for (const p of paths) {
			const warm = await fetch(base + p, { headers: { ...headers, accept: p.startsWith('/api/') ? 'application/json' : 'text/html' } });
			if (warm.status !== 200) throw new Error(`warming up ${p} answered ${warm.status}`);
			await warm.arrayBuffer();
		}
		const duration_s = opts.duration_s ?? 20;
		const bound = opts.requests ? `${opts.requests} requests` : `${duration_s} s`;
		log(`${opts.connections} connections for ${bound} on ${base}, sweep ${running} running (${before.status}, ${before.progress.percent} %) …`);
		const times: number[] = [];
		const byPath = new Map<string, number[]>();
		const instance = autocannon({
			url: base,
			connections: opts.connections,
			...(opts.requests ? { amount: opts.requests } : { duration: duration_s }),
			timeout: 30,
			headers: { cookie },
			requests: paths.map((p) => ({ method: 'GET' as const, path: p, headers: { cookie, accept: p.startsWith('/api/') ? 'application/json' : 'text/html' } }))
		});
		// Per-response times for an exact p95 (autocannon's summary has p90 and p97.5, not p95).
		const pathOfClient = new Map<unknown, number>();
		instance.on('response', (client: unknown, _status: number, _bytes: number, responseTime: number) => {
			times.push(responseTime);
			// Each connection walks `paths` in order; its response number tells which path it was.
			const i = pathOfClient.get(client) ?? 0;
			pathOfClient.set(client, i + 1);
			const p = paths[i % paths.length];
			const list = byPath.get(p) ?? [];
			list.push(responseTime);
			byPath.set(p, list);
		});
		const result = await instance;
		const after = await statusOf();
		times.sort((a, b) => a - b);
		const statusCodes: Record<string, number> = {};
		for (const [code, v] of Object.entries(result.statusCodeStats ?? {})) statusCodes[code] = (v as { count: number }).count;
		const perPath: LoadReport['perPath'] = {};
		for (const [p, list] of byPath) {
			list.sort((a, b) => a - b);
			perPath[p] = { count: list.length, p95_ms: percentile(list, 95) };
		}
		return {
			requests: result.requests.total,
			duration_s: result.duration,
			throughput_rps: result.requests.average,
			latency_ms: { p50: result.latency.p50, p95: percentile(times, 95), p97_5: result.latency.p97_5, p99: result.latency.p99, max: result.latency.max, mean: result.latency.mean },
			statusCodes,
			errors: result.errors,
			timeouts: result.timeouts,
			non2xx: result.non2xx,
			sweep: { id: running, statusBefore: before.status, statusAfter: after.status, percentAfter: after.progress.percent },
			perPath
		};
	} finally {
		if (app && app.exitCode === null) {
			const exited = new Promise((r) => app!.once('exit', r));
			app.kill('SIGTERM');
			const timer = setTimeout(() => app!.kill('SIGKILL'), 10_000);
			await exited;
			clearTimeout(timer);
		}
		if (/unexpected error/.test(output)) log(`the app logged unexpected errors:\n${output.split('\n').filter((l) => /unexpected error/.test(l)).slice(0, 5).join('\n')}`);
		if (!opts.keepData) fs.rmSync(dataDir, { recursive: true, force: true });
	}
}

function arg(name: string, fallback: number): number {
	const i = process.argv.indexOf(`--${name}`);
	const v = i >= 0 ? Number(process.argv[i + 1]) : fallback;
	if (!Number.isFinite(v) || v <= 0) {
		console.error(`--${name} needs a positive number`);
		process.exit(2);
	}
	return v;
}

if (process.argv[1] && import.meta.url === pathToFileURL(path.resolve(process.argv[1])).href) {
	const connections = Math.min(500, Math.round(arg('connections', 50)));
	const duration_s = Math.min(600, arg('duration', 20));
	const requests = process.argv.includes('--requests') ? Math.min(10_000_000, Math.round(arg('requests', 1))) : undefined;
	const TARGET = { throughput_rps: 200, p95_ms: 300 };
	const loadAvg = () => os.loadavg().map((v) => v.toFixed(2)).join(', ');
	const loadBefore = loadAvg();
	try {
		const r = await runLoad({ connections, duration_s, requests, log: (m) => console.log(m), keepData: process.argv.includes('--keep') });
		const ms = (v: number) => `${v.toFixed(1)} ms`;
		console.log('');
		console.log(`Load: ${connections} connections, ${r.duration_s} s, loopback, sweep ${r.sweep.id} ${r.sweep.statusBefore} → ${r.sweep.statusAfter} (${r.sweep.percentAfter} %)`);
		console.log(`  requests     ${r.requests}  (${r.throughput_rps.toFixed(0)} req/s)`);
		console.log(`  latency      p50 ${ms(r.latency_ms.p50)}  p95 ${ms(r.latency_ms.p95)}  p97.5 ${ms(r.latency_ms.p97_5)}  p99 ${ms(r.latency_ms.p99)}  max ${ms(r.latency_ms.max)}`);
		for (const [p, v] of Object.entries(r.perPath)) console.log(`  ${p.padEnd(58)} ${String(v.count).padStart(6)} req  p95 ${ms(v.p95_ms)}`);
		console.log(`  status codes ${JSON.stringify(r.statusCodes)}`);
		console.log(`  errors ${r.errors}, timeouts ${r.timeouts}, non-2xx ${r.non2xx}`);
		const bad = r.errors + r.timeouts + r.non2xx;
		console.log(`  machine load average (1, 5, 15 min): ${loadBefore} before, ${loadAvg()} after, on ${os.availableParallelism?.() ?? os.cpus().length} cores`);
		console.log('');
		console.log('Load figures against their targets:');
		const line = (figure: string, measured: string, target: string, met: boolean | null) =>
			console.log(`  ${figure.padEnd(22)} ${measured.padStart(10)}   ${met === null ? '' : `target ${target.padEnd(9)} ${met ? 'met' : 'NOT met'}`}`);
		line('throughput', `${r.throughput_rps.toFixed(0)} req/s`, `≥ ${TARGET.throughput_rps}`, r.throughput_rps >= TARGET.throughput_rps);
		line('latency p50', ms(r.latency_ms.p50), '', null);
		line('latency p95', ms(r.latency_ms.p95), `≤ ${TARGET.p95_ms} ms`, r.latency_ms.p95 <= TARGET.p95_ms);
		line('errors and non-2xx', String(bad), '0', bad === 0);
		if (bad > 0) {
			console.error(`FAILED: ${bad} error(s) or non-2xx answer(s).`);
			process.exit(1);
		}
	} catch (e) {
		console.error(e instanceof Error ? e.message : e);
		process.exit(1);
	}
}
