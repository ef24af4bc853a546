/**
 * The role matrix: every page (GET) is requested as anonymous, as each role of the demo program,
 * as a member of another program, as an administrator and as a deactivated user, and the status
 * is compared with what the route promises. Routes are enumerated from src/routes, so a new route
 * without an entry in EXPECT fails this test.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Client, DEMO, startApp, type RunningApp } from '../helpers/app';
import { listRoutes } from '../helpers/routes';

type Who = 'anonymous' | 'engineer' | 'architect' | 'manager' | 'viewer' | 'outsider' | 'admin';
const WHO: Who[] = ['anonymous', 'engineer', 'architect', 'manager', 'viewer', 'outsider', 'admin'];

/** Page expectations by route id: the minimum a caller needs, checked over GET. */
const PAGE_RULE: Record<string, 'public' | 'signed-in' | 'member' | 'admin' | 'token'> = {
	'/': 'signed-in',
	'/login': 'public',
	'/logout': 'public',
	'/invite/[token]': 'token',
	'/admin': 'admin',
	'/admin/programs': 'admin',
	'/programs/[programId]': 'member'
};

function expected(rule: string, who: Who): number[] {
	switch (rule) {
		case 'public':
			return [200, 303];
		case 'token':
			return [404];
		case 'signed-in':
			return who === 'anonymous' ? [303] : [200, 303];
		case 'admin':
			return who === 'anonymous' ? [303] : who === 'admin' ? [200] : [403];
		case 'member':
			return who === 'anonymous' ? [303] : who === 'outsider' ? [404] : [200];
	}
	throw new Error(`unknown rule ${rule}`);
}

let app: RunningApp;
const clients = {} as Record<Who, Client>;
let programId = 0;

beforeAll(async () => {
	app = await startApp({ env: { PARETHERM_NO_RUNTIME: '1' } });
	for (const who of WHO) clients[who] = new Client(app.url);
	for (const who of ['engineer', 'architect', 'manager', 'viewer', 'admin'] as const)
		expect((await clients[who].signIn(DEMO[who])).status).toBe(303);
	const home = await clients.engineer.get('/');
	programId = Number(/\/programs\/(\d+)/.exec(home.headers.get('location')!)![1]);
	// An outsider: a member of another program only.
	const admin = clients.admin;
	await admin.form('/admin/programs?/createProgram', { name: 'Other program', description: '' });
	const created = await admin.form('/admin?/create', { name: 'Out Sider', email: 'outsider@paretherm.test', mode: 'password' });
	const password = /one-time password <code[^>]*>([^<]+)</.exec(await created.text())![1];
	const progs = await (await admin.get('/admin/programs')).text();
	const other = /name="programId" value="(\d+)"/.exec(progs.split('<h2>Other program</h2>')[1])![1];
	expect(Number(other)).not.toBe(programId);
	await admin.form('/admin/programs?/addMember', { programId: other, email: 'outsider@paretherm.test', role: 'engineer' });
	expect((await clients.outsider.signIn('outsider@paretherm.test', password)).status).toBe(303);
});
afterAll(async () => {
	await app?.stop();
});

function concrete(id: string): string {
	return id.replace('[programId]', String(programId)).replace('[token]', 'abcdefghijklmnopqrstuvwxyz');
}

describe('role matrix over pages', () => {
	it('should have an expectation for every page in the route tree', () => {
		const pages = listRoutes().filter((r) => r.kind === 'page').map((r) => r.id);
		expect(pages.filter((p) => !(p in PAGE_RULE))).toEqual([]);
	});

	for (const route of Object.keys(PAGE_RULE)) {
		it(`should answer GET ${route} as promised for every caller`, async () => {
			for (const who of WHO) {
				const res = await clients[who].get(concrete(route));
				const want = expected(PAGE_RULE[route], who);
				expect(want, `${who} GET ${route} gave ${res.status}`).toContain(res.status);
			}
		});
	}

	it('should refuse admin form actions to non-admins', async () => {
		for (const who of ['engineer', 'architect', 'manager', 'viewer', 'outsider'] as const) {
			const res = await clients[who].form('/admin/programs?/createProgram', { name: `by ${who}` });
			expect(res.status, who).toBe(403);
		}
		const anon = await clients.anonymous.form('/admin/programs?/createProgram', { name: 'by anonymous' });
		expect(anon.status).toBe(401);
	});
});
