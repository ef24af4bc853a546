/**
 * The authorisation matrix. Every page, form action and JSON route is read from the route tree
 * itself (tests/helpers/routes.ts), so a route added without an entry in RULES fails this test.
 * Each is called as anonymous, as each role of the demo program, as a member of another program,
 * as an administrator and as a deactivated user, and the status is compared with the rule.
 * Allowed callers of a changing action send an invalid body, so they get a validation answer
 * (4xx other than 401/403) and nothing is changed; refused callers get 401/403/404.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Client, DEMO, startApp, type RunningApp } from '../helpers/app';
import { listRoutes } from '../helpers/routes';
import { queryDb } from '../helpers/db-checksum';

type Who = 'anonymous' | 'engineer' | 'architect' | 'manager' | 'viewer' | 'outsider' | 'admin' | 'deactivated';
const WHO: Who[] = ['anonymous', 'engineer', 'architect', 'manager', 'viewer', 'outsider', 'admin', 'deactivated'];

/** Who may: public (anyone), token (unknown token → 404 for all), signed-in, member (read), edit
 * (engineer), decide (architect and manager), comment (all but viewer), admin. Admins may do everything. */
type Rule = 'public' | 'token' | 'signed-in' | 'member' | 'edit' | 'decide' | 'comment' | 'admin';

const RULES: Record<string, Rule> = {
	'GET /': 'signed-in',
	'GET /login': 'public',
	'POST /login?/default': 'public',
	'GET /logout': 'public',
	'POST /logout?/default': 'public',
	'GET /invite/[token]': 'token',
	'POST /invite/[token]?/default': 'token',
	'GET /settings': 'signed-in',
	'POST /settings?/default': 'signed-in',
	'GET /admin': 'admin',
	'POST /admin?/create': 'admin',
	'POST /admin?/setActive': 'admin',
	'POST /admin?/invite': 'admin',
	'GET /admin/programs': 'admin',
	'POST /admin/programs?/createProgram': 'admin',
	'POST /admin/programs?/addMember': 'admin',
	'POST /admin/programs?/removeMember': 'admin',
	'GET /admin/outbox': 'admin',
	'POST /admin/outbox?/retry': 'admin',
	'POST /admin/outbox?/retryFailed': 'admin',
	'GET /admin/outbox/[messageId]': 'admin',
	'GET /admin/outbox/[messageId]/html': 'admin',
	'GET /admin/outbox/[messageId]/raw': 'admin',
	'GET /programs/[programId]': 'member',
	'GET /programs/[programId]/calibration': 'member',
	'GET /programs/[programId]/checks': 'member',
	'GET /programs/[programId]/compare': 'member',
	'POST /programs/[programId]/checks?/upload': 'edit',
	'POST /programs/[programId]/checks?/run': 'edit',
	'GET /programs/[programId]/checks/[checkId]': 'member',
	'POST /programs/[programId]/checks/[checkId]?/comment': 'comment',
	'GET /programs/[programId]/checks/[checkId]/export': 'member',
	'GET /programs/[programId]/checks/uploads/[uploadId]': 'member',
	'POST /programs/[programId]/checks/uploads/[uploadId]?/useInScenario': 'edit',
	'POST /programs/[programId]/checks/uploads/[uploadId]?/useInCell': 'edit',
	'GET /programs/[programId]/checks/uploads/[uploadId]/export': 'member',
	'GET /programs/[programId]/inputs': 'member',
	'POST /programs/[programId]/inputs?/import': 'edit',
	'POST /programs/[programId]/inputs?/createScenario': 'edit',
	'POST /programs/[programId]/inputs?/duplicate': 'edit',
	'GET /programs/[programId]/inputs/[inputId]': 'member',
	'POST /programs/[programId]/inputs/[inputId]?/save': 'edit',
	'GET /programs/[programId]/inputs/[inputId]/export': 'member',
	'GET /programs/[programId]/strategies': 'member',
	'GET /programs/[programId]/strategies/[strategyId]': 'member',
	'POST /programs/[programId]/strategies/[strategyId]?/comment': 'comment',
	'POST /programs/[programId]/strategies/[strategyId]?/move': 'decide',
	'GET /programs/[programId]/year': 'member',
	'POST /programs/[programId]/year?/uploadClimate': 'edit',
	'POST /programs/[programId]/year?/savePattern': 'edit',
	'POST /programs/[programId]/year?/evaluate': 'comment',
	'GET /programs/[programId]/year/[evaluationId]': 'member',
	'GET /programs/[programId]/year/[evaluationId]/export': 'member',
	'POST /programs/[programId]/year/[evaluationId]?/exact': 'edit',
	'POST /programs/[programId]/year/[evaluationId]?/cancelExact': 'edit',
	'GET /programs/[programId]/sweeps': 'member',
	'GET /programs/[programId]/sweeps/new': 'edit',
	'POST /programs/[programId]/sweeps/new?/default': 'edit',
	'GET /programs/[programId]/sweeps/[sweepId]': 'member',
	'POST /programs/[programId]/sweeps/[sweepId]?/cancel': 'edit',
	'GET /programs/[programId]/sweeps/[sweepId]/points/[pointId]': 'member',
	'POST /programs/[programId]/sweeps/[sweepId]/points/[pointId]?/promote': 'edit',
	'GET /api/programs/[programId]/sweeps': 'member',
	'POST /api/programs/[programId]/sweeps': 'edit',
	'GET /api/programs/[programId]/sweeps/[sweepId]': 'member',
	'GET /api/programs/[programId]/sweeps/[sweepId]/calibration': 'member',
	'POST /api/programs/[programId]/sweeps/[sweepId]/cancel': 'edit',
	'GET /api/programs/[programId]/sweeps/[sweepId]/fronts': 'member',
	'GET /api/programs/[programId]/sweeps/[sweepId]/points': 'member',
	'GET /api/programs/[programId]/sweeps/[sweepId]/points/[pointId]/series': 'member'
};

const ROLE_OF: Record<Who, string | null> = {
	anonymous: null,
	deactivated: null,
	engineer: 'engineer',
	architect: 'architect',
	manager: 'manager',
	viewer: 'viewer',
	outsider: 'outsider',
	admin: 'admin'
};

function allowed(rule: Rule, who: Who): boolean {
	const role = ROLE_OF[who];
	switch (rule) {
		case 'public':
			return true;
		case 'token':
			return false;
		case 'signed-in':
			return role !== null;
		case 'admin':
			return role === 'admin';
		case 'member':
			return role !== null && role !== 'outsider';
		case 'edit':
			return role === 'engineer' || role === 'admin';
		case 'decide':
			return role === 'architect' || role === 'manager' || role === 'admin';
		case 'comment':
			return role === 'engineer' || role === 'architect' || role === 'manager' || role === 'admin';
	}
}

/** The statuses a refused caller may get: anonymous → sign in (303 page / 401), another program → 404, wrong role → 403. */
function refusedStatuses(rule: Rule, who: Who, method: string, key: string): number[] {
	if (rule === 'token') return [404];
	const role = ROLE_OF[who];
	if (role === null) return method === 'GET' && !key.includes('/api/') ? [303, 401] : [401];
	if (role === 'outsider' && key.includes('[programId]')) return [404];
	return [403];
}

let app: RunningApp;
const clients = {} as Record<Who, Client>;
const ids = { programId: 0, sweepId: 0, pointId: 0, strategyId: 0, inputId: 0, messageId: 0, uploadId: 0, checkId: 0, evaluationId: 0 };

beforeAll(async () => {
	app = await startApp();
	for (const who of WHO) clients[who] = new Client(app.url);
	for (const who of ['engineer', 'architect', 'manager', 'viewer', 'admin'] as const) expect((await clients[who].signIn(DEMO[who])).status).toBe(303);
	ids.programId = Number(/\/programs\/(\d+)/.exec((await clients.engineer.get('/')).headers.get('location')!)![1]);

	const admin = clients.admin;
	await admin.form('/admin/programs?/createProgram', { name: 'Other program', description: '' });
	const other = (await queryDb<{ id: number }>(app.dataDir, "SELECT id FROM programs WHERE name = 'Other program'"))[0].id;
	for (const [who, email] of [['outsider', 'outsider@paretherm.test'], ['deactivated', 'leaver@paretherm.test']] as const) {
		const created = await admin.form('/admin?/create', { name: who, email, mode: 'password' });
		const password = /one-time password <code[^>]*>([^<]+)</.exec(await (await admin.follow(created)).text())![1];
		await admin.form('/admin/programs?/addMember', { programId: String(who === 'outsider' ? other : ids.programId), email, role: 'engineer' });
		expect((await clients[who].signIn(email, password)).status).toBe(303);
	}
	const leaver = (await queryDb<{ id: string }>(app.dataDir, "SELECT id FROM users WHERE email = 'leaver@paretherm.test'"))[0].id;
	expect((await admin.form('/admin?/setActive', { userId: leaver, active: 'false' })).status).toBe(303);

	// A small finished sweep and a strategy to address.
	const res = await clients.engineer.json(`/api/programs/${ids.programId}/sweeps`, 'POST', {
		scenarioId: 'cold-morning-depot',
		definition: { cellIds: ['demo-nmc-pouch'], packIds: ['demo-van-pack'], ambients_K: [263.15], statesOfHealth: [1], arrivalSocs: [0.2], leadTimes_s: [0, 600], setpoints_K: [298.15] }
	});
	expect(res.status).toBe(201);
	ids.sweepId = (await res.json()).id;
	for (let i = 0; i < 240; i++) {
		const s = await (await clients.engineer.get(`/api/programs/${ids.programId}/sweeps/${ids.sweepId}`)).json();
		if (s.status === 'done') break;
		if (s.status === 'failed') throw new Error(`setup sweep failed: ${s.failureReason}`);
		await new Promise((r) => setTimeout(r, 500));
	}
	const points = await queryDb<{ id: number }>(app.dataDir, 'SELECT id FROM sweep_points WHERE sweep_id = ? AND strategy_index IS NOT NULL ORDER BY id', [ids.sweepId]);
	ids.pointId = points[0].id;
	const promoted = await clients.engineer.form(`/programs/${ids.programId}/sweeps/${ids.sweepId}/points/${ids.pointId}?/promote`, { title: 'Matrix strategy', rationale: '' });
	ids.strategyId = Number(/strategies\/(\d+)/.exec(promoted.headers.get('location') ?? '')![1]);
	ids.inputId = (await queryDb<{ id: number }>(app.dataDir, "SELECT id FROM parameter_sets WHERE kind = 'scenario' ORDER BY id LIMIT 1"))[0].id;
	ids.messageId = (await queryDb<{ id: number }>(app.dataDir, 'SELECT id FROM mail_outbox ORDER BY id LIMIT 1'))[0]?.id ?? 1;
	// An upload (a small measured log) and a model check of it to address.
	const log = new FormData();
	log.set('kind', 'measured-log');
	log.set('name', 'Matrix log');
	log.set('file', new Blob(['time_s,current_A,voltage_V,temp_C\n0,0,3.6,20\n10,30,3.7,20\n20,30,3.71,20\n']), 'matrix.csv');
	const uploaded = await clients.engineer.request(`/programs/${ids.programId}/checks?/upload`, { method: 'POST', headers: { accept: 'text/html' }, body: log });
	ids.uploadId = Number(/uploads\/(\d+)/.exec(uploaded.headers.get('location') ?? '')![1]);
	const cellId = (await queryDb<{ id: number }>(app.dataDir, "SELECT id FROM parameter_sets WHERE kind = 'cell' ORDER BY id LIMIT 1"))[0].id;
	const checked = await clients.engineer.form(`/programs/${ids.programId}/checks?/run`, { uploadId: String(ids.uploadId), cellInputId: String(cellId), initialSoc_pct: '30' });
	ids.checkId = Number(/checks\/(\d+)/.exec(checked.headers.get('location') ?? '')![1]);
	// A year-of-use evaluation of that sweep with the seeded invented climate and pattern.
	const climateId = (await queryDb<{ id: number }>(app.dataDir, 'SELECT id FROM climates ORDER BY id LIMIT 1'))[0].id;
	const patternId = (await queryDb<{ id: number }>(app.dataDir, 'SELECT id FROM charging_patterns ORDER BY id LIMIT 1'))[0].id;
	const evaluated = await clients.engineer.form(`/programs/${ids.programId}/year?/evaluate`, {
		name: 'Matrix year',
		climateId: String(climateId),
		patternId: String(patternId),
		sweepId: String(ids.sweepId),
		fixedLeadTime_min: '10',
		fixedSetpoint_C: '25',
		fixedBelowAmbient_C: '',
		fleetSize: '10'
	});
	ids.evaluationId = Number(/year\/(\d+)/.exec(evaluated.headers.get('location') ?? '')![1]);
}, 240_000);
afterAll(async () => {
	await app?.stop();
});

function concrete(id: string): string {
	return id
		.replace('[programId]', String(ids.programId))
		.replace('[sweepId]', String(ids.sweepId))
		.replace('[pointId]', String(ids.pointId))
		.replace('[strategyId]', String(ids.strategyId))
		.replace('[inputId]', String(ids.inputId))
		.replace('[messageId]', String(ids.messageId))
		.replace('[uploadId]', String(ids.uploadId))
		.replace('[checkId]', String(ids.checkId))
		.replace('[evaluationId]', String(ids.evaluationId))
		.replace('[token]', 'abcdefghijklmnopqrstuvwxyz');
}

/** Invalid bodies: allowed callers get a validation answer, nothing changes. */
const INVALID_FORM: Record<string, Record<string, string>> = {
	'POST /programs/[programId]/strategies/[strategyId]?/move': { to: 'endorsed', note: '\u0001' },
	'POST /programs/[programId]/sweeps/[sweepId]?/cancel': {}
};

async function call(who: Who, key: string): Promise<Response> {
	const [method, rest] = key.split(' ');
	const [route, action] = rest.split('?/');
	const url = concrete(route);
	const c = clients[who];
	if (method === 'GET') return c.get(url);
	if (action !== undefined) return c.form(action === 'default' ? url : `${url}?/${action}`, INVALID_FORM[key] ?? { name: '', title: '', body: '', email: 'x', userId: 'none', programId: 'x', messageId: 'x', inputId: 'x', json: '{', to: 'nowhere' });
	return c.json(url, method, { not: 'a valid body' });
}

describe('authorisation matrix', () => {
	it('should have a rule for every page, form action and JSON route in the route tree', () => {
		const keys: string[] = [];
		for (const r of listRoutes()) {
			if (r.kind === 'endpoint') for (const m of r.methods) keys.push(`${m} ${r.id}`);
			else {
				keys.push(`GET ${r.id}`);
				for (const a of r.actions) keys.push(`POST ${r.id}?/${a}`);
			}
		}
		expect(keys.filter((k) => !(k in RULES))).toEqual([]);
		expect(Object.keys(RULES).filter((k) => !keys.includes(k))).toEqual([]);
	});

	for (const key of Object.keys(RULES)) {
		it(`should answer ${key} as promised for every caller`, async () => {
			const rule = RULES[key];
			const problems: string[] = [];
			for (const who of WHO) {
				if (key.startsWith('POST /logout') || key.startsWith('POST /login')) continue; // exercised in http-auth.test.ts
				const res = await call(who, key);
				const status = res.status;
				if (allowed(rule, who)) {
					if ([401, 403].includes(status) || (status === 404 && key.includes('[programId]') && !key.includes('outbox'))) problems.push(`${who} was refused (${status})`);
					if (status >= 500) problems.push(`${who} got ${status}`);
				} else {
					const ok = refusedStatuses(rule, who, key.split(' ')[0], key);
					if (!ok.includes(status)) problems.push(`${who} got ${status}, expected ${ok.join('/')}`);
				}
			}
			expect(problems).toEqual([]);
		});
	}

	it('should not let another program’s ids be reached through this program', async () => {
		const other = (await queryDb<{ id: number }>(app.dataDir, "SELECT id FROM programs WHERE name = 'Other program'"))[0].id;
		const c = clients.outsider; // engineer in the other program
		expect((await c.get(`/programs/${other}/sweeps/${ids.sweepId}`)).status).toBe(404);
		expect((await c.get(`/api/programs/${other}/sweeps/${ids.sweepId}/fronts`)).status).toBe(404);
		expect((await c.get(`/programs/${other}/strategies/${ids.strategyId}`)).status).toBe(404);
		expect((await c.get(`/programs/${other}/inputs/${ids.inputId}`)).status).toBe(404);
		expect((await c.get(`/programs/${other}/inputs/${ids.inputId}/export`)).status).toBe(404);
		expect((await c.get(`/programs/${other}/checks/uploads/${ids.uploadId}`)).status).toBe(404);
		expect((await c.get(`/programs/${other}/checks/uploads/${ids.uploadId}/export`)).status).toBe(404);
		expect((await c.get(`/programs/${other}/checks/${ids.checkId}/export`)).status).toBe(404);
	});
});
