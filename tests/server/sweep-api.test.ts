/**
 * The sweep JSON API handlers, called directly with a signed-in user in `locals` (the HTTP
 * sign-in itself is covered by the foundation's suites). Checks roles per handler, the sweep's
 * program, `{ error, field }` bodies on bad input, and the result endpoints on a sweep run to
 * completion in-process (runSweepInline: same chunks and persistence as the queue, no Redis).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';

process.env.PARETHERM_DATA_DIR = fs.mkdtempSync(path.join(os.tmpdir(), 'paretherm-sweep-api-'));
process.env.PARETHERM_BCRYPT_COST = '4';

const { seedSweepProgram, smallSweepRequest } = await import('../helpers/sweeps');
const { createUser } = await import('../../src/lib/server/auth/users');
const { Membership } = await import('../../src/lib/server/db/models/index');
const { runSweepInline } = await import('../../src/lib/server/sweeps/inline');
const { closeSeriesPool } = await import('../../src/lib/server/sweeps/results');
const sweepsRoute = await import('../../src/routes/api/programs/[programId]/sweeps/+server');
const sweepRoute = await import('../../src/routes/api/programs/[programId]/sweeps/[sweepId]/+server');
const cancelRoute = await import('../../src/routes/api/programs/[programId]/sweeps/[sweepId]/cancel/+server');
const frontsRoute = await import('../../src/routes/api/programs/[programId]/sweeps/[sweepId]/fronts/+server');
const pointsRoute = await import('../../src/routes/api/programs/[programId]/sweeps/[sweepId]/points/+server');
const seriesRoute = await import('../../src/routes/api/programs/[programId]/sweeps/[sweepId]/points/[pointId]/series/+server');
const calibrationRoute = await import('../../src/routes/api/programs/[programId]/sweeps/[sweepId]/calibration/+server');

type User = { id: string; email: string; name: string; isAdmin: boolean } | null;
type Handler = (event: never) => Promise<Response> | Response;

async function call(handler: Handler, opts: { user: User; params: Record<string, string>; query?: string; body?: unknown; rawBody?: string }) {
	const url = new URL(`http://localhost/api${opts.query ?? ''}`);
	const request = new Request(url, {
		method: opts.body !== undefined || opts.rawBody !== undefined ? 'POST' : 'GET',
		headers: { 'content-type': 'application/json' },
		body: opts.rawBody ?? (opts.body !== undefined ? JSON.stringify(opts.body) : undefined)
	});
	const res = await handler({ locals: { user: opts.user, session: null }, params: opts.params, url, request } as never);
	const text = await res.text();
	let json: any = null;
	try {
		json = JSON.parse(text);
	} catch {
		/* CSV */
	}
	return { status: res.status, json, text, headers: res.headers };
}

let programId: number;
let otherProgramId: number;
let engineer: User;
let architect: User;
let outsider: User;
let doneSweepId: number;

async function member(email: string, role: string, programs: number[]): Promise<User> {
	const u = await createUser({ email, name: email.split('@')[0], password: 'long-enough-pw' });
	for (const p of programs) await Membership.create({ program_id: p, user_id: u.id, role });
	return { id: u.id, email: u.email, name: u.name, isAdmin: false };
}

beforeAll(async () => {
	programId = await seedSweepProgram('API program');
	otherProgramId = await seedSweepProgram('Other API program');
	engineer = await member('eng@example.org', 'engineer', [programId, otherProgramId]);
	architect = await member('arch@example.org', 'architect', [programId]);
	outsider = await member('out@example.org', 'engineer', [otherProgramId]);
	const created = await call(sweepsRoute.POST as Handler, { user: engineer, params: { programId: String(programId) }, body: smallSweepRequest({ chunkSize: 4, fastestWithinEnergy_Wh: 1500 }) });
	expect(created.status).toBe(201);
	doneSweepId = created.json.id;
	const report = await runSweepInline(doneSweepId, { threads: 2 });
	expect(report.status).toBe('done');
}, 240_000);

afterAll(async () => {
	await closeSeriesPool();
	fs.rmSync(process.env.PARETHERM_DATA_DIR!, { recursive: true, force: true });
});

describe('POST /sweeps', () => {
	it('should create a sweep for an engineer and return 201 with its id', async () => {
		const r = await call(sweepsRoute.POST as Handler, { user: engineer, params: { programId: String(programId) }, body: smallSweepRequest() });
		expect(r.status).toBe(201);
		expect(r.json).toMatchObject({ id: expect.any(Number), status: 'queued' });
		expect(r.headers.get('location')).toBe(`/api/programs/${programId}/sweeps/${r.json.id}`);
	});

	describe('error handling', () => {
		it('should answer 401 without a user, 403 for an architect and 404 for a non-member', async () => {
			const params = { programId: String(programId) };
			const body = smallSweepRequest();
			expect((await call(sweepsRoute.POST as Handler, { user: null, params, body })).status).toBe(401);
			const arch = await call(sweepsRoute.POST as Handler, { user: architect, params, body });
			expect(arch.status).toBe(403);
			expect(arch.json.error).toMatch(/cannot change inputs or queue sweeps/);
			expect((await call(sweepsRoute.POST as Handler, { user: outsider, params, body })).status).toBe(404);
		});

		it('should answer 400 with the field at fault', async () => {
			const params = { programId: String(programId) };
			const bad = await call(sweepsRoute.POST as Handler, { user: engineer, params, body: smallSweepRequest({ leadTimes_s: [0, -60] }) });
			expect(bad.status).toBe(400);
			expect(bad.json.field).toBe('definition.leadTimes_s[1]');
			expect(bad.json.error).toMatch(/Lead time -1 min is out of range/);
			const notJson = await call(sweepsRoute.POST as Handler, { user: engineer, params, rawBody: '{"scenarioId": ' });
			expect(notJson.status).toBe(400);
			expect(notJson.json.error).toMatch(/not valid JSON/);
		});
	});
});

describe('reading sweeps', () => {
	it('should list the program’s sweeps and show status and progress to any member', async () => {
		const list = await call(sweepsRoute.GET as Handler, { user: architect, params: { programId: String(programId) } });
		expect(list.status).toBe(200);
		expect(list.json.sweeps.map((s: { id: number }) => s.id)).toContain(doneSweepId);
		const one = await call(sweepRoute.GET as Handler, { user: architect, params: { programId: String(programId), sweepId: String(doneSweepId) } });
		expect(one.json).toMatchObject({ id: doneSweepId, status: 'done', progress: { percent: 100, simulationsDone: 20, simulationCount: 20 } });
		expect(one.json.inputs.cells[0]).toMatchObject({ slug: 'nmc', version: 1 });
	});

	it('should 404 a sweep through another program', async () => {
		const r = await call(sweepRoute.GET as Handler, { user: engineer, params: { programId: String(otherProgramId), sweepId: String(doneSweepId) } });
		expect(r.status).toBe(404);
		expect(r.json).toEqual({ error: `No sweep with id ${doneSweepId} in this program.`, field: 'sweepId' });
	});

	it('should return per-scenario fronts with knee and rule picks', async () => {
		const r = await call(frontsRoute.GET as Handler, { user: architect, params: { programId: String(programId), sweepId: String(doneSweepId) } });
		expect(r.status).toBe(200);
		expect(r.json.scenarios).toHaveLength(2);
		for (const sc of r.json.scenarios) {
			expect(sc.baseline.baseline).toBe(true);
			expect(sc.front.length).toBeGreaterThan(0);
			const energies = sc.front.map((p: { energy_Wh: number }) => p.energy_Wh);
			expect([...energies].sort((a, b) => a - b)).toEqual(energies);
			expect(sc.ruleEnergy_Wh).toBe(1500);
		}
		const bad = await call(frontsRoute.GET as Handler, { user: architect, params: { programId: String(programId), sweepId: String(doneSweepId) }, query: '?fastestWithinEnergy_Wh=lots' });
		expect(bad.status).toBe(400);
		expect(bad.json.field).toBe('fastestWithinEnergy_Wh');
	});

	it('should page points and filter the front', async () => {
		const params = { programId: String(programId), sweepId: String(doneSweepId) };
		const all = await call(pointsRoute.GET as Handler, { user: architect, params });
		expect(all.json.total).toBe(20);
		expect(all.json.points[0].summary).toHaveProperty('timeToTarget_s');
		const front = await call(pointsRoute.GET as Handler, { user: architect, params, query: '?front=1&scenario=1' });
		expect(front.json.points.every((p: { onFront: boolean; scenarioIndex: number }) => p.onFront && p.scenarioIndex === 1)).toBe(true);
		const bad = await call(pointsRoute.GET as Handler, { user: architect, params, query: '?scenario=-1' });
		expect(bad.status).toBe(400);
		expect(bad.json.field).toBe('scenario');
	});

	it('should serve stored series for front points and recompute the others identically', async () => {
		const params = { programId: String(programId), sweepId: String(doneSweepId) };
		const { points } = (await call(pointsRoute.GET as Handler, { user: architect, params, query: '?scenario=0' })).json;
		const onFront = points.find((p: { onFront: boolean }) => p.onFront);
		const offFront = points.find((p: { onFront: boolean; baseline: boolean }) => !p.onFront && !p.baseline);
		const stored = await call(seriesRoute.GET as Handler, { user: architect, params: { ...params, pointId: String(onFront.id) } });
		expect(stored.json.source).toBe('stored');
		expect(stored.json.series.t_s.length).toBeGreaterThan(10);
		expect(offFront, 'a point off the front in scenario 0').toBeTruthy();
		const recomputed = await call(seriesRoute.GET as Handler, { user: architect, params: { ...params, pointId: String(offFront.id) } });
		expect(recomputed.json.source).toBe('recomputed');
		// The recomputation is the same run as the stored summary: the series ends when the target
		// is reached (t = 0 at arrival, plus the 60 s dwell of the test scenario) at the same SOC.
		const series = recomputed.json.series;
		expect(series.t_s.at(-1)).toBeCloseTo(60 + offFront.timeToTarget_s, 6);
		expect(series.soc.at(-1)).toBeCloseTo(offFront.summary.finalSoc, 9);
		expect(stored.json.series.t_s.at(-1)).toBeCloseTo(60 + onFront.timeToTarget_s, 6);
		const missing = await call(seriesRoute.GET as Handler, { user: architect, params: { ...params, pointId: '999999' } });
		expect(missing.status).toBe(404);
	}, 180_000);

	it('should export the calibration table as CSV and JSON', async () => {
		const params = { programId: String(programId), sweepId: String(doneSweepId) };
		const csv = await call(calibrationRoute.GET as Handler, { user: architect, params, query: '?format=csv' });
		expect(csv.status).toBe(200);
		expect(csv.headers.get('content-type')).toMatch(/text\/csv/);
		expect(csv.headers.get('content-disposition')).toMatch(/sweep-\d+-calibration\.csv/);
		const lines = csv.text.split('\r\n');
		// Provenance first, as "# key: value" comment lines, then the header (see calibrationCsv in src/lib/engine/calibration.ts).
		expect(lines[0]).toBe('# format: paretherm-calibration/2');
		expect(lines.find((l) => !l.startsWith('#'))).toMatch(/^ambient_C,/);
		const json = await call(calibrationRoute.GET as Handler, { user: architect, params, query: '?format=json&rule=fastest-within' });
		expect(json.json.format).toBe('paretherm-calibration/2');
		expect(json.json.rows[0].rule).toMatch(/^(fastest-within-1\.5-kWh|baseline)$/);
		const bad = await call(calibrationRoute.GET as Handler, { user: architect, params, query: '?format=xml' });
		expect(bad.status).toBe(400);
		expect(bad.json.field).toBe('format');
	});
});

describe('POST /sweeps/:id/cancel', () => {
	it('should cancel a queued sweep for an engineer only, and refuse to cancel a finished one', async () => {
		const created = await call(sweepsRoute.POST as Handler, { user: engineer, params: { programId: String(programId) }, body: smallSweepRequest() });
		const params = { programId: String(programId), sweepId: String(created.json.id) };
		expect((await call(cancelRoute.POST as Handler, { user: architect, params, body: {} })).status).toBe(403);
		const ok = await call(cancelRoute.POST as Handler, { user: engineer, params, body: {} });
		expect(ok.json).toEqual({ id: created.json.id, status: 'cancelled' });
		const again = await call(cancelRoute.POST as Handler, { user: engineer, params, body: {} });
		expect(again.status).toBe(409);
		expect(again.json.error).toMatch(/already cancelled/);
		const done = await call(cancelRoute.POST as Handler, { user: engineer, params: { ...params, sweepId: String(doneSweepId) }, body: {} });
		expect(done.status).toBe(409);
	});
});
