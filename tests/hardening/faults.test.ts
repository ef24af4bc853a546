/**
 * Faults with the production layout: the BUILT web app (no worker of its own) and separate
 * compiled worker processes (`npm run worker`) share a real redis-server this test starts (append-only file,
 * fsync always), and mail goes through an SMTP server that refuses everything until told otherwise.
 *
 * In turn: a worker is SIGKILLed in the middle of a chunk, Redis is frozen (SIGSTOP) for a few
 * seconds, Redis is SIGKILLed and restarted from its append-only file, and the web process is
 * SIGKILLed mid-sweep and started again on the same data folder. Every sweep must end done (or
 * failed with a stated reason), with each simulation stored exactly once; every digest must be in
 * the outbox exactly once per recipient and, once the SMTP server accepts again, delivered exactly
 * once. (sweep-restart.test.ts covers the newcomer's layout: private redis-server, in-process worker.)
 *
 * Every fault strikes at a known point: the workers run behind the chunk gate, which holds each
 * sweep after its first chunks until the fault is in place, so no step races the sweep to its end.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { Redis } from 'ioredis';
import { SMTPServer } from 'smtp-server';
import { ROOT, freePort, startApp, type RunningApp } from '../helpers/app';
import { ChunkGate } from '../helpers/chunk-gate';
import { queryDb } from '../helpers/db-checksum';
import { DEMO, lookUpIds, seedHardening, signedIn, type Ids } from './helpers';

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));
const work = fs.mkdtempSync(path.join(os.tmpdir(), 'paretherm-faults-'));
const gate = ChunkGate.create('open', work);

// ---------------------------------------------------------------------------------------------
// A redis-server that keeps its data across SIGKILL (append-only file, fsync on every write).

let redisPort = 0;
let redis: ChildProcess | null = null;
const redisUrl = () => `redis://127.0.0.1:${redisPort}`;

async function startRedis(): Promise<void> {
	redisPort ||= await freePort();
	const bin = ['/usr/bin/redis-server', '/usr/local/bin/redis-server'].find((p) => fs.existsSync(p)) ?? 'redis-server';
	redis = spawn(bin, ['--port', String(redisPort), '--bind', '127.0.0.1', '--dir', work, '--save', '', '--appendonly', 'yes', '--appendfsync', 'always', '--maxmemory-policy', 'noeviction'], { stdio: 'ignore' });
	for (let i = 0; i < 200; i++) {
		const c = new Redis(redisUrl(), { lazyConnect: true, maxRetriesPerRequest: 0, retryStrategy: () => null });
		c.on('error', () => {});
		try {
			await c.connect();
			if ((await c.ping()) === 'PONG') return;
		} catch {
			/* not up yet */
		} finally {
			c.disconnect();
		}
		await sleep(50);
	}
	throw new Error('redis-server did not start (apt-get install -y redis-server)');
}

async function killRedis(): Promise<void> {
	if (!redis || redis.exitCode !== null || redis.signalCode !== null) return;
	const exited = new Promise((r) => redis!.once('exit', r));
	redis.kill('SIGKILL');
	await exited;
}

// ---------------------------------------------------------------------------------------------
// An SMTP server that refuses (451) while `refusing` is set and records what it accepted.

let refusing = true;
const delivered: { to: string[]; messageId: string }[] = [];
let smtp: SMTPServer;
let smtpPort = 0;

async function startSmtp(): Promise<void> {
	smtpPort = await freePort();
	smtp = new SMTPServer({
		secure: false,
		disabledCommands: ['STARTTLS', 'AUTH'],
		authOptional: true,
		logger: false,
		onRcptTo(_address, _session, cb) {
			if (refusing) return cb(Object.assign(new Error('Mailbox busy, try again later'), { responseCode: 451 }));
			cb();
		},
		onData(stream, session, cb) {
			const chunks: Buffer[] = [];
			stream.on('data', (c: Buffer) => chunks.push(c));
			stream.on('end', () => {
				const raw = Buffer.concat(chunks).toString('utf8');
				delivered.push({ to: session.envelope.rcptTo.map((r) => r.address), messageId: /^Message-ID:\s*(\S+)/im.exec(raw)?.[1] ?? '' });
				cb();
			});
		}
	});
	await new Promise<void>((resolve) => smtp.listen(smtpPort, '127.0.0.1', () => resolve()));
}

// ---------------------------------------------------------------------------------------------
// Workers and the web app

interface WorkerProc {
	proc: ChildProcess;
	out: string;
	exit: Promise<unknown>;
}
const workers: WorkerProc[] = [];
const TIMINGS = { PARETHERM_JOB_LOCK_MS: '3000', PARETHERM_STALLED_CHECK_MS: '1000' };

function startWorker(): WorkerProc {
	// The compiled worker (`npm run worker`), started by node itself so a SIGKILL reaches it.
	const proc = spawn(process.execPath, ['build/worker/index.mjs'], {
		cwd: ROOT,
		env: { ...process.env, REDIS_URL: redisUrl(), PARETHERM_WORKER_THREADS: '1', ...TIMINGS, ...gate.env },
		stdio: ['ignore', 'pipe', 'pipe']
	});
	const w: WorkerProc = { proc, out: '', exit: new Promise((r) => proc.once('exit', r)) };
	proc.stdout!.on('data', (d) => (w.out += d));
	proc.stderr!.on('data', (d) => (w.out += d));
	workers.push(w);
	return w;
}

let dataDir: string;
let app: RunningApp;
let ids: Ids;

function startWeb(): Promise<RunningApp> {
	return startApp({
		dataDir,
		seed: false,
		env: {
			REDIS_URL: redisUrl(),
			PARETHERM_IN_PROCESS_WORKER: '0',
			PARETHERM_RECONCILE_MS: '1000',
			PARETHERM_JOB_BACKOFF_MS: '300',
			SMTP_URL: `smtp://127.0.0.1:${smtpPort}`,
			PARETHERM_MAIL_INTERVAL_MS: '300',
			PARETHERM_MAIL_BACKOFF_MS: '200',
			PARETHERM_MAIL_MAX_ATTEMPTS: '3',
			...TIMINGS
		}
	});
}

interface SweepRow {
	id: number;
	status: string;
	failure_reason: string | null;
	simulation_count: number;
	chunk_count: number;
	points: number;
	distinct_points: number;
	chunks: number;
	workers: number;
}
async function sweepRow(id: number): Promise<SweepRow> {
	const [row] = await queryDb<SweepRow>(
		dataDir,
		`SELECT id, status, failure_reason, simulation_count, chunk_count,
			(SELECT COUNT(*) FROM sweep_points WHERE sweep_id = s.id) AS points,
			(SELECT COUNT(DISTINCT scenario_index || '/' || IFNULL(strategy_index, -1)) FROM sweep_points WHERE sweep_id = s.id) AS distinct_points,
			(SELECT COUNT(*) FROM sweep_chunks WHERE sweep_id = s.id) AS chunks,
			(SELECT COUNT(DISTINCT worker) FROM sweep_chunks WHERE sweep_id = s.id) AS workers
		FROM sweeps s WHERE id = ?`,
		[id]
	);
	return row;
}

async function waitFor<T>(what: string, fn: () => Promise<T | null | false | undefined>, timeout_ms = 240_000, every_ms = 100): Promise<T> {
	const deadline = Date.now() + timeout_ms;
	for (;;) {
		const v = await fn();
		if (v) return v;
		if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
		await sleep(every_ms);
	}
}

/** Waits for the sweep to end; it must be done with every simulation stored once (a failure must say why). */
async function expectFinishedOnce(id: number): Promise<SweepRow> {
	const row = await waitFor(`sweep ${id} to end`, async () => {
		const r = await sweepRow(id);
		return ['done', 'failed', 'cancelled'].includes(r.status) ? r : null;
	}, 300_000, 200);
	if (row.status === 'failed') expect(row.failure_reason ?? '', 'a failed sweep states its reason').toMatch(/\w{10,}/);
	expect(row.status, row.failure_reason ?? '').toBe('done');
	expect(row.points).toBe(row.simulation_count);
	expect(row.distinct_points).toBe(row.simulation_count);
	expect(row.chunks).toBe(row.chunk_count);
	return row;
}

const finished: number[] = [];
/** A sweep of 2 ambients × 4 lead times × 3 set-points (+2 baselines), 3 simulations per chunk: 9 chunks. */
async function createSweep(name: string, on = app): Promise<number> {
	const engineer = await signedIn(on, DEMO.engineer);
	const res = await engineer.json(`/api/programs/${ids.programId}/sweeps`, 'POST', {
		name,
		scenarioId: 'cold-morning-depot',
		chunkSize: 3,
		definition: { cellIds: ['demo-nmc-pouch'], packIds: ['demo-van-pack'], ambients_K: [253.15, 263.15], statesOfHealth: [1], arrivalSocs: [0.2], leadTimes_s: [0, 600, 1200, 1800], setpoints_K: [288.15, 298.15, 308.15] }
	});
	expect(res.status, await res.clone().text()).toBe(201);
	return (await res.json()).id;
}

const storedChunks = (id: number) => sweepRow(id).then((r) => r.chunks);
/** Chunks of sweep `id` a worker's log says it computed ("sweep 3 chunk 7: 3 simulations in 61 ms …"). */
const computedBy = (out: string, id: number) => [...out.matchAll(new RegExp(`sweep ${id} chunk (\\d+): \\d+ simulations`, 'g'))].map((m) => Number(m[1]));

beforeAll(async () => {
	await startRedis();
	await startSmtp();
	dataDir = await seedHardening(fs.mkdtempSync(path.join(work, 'data-')));
	app = await startWeb();
	ids = await lookUpIds(app);
	// Three digest recipients: the manager (subscribed by the seed), the engineer and the architect.
	for (const who of ['engineer', 'architect'] as const) {
		const res = await (await signedIn(app, DEMO[who])).form('/settings', { strategyMode: 'default', digest: String(ids.programId) });
		expect(res.status).toBe(303);
	}
}, 300_000);

afterAll(async () => {
	for (const w of workers) if (w.proc.exitCode === null && w.proc.signalCode === null) w.proc.kill('SIGKILL');
	await app?.stop();
	await killRedis();
	await new Promise((r) => smtp?.close(() => r(null)));
	fs.rmSync(work, { recursive: true, force: true });
});

describe('faults during sweeps', () => {
	it('should finish a sweep exactly once when its only worker is SIGKILLed mid-chunk', async () => {
		// The worker computes chunks 0 and 1, then takes chunk 2 and is held there: the chunk is
		// in progress (active and locked in Redis) and unfinished when the worker dies.
		gate.allow(2);
		const w1 = startWorker();
		await waitFor('the first worker to consume', async () => /consuming/.test(w1.out), 120_000);
		const id = await createSweep('Worker killed mid-chunk');
		const probe = new Redis(redisUrl());
		const chunkOf = (jobId: string) => Number(/chunk-(\d+)$/.exec(jobId)?.[1]);
		await waitFor('the first worker to hold chunk 2', async () => w1.out.includes(`sweep ${id} chunk 2: held by the chunk gate`), 240_000, 20);
		const active = await probe.lrange('paretherm:sweeps:active', 0, -1);
		expect(active.map(chunkOf)).toEqual([2]);
		w1.proc.kill('SIGKILL');
		await w1.exit;
		expect((await sweepRow(id)).status).not.toBe('done');
		const doneByW1 = computedBy(w1.out, id);
		expect(doneByW1.sort()).toEqual([0, 1]);

		gate.open();
		const w2 = startWorker();
		const row = await expectFinishedOnce(id);
		finished.push(id);
		expect(row.workers).toBe(2);
		// The chunk the killed worker held was computed by the other worker and stored once.
		const interrupted = active.map(chunkOf).filter((n) => !doneByW1.includes(n));
		expect(interrupted).toEqual([2]);
		for (const n of interrupted) expect(computedBy(w2.out, id)).toContain(n);
		await probe.quit();
	}, 420_000);

	it('should accept edits while a sweep stores its chunks (no "database is locked")', async () => {
		gate.allow(2);
		const id = await createSweep('Edits while storing');
		await waitFor('two stored chunks', async () => (await storedChunks(id)) >= 2, 240_000, 20);
		const engineer = await signedIn(app, DEMO.engineer);
		const architect = await signedIn(app, DEMO.architect);
		const [input] = await queryDb<{ data: string }>(dataDir, 'SELECT data FROM parameter_sets WHERE id = ?', [ids.inputId]);
		const statuses: number[] = [];
		let whileRunning = 0;
		// Chunks 3 to 6 of 9 are stored while people edit; the gate keeps the sweep from finishing under them.
		gate.allow(6);
		for (let i = 0; i < 40 && (i < 3 || (await storedChunks(id)) < 6); i++) {
			if ((await sweepRow(id)).status !== 'done') whileRunning++;
			statuses.push((await engineer.form(`/programs/${ids.programId}/inputs/${ids.inputId}?/save`, { name: `Edited while storing ${i}`, json: input.data })).status);
			statuses.push((await architect.form(`/programs/${ids.programId}/strategies/${ids.strategyId}?/comment`, { body: `comment ${i}` })).status);
		}
		expect(whileRunning).toBeGreaterThan(2);
		expect(statuses.filter((s) => s !== 303 && s !== 200)).toEqual([]);
		gate.open();
		await expectFinishedOnce(id);
		finished.push(id);
		expect(app.log()).not.toMatch(/SQLITE_BUSY|unexpected error/);
	}, 420_000);

	it('should ride out Redis frozen (SIGSTOP) for a few seconds, reads still answering', async () => {
		gate.allow(2);
		const id = await createSweep('Redis frozen');
		await waitFor('two stored chunks', async () => (await storedChunks(id)) >= 2, 240_000, 20);
		redis!.kill('SIGSTOP');
		expect((await sweepRow(id)).status, 'frozen mid-sweep').not.toBe('done');
		// Released while Redis is frozen: the held chunk is computed and its result waits for Redis.
		gate.open();
		let created: Promise<number> | null = null;
		try {
			const engineer = await signedIn(app, DEMO.engineer);
			// Pages and progress read SQLite: they answer while Redis is frozen.
			const progress = await engineer.request(`/api/programs/${ids.programId}/sweeps/${id}`, { signal: AbortSignal.timeout(20_000) });
			expect(progress.status).toBe(200);
			const page = await engineer.request(`/programs/${ids.programId}/sweeps/${id}`, { signal: AbortSignal.timeout(20_000) });
			expect(page.status).toBe(200);
			// A sweep queued meanwhile is stored at once and enqueued when Redis is back.
			created = createSweep('Queued while Redis was frozen');
			await sleep(4_000);
		} finally {
			redis!.kill('SIGCONT');
		}
		const second = await created!;
		await expectFinishedOnce(id);
		await expectFinishedOnce(second);
		finished.push(id, second);
	}, 420_000);

	it('should finish exactly once when Redis is SIGKILLed and restarted from its append-only file', async () => {
		gate.allow(2);
		const id = await createSweep('Redis killed');
		await waitFor('two stored chunks', async () => (await storedChunks(id)) >= 2, 240_000, 20);
		await killRedis();
		expect((await sweepRow(id)).status, 'killed mid-sweep').not.toBe('done');
		gate.open();
		await sleep(2_000); // Redis stays down a while
		await startRedis();
		await expectFinishedOnce(id);
		finished.push(id);
	}, 420_000);

	it('should finish exactly once when the web process is SIGKILLed mid-sweep and started again', async () => {
		const w = startWorker(); // a second worker, so chunks complete while the web process is down
		await waitFor('the new worker to consume', async () => /consuming/.test(w.out), 120_000);
		gate.allow(2);
		const id = await createSweep('Web process killed');
		await waitFor('two stored chunks', async () => (await storedChunks(id)) >= 2, 240_000, 20);
		app.proc.kill('SIGKILL');
		await new Promise((r) => (app.proc.exitCode !== null || app.proc.signalCode !== null ? r(null) : app.proc.once('exit', r)));
		const atKill = await sweepRow(id);
		expect(atKill.status).not.toBe('done');
		expect(atKill.chunks).toBe(2);
		// The workers compute the rest while the web process is down; their results wait in Redis.
		gate.open();
		const { chunk_count } = atKill;
		await waitFor('the workers to compute every chunk', async () => new Set(workers.flatMap((x) => computedBy(x.out, id))).size === chunk_count, 240_000, 50);
		expect((await sweepRow(id)).chunks, 'nothing is stored while the web process is down').toBe(2);
		app = await startWeb();
		await expectFinishedOnce(id);
		finished.push(id);
		expect(app.log()).toMatch(/reconciled \d+ unfinished sweep/);
	}, 420_000);

	it('should write each digest once per recipient and deliver each exactly once after the mail server refused them', async () => {
		expect(finished).toHaveLength(6);
		const subscribers = 3;
		// Every finished sweep has its digest rows, exactly one per recipient (written despite the kills).
		const rows = await waitFor('every digest in the outbox', async () => {
			const r = await queryDb<{ dedupe_key: string; status: string; attempts: number; last_error: string | null }>(dataDir, "SELECT dedupe_key, status, attempts, last_error FROM mail_outbox WHERE kind = 'sweep-digest'");
			return finished.every((id) => r.filter((m) => m.dedupe_key.startsWith(`sweep-digest:${id}:`)).length === subscribers) ? r : null;
		}, 60_000, 200);
		for (const id of finished) expect(rows.filter((m) => m.dedupe_key.startsWith(`sweep-digest:${id}:`))).toHaveLength(subscribers);
		// The refusing server made them fail (kept, with the reason), none was delivered.
		expect(delivered).toHaveLength(0);
		await waitFor('the digests to be given up after their attempts', async () => {
			const r = await queryDb<{ n: number }>(dataDir, "SELECT COUNT(*) AS n FROM mail_outbox WHERE kind = 'sweep-digest' AND status = 'failed'");
			return r[0].n >= finished.length * subscribers;
		}, 60_000, 200);
		const failed = await queryDb<{ last_error: string }>(dataDir, "SELECT last_error FROM mail_outbox WHERE status = 'failed'");
		expect(failed.every((f) => /451/.test(f.last_error))).toBe(true);

		// The server accepts again; an administrator retries the failed messages.
		refusing = false;
		const admin = await signedIn(app, DEMO.admin);
		expect((await admin.form('/admin/outbox?/retryFailed', {})).status).toBe(303);
		const all = await waitFor('every message to be sent', async () => {
			const r = await queryDb<{ id: number; status: string; message_id: string; to_address: string }>(dataDir, 'SELECT id, status, message_id, to_address FROM mail_outbox');
			return r.every((m) => m.status === 'sent') ? r : null;
		}, 60_000, 200);
		await sleep(1_000); // any duplicate send would arrive now
		expect(delivered).toHaveLength(all.length);
		expect(new Set(delivered.map((d) => d.messageId)).size).toBe(all.length);
		expect(new Set(delivered.map((d) => d.messageId))).toEqual(new Set(all.map((m) => m.message_id)));
	}, 240_000);
});
