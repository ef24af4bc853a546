/**
 * Account safety of the built app over HTTP:
 *  - setting a password through an invitation ends the person's other sessions and voids every
 *    other open invitation link of theirs;
 *  - only the engineer who proposed a strategy may withdraw it (and only they are offered it);
 *  - sign-in throttling slows the guesser only: failures at one account from one address make
 *    that account-and-address wait, longer after each further failure, while the owner signing in
 *    from another address and other accounts from the same address go ahead.
 * Client addresses come from X-Forwarded-For (adapter-node ADDRESS_HEADER), as behind a proxy.
 * Rules: common practice (OWASP session management and authentication guidance), no source.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Client, startApp, type RunningApp } from '../helpers/app';
import { queryDb } from '../helpers/db-checksum';
import { DEMO, DEMO_PASSWORD, OUTSIDER, lookUpIds, seedHardening, type Ids } from './helpers';

let app: RunningApp;
let ids: Ids;

/** A client that says which address it comes from (the proxy's X-Forwarded-For). */
class From extends Client {
	constructor(
		base: string,
		private address: string
	) {
		super(base);
	}
	override request(pathname: string, init: RequestInit = {}) {
		const headers = new Headers(init.headers);
		headers.set('x-forwarded-for', this.address);
		return super.request(pathname, { ...init, headers });
	}
}

let nextAddress = 10;
const fresh = () => new From(app.url, `192.0.2.${nextAddress++}`);

async function signedIn(email: string, password = DEMO_PASSWORD): Promise<From> {
	const c = fresh();
	const res = await c.signIn(email, password);
	if (res.status !== 303) throw new Error(`sign-in of ${email} answered ${res.status}`);
	return c;
}

beforeAll(async () => {
	app = await startApp({
		dataDir: await seedHardening(),
		seed: false,
		// Waits long enough that no test outlives one by chance.
		env: { PARETHERM_NO_RUNTIME: '1', ADDRESS_HEADER: 'x-forwarded-for', XFF_DEPTH: '1', PARETHERM_SIGNIN_FREE_FAILURES: '3', PARETHERM_SIGNIN_DELAY_S: '600' }
	});
	// lookUpIds signs in without an address header; give it one through a fetch default.
	const plainFetch = globalThis.fetch;
	globalThis.fetch = (input, init = {}) => {
		const headers = new Headers(init.headers);
		if (!headers.has('x-forwarded-for')) headers.set('x-forwarded-for', '192.0.2.250');
		return plainFetch(input, { ...init, headers });
	};
	try {
		ids = await lookUpIds(app);
	} finally {
		globalThis.fetch = plainFetch;
	}
}, 240_000);

afterAll(async () => {
	await app?.stop();
});

describe('invitations', () => {
	it('should end the person’s other sessions and void their other invitation links', async () => {
		const admin = await signedIn(DEMO.admin);
		const created = await admin.form('/admin?/create', { name: 'Ines Invited', email: 'ines.invited@paretherm.test', mode: 'password' });
		const oneTime = /one-time password <code[^>]*>([^<]+)</.exec(await (await admin.follow(created)).text())![1];
		const earlier = await signedIn('ines.invited@paretherm.test', oneTime);
		expect((await earlier.get('/')).status).toBe(200);

		const userId = (await queryDb<{ id: string }>(app.dataDir, 'SELECT id FROM users WHERE email = ?', ['ines.invited@paretherm.test']))[0].id;
		const invite = async () => /\/invite\/([a-z0-9]+)/.exec(await (await admin.follow(await admin.form('/admin?/invite', { userId }))).text())![1];
		const older = await invite();
		const newer = await invite();
		expect((await fresh().get(`/invite/${older}`)).status).toBe(200);

		const person = fresh();
		const set = await person.form(`/invite/${newer}`, { password: 'a-new-long-password', confirm: 'a-new-long-password' });
		expect(set.status).toBe(303);
		expect((await person.get('/')).status).toBe(200); // the new session works

		const after = await earlier.get('/');
		expect(after.status).toBe(303);
		expect(after.headers.get('location')).toBe('/login');
		expect((await fresh().get(`/invite/${older}`)).status).toBe(404);
		const reuse = await fresh().form(`/invite/${older}`, { password: 'an-attackers-password', confirm: 'an-attackers-password' });
		expect(reuse.status).toBe(404);
		expect((await fresh().signIn('ines.invited@paretherm.test', 'an-attackers-password')).status).toBe(400);
		expect((await fresh().signIn('ines.invited@paretherm.test', 'a-new-long-password')).status).toBe(303);
	});
});

describe('strategy withdrawal', () => {
	it('should let only the proposer withdraw a proposal', async () => {
		const admin = await signedIn(DEMO.admin);
		expect((await admin.form('/admin/programs?/addMember', { programId: String(ids.programId), email: OUTSIDER, role: 'engineer' })).status).toBe(303);
		const page = `/programs/${ids.programId}/strategies/${ids.strategyId}`;
		const state = async () => (await queryDb<{ state: string }>(app.dataDir, 'SELECT state FROM strategies WHERE id = ?', [ids.strategyId]))[0].state;
		expect(await state()).toBe('proposed');

		const other = await signedIn(OUTSIDER);
		expect(await (await other.get(page)).text()).not.toMatch(/value="withdrawn"/);
		const refused = await other.form(`${page}?/move`, { to: 'withdrawn', note: '' });
		expect(refused.status).toBe(403);
		expect(await refused.text()).toMatch(/Only the engineer who proposed this strategy may withdraw it/);
		expect(await state()).toBe('proposed');

		const proposer = await signedIn(DEMO.engineer);
		expect(await (await proposer.get(page)).text()).toMatch(/value="withdrawn"/);
		// A successful move redirects back to the strategy page (post/redirect/get).
		expect((await proposer.form(`${page}?/move`, { to: 'withdrawn', note: 'superseded by a later sweep' })).status).toBe(303);
		expect(await state()).toBe('withdrawn');
	});
});

describe('sign-in throttling', () => {
	it('should make the guesser wait, longer after each further failure, and say until when', async () => {
		const guesser = fresh();
		const statuses: number[] = [];
		for (let i = 0; i < 3; i++) statuses.push((await guesser.signIn(DEMO.architect, `wrong-${i}`)).status);
		expect(statuses).toEqual([400, 400, 429]);
		const waiting = await guesser.signIn(DEMO.architect); // right password, still waiting
		expect(waiting.status).toBe(429);
		expect(await waiting.text()).toMatch(/Too many failed sign-ins to this account from your address\. Try again in 10 minutes \(after \d\d:\d\d:\d\d UTC\)/);
		expect(waiting.headers.getSetCookie().some((s) => s.startsWith('paretherm_session=') && !/max-age=0/i.test(s))).toBe(false);
	});

	it('should not slow the owner from another address, nor other accounts from the guesser’s address', async () => {
		const guesser = fresh();
		for (let i = 0; i < 3; i++) await guesser.signIn(DEMO.manager, `wrong-${i}`);
		expect((await guesser.signIn(DEMO.manager)).status).toBe(429);
		expect((await fresh().signIn(DEMO.manager)).status).toBe(303); // the owner, elsewhere
		expect((await guesser.signIn(DEMO.viewer)).status).toBe(303); // someone else behind the same address
	});

	it('should not lock out everyone behind an address that tries many accounts', async () => {
		const proxy = fresh();
		for (let i = 0; i < 25; i++) expect((await proxy.signIn(`nobody-${i}@paretherm.test`, 'wrong-password')).status).toBe(400);
		expect((await proxy.signIn(DEMO.viewer)).status).toBe(303);
	});
});
