/**
 * The newcomer's path, over HTTP against the built app (`npm start` with REDIS_URL unset): the
 * server starts its own redis-server child and its own worker child process (the compiled
 * worker, at a lower OS priority than the web process), an engineer queues a sweep through the
 * JSON API, it finishes, and its fronts and calibration table can be read — with ETags, so a
 * browser's copy of a finished sweep's results is answered 304. On SIGTERM the server stops both
 * children.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import fs from 'node:fs';
import path from 'node:path';
import { startApp, tempDataDir, Client, DEMO, type RunningApp } from '../helpers/app';

const dataDir = tempDataDir('paretherm-sweep-http-');
process.env.PARETHERM_DATA_DIR = dataDir;

const C = (celsius: number) => celsius + 273.15;

describe('sweeps over HTTP on the built app', () => {
	let app: RunningApp;
	let engineer: Client;
	let programId: number;
	let finishedId: number;
	let workerPid = 0;

	beforeAll(async () => {
		app = await startApp({ dataDir, env: { REDIS_URL: '', PARETHERM_IN_PROCESS_WORKER: '', PARETHERM_WORKER_THREADS: '2' } });
		const { Program } = await import('../../src/lib/server/db/models/index');
		const { DEMO_PROGRAM } = await import('../../src/lib/server/demo/seed');
		programId = (await Program.findOne({ where: { name: DEMO_PROGRAM } }))!.id;
		engineer = new Client(app.url);
		const res = await engineer.signIn(DEMO.engineer);
		expect(res.status).toBe(303);
	}, 240_000);

	afterAll(async () => {
		await app?.stop();
		fs.rmSync(dataDir, { recursive: true, force: true });
	});

	it('should run a queued sweep to the end with its own redis-server and worker', async () => {
		expect(app.log()).toMatch(/private redis-server \(pid \d+\) ready at unix:/);
		const created = await engineer.json(`/api/programs/${programId}/sweeps`, 'POST', {
			name: 'HTTP test sweep',
			scenarioId: 'hot-afternoon-return',
			definition: {
				cellIds: ['demo-nmc-pouch'],
				packIds: ['demo-van-pack'],
				ambients_K: [C(30)],
				statesOfHealth: [1],
				arrivalSocs: [0.2],
				leadTimes_s: [0, 600],
				setpoints_K: [C(20), C(30)]
			}
		});
		expect(created.status, await created.clone().text()).toBe(201);
		const { id } = await created.json();

		let status: { status: string; progress: { percent: number }; failureReason: string | null } | null = null;
		const deadline = Date.now() + 240_000;
		while (Date.now() < deadline) {
			status = await (await engineer.get(`/api/programs/${programId}/sweeps/${id}`)).json();
			if (status!.status === 'done' || status!.status === 'failed') break;
			await new Promise((r) => setTimeout(r, 200));
		}
		expect(status?.status, status?.failureReason ?? app.log()).toBe('done');
		expect(status!.progress.percent).toBe(100);

		const fronts = await (await engineer.get(`/api/programs/${programId}/sweeps/${id}/fronts`)).json();
		expect(fronts.scenarios).toHaveLength(1);
		expect(fronts.scenarios[0].seriesStatus).toBe('stored');
		const csv = await engineer.get(`/api/programs/${programId}/sweeps/${id}/calibration?format=csv`);
		expect(csv.status).toBe(200);
		const records = (await csv.text()).split('\r\n').filter((l) => !l.startsWith('#')); // provenance lines first
		expect(records).toHaveLength(3); // header, one scenario, final CRLF
		finishedId = id;
	}, 240_000);

	it('should compute in a child process whose simulation threads run at a lower priority', () => {
		const m = /sweep worker process (\d+) ready: 2 simulation thread\(s\) at nice 10/.exec(app.log());
		expect(m, app.log()).not.toBeNull();
		workerPid = Number(m![1]);
		expect(workerPid).not.toBe(app.proc.pid);
		// Linux keeps a nice value per thread: field 19 of /proc/<pid>/task/<tid>/stat (proc(5)).
		const niceOf = (pid: number, tid: number | string = pid) => Number(fs.readFileSync(`/proc/${pid}/task/${tid}/stat`, 'utf8').replace(/^.*\) /s, '').split(' ')[16]);
		expect(niceOf(workerPid)).toBe(10); // the worker's main thread
		// Its two simulation threads (and whatever else it started after lowering itself) too.
		const others = fs.readdirSync(`/proc/${workerPid}/task`).filter((t) => t !== String(workerPid));
		expect(others.filter((t) => niceOf(workerPid, t) === 10).length).toBeGreaterThanOrEqual(2);
		expect(niceOf(app.proc.pid!)).toBeLessThan(10); // the web process keeps its priority
	});

	it('should send ETags for a finished sweep’s results and answer 304 when the copy is current', async () => {
		const base = `/api/programs/${programId}/sweeps/${finishedId}`;
		for (const path of [`${base}/fronts`, `${base}/points?limit=10`, `${base}/calibration?format=csv`]) {
			const first = await engineer.get(path);
			expect(first.status).toBe(200);
			const etag = first.headers.get('etag');
			expect(etag, path).toMatch(/^"s\d+-[0-9a-f]+-[\w-]+"$/);
			expect(first.headers.get('cache-control')).toBe('private, no-cache');
			const body = await first.text();
			const again = await engineer.request(path, { headers: { 'if-none-match': etag! } });
			expect(again.status, path).toBe(304);
			expect(await again.text()).toBe('');
			const stale = await engineer.request(path, { headers: { 'if-none-match': '"s0-old"' } });
			expect(stale.status).toBe(200);
			expect(await stale.text()).toBe(body);
		}
		// Different parameters, different body and tag.
		const a = await engineer.get(`${base}/points?limit=10`);
		const b = await engineer.get(`${base}/points?limit=10&offset=1`);
		expect(a.headers.get('etag')).not.toBe(b.headers.get('etag'));
		expect((await b.json()).points[0].id).toBe((await a.json()).points[1].id);
		// The access check comes first: no session, no 304.
		const anonymous = await fetch(`${app.url}${base}/fronts`, { headers: { 'if-none-match': a.headers.get('etag')! } });
		expect(anonymous.status).toBe(401);
	});

	it('should page the sweep list by sweep number and refuse a malformed page marker', async () => {
		const first = await engineer.get(`/programs/${programId}/sweeps`);
		expect(first.status).toBe(200);
		expect(await first.text()).toContain('HTTP test sweep');
		const older = await engineer.get(`/programs/${programId}/sweeps?before=${finishedId}`);
		expect(older.status).toBe(200);
		const html = await older.text();
		expect(html).not.toContain('HTTP test sweep');
		expect(html).toContain('Newest sweeps');
		const bad = await engineer.get(`/programs/${programId}/sweeps?before=abc`);
		expect(bad.status).toBe(400);
		expect(await bad.text()).toContain('“before” must be a sweep number');
	});

	it('should answer JSON errors with the field at fault', async () => {
		const bad = await engineer.json(`/api/programs/${programId}/sweeps`, 'POST', { scenarioId: 'hot-afternoon-return', definition: {} });
		expect(bad.status).toBe(400);
		const body = await bad.json();
		expect(body.field).toMatch(/^definition\./);
		const anonymous = await fetch(`${app.url}/api/programs/${programId}/sweeps`);
		expect(anonymous.status).toBe(401);
		expect(await anonymous.json()).toMatchObject({ error: expect.stringMatching(/Sign in/) });
	});

	it('should stop its redis-server child on SIGTERM', async () => {
		const pidFile = path.join(dataDir, 'redis', 'redis-server.pid');
		const pid = Number(fs.readFileSync(pidFile, 'utf8'));
		await app.stop();
		const alive = () => {
			try {
				process.kill(pid, 0);
				return true;
			} catch {
				return false;
			}
		};
		for (let i = 0; i < 600 && alive(); i++) await new Promise((r) => setTimeout(r, 100));
		expect(alive()).toBe(false);
		expect(workerPid).toBeGreaterThan(0);
		try {
			process.kill(workerPid, 0);
			throw new Error(`the worker process ${workerPid} outlived the app`);
		} catch (e) {
			expect((e as NodeJS.ErrnoException).code).toBe('ESRCH');
		}
	}, 120_000);
});
