/**
 * The newcomer's path, over HTTP against the built app (`npm start` with REDIS_URL unset): the
 * server starts its own redis-server child and in-process worker (whose simulation threads load
 * the TypeScript engine from the source tree, outside the Vite bundle), an engineer queues a
 * sweep through the JSON API, it finishes, and its fronts and calibration table can be read.
 * On SIGTERM the server stops its redis-server child.
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
		expect((await csv.text()).split('\r\n')).toHaveLength(3); // header, one scenario, final CRLF
	}, 240_000);

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
	}, 120_000);
});
