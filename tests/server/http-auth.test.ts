/**
 * Sign-in, sign-out, throttling, deactivation and bad input, through the real built server over
 * HTTP (form posts as a browser without JavaScript sends them).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Client, DEMO, startApp, type RunningApp } from '../helpers/app';
import { databaseChecksum } from '../helpers/db-checksum';

let app: RunningApp;
beforeAll(async () => {
	// Sign-in waits long enough that no test outlives one by chance.
	app = await startApp({ env: { PARETHERM_NO_RUNTIME: '1', PARETHERM_SIGNIN_DELAY_S: '600' } });
});
afterAll(async () => {
	await app?.stop();
});

describe('sign-in', () => {
	it('should sign in with the right password and land on the program overview', async () => {
		const c = new Client(app.url);
		const res = await c.signIn(DEMO.engineer);
		expect(res.status).toBe(303);
		const cookie = res.headers.getSetCookie().find((s) => s.startsWith('paretherm_session='))!;
		expect(cookie).toMatch(/HttpOnly/i);
		expect(cookie).toMatch(/SameSite=Lax/i);
		const home = await c.get('/');
		expect(home.status).toBe(303);
		expect(home.headers.get('location')).toMatch(/^\/programs\/\d+$/);
		const overview = await c.get(home.headers.get('location')!);
		expect(overview.status).toBe(200);
		expect(await overview.text()).toContain('Thermal engineer');
	});

	it('should refuse a wrong password without saying which part was wrong', async () => {
		const c = new Client(app.url);
		const res = await c.signIn(DEMO.viewer, 'not-the-password');
		expect(res.status).toBe(400);
		expect(await res.text()).toContain('E-mail or password is not right.');
		expect(c.cookies.has('paretherm_session')).toBe(false);
	});

	it('should sign out and end the session on the server', async () => {
		const c = new Client(app.url);
		await c.signIn(DEMO.manager);
		const stolen = c.cookieHeader();
		const out = await c.form('/logout', {});
		expect(out.status).toBe(303);
		expect(out.headers.get('location')).toBe('/login');
		const replay = await fetch(`${app.url}/programs/1`, { headers: { cookie: stolen }, redirect: 'manual' });
		expect(replay.status).toBe(303);
		expect(replay.headers.get('location')).toMatch(/^\/login\?next=/);
	});

	it('should make repeated failures at an account wait and say when to retry', async () => {
		const c = new Client(app.url);
		const statuses: number[] = [];
		for (let i = 0; i < 5; i++) statuses.push((await c.signIn(DEMO.architect, `wrong-${i}`)).status);
		expect(statuses.slice(0, 4)).toEqual([400, 400, 400, 400]);
		expect(statuses[4]).toBe(429);
		const locked = await c.signIn(DEMO.architect); // right password, still locked
		expect(locked.status).toBe(429);
		const text = await locked.text();
		expect(text).toMatch(/Too many failed sign-ins to this account from your address\. Try again in 10 minutes \(after \d\d:\d\d:\d\d UTC\)/);
		// Another account from the same address is not locked by this one.
		expect((await new Client(app.url).signIn(DEMO.viewer)).status).toBe(303);
	});
});

describe('deactivation', () => {
	it('should end the deactivated user’s sessions at once', async () => {
		const admin = new Client(app.url);
		expect((await admin.signIn(DEMO.admin)).status).toBe(303);
		const created = await admin.form('/admin?/create', {
			name: 'Short Stay',
			email: 'short.stay@paretherm.test',
			mode: 'password'
		});
		expect(created.status).toBe(303);
		expect(created.headers.get('location')).toBe('/admin');
		const password = /one-time password <code[^>]*>([^<]+)</.exec(await (await admin.follow(created)).text())![1];

		const person = new Client(app.url);
		expect((await person.signIn('short.stay@paretherm.test', password)).status).toBe(303);
		expect((await person.get('/')).status).toBe(200); // no programs yet: the list page

		const people = await admin.get('/admin');
		const html = await people.text();
		const userId = new RegExp(`short.stay@paretherm.test[\\s\\S]*?name="userId" value="([a-z0-9]+)"`).exec(html)![1];
		const off = await admin.form('/admin?/setActive', { userId, active: 'false' });
		expect(off.status).toBe(303);
		expect(await (await admin.follow(off)).text()).toContain('Short Stay is now deactivated');

		const after = await person.get('/');
		expect(after.status).toBe(303);
		expect(after.headers.get('location')).toBe('/login');
		const again = await person.signIn('short.stay@paretherm.test', password);
		expect(again.status).toBe(403);
		expect(await again.text()).toContain('deactivated');
	});
});

describe('post/redirect/get on the administration pages', () => {
	it('should answer a successful admin post with 303 to its page, show the outcome once, and leave no ?/action in the address', async () => {
		const admin = new Client(app.url);
		expect((await admin.signIn(DEMO.admin)).status).toBe(303);
		const made = await admin.form('/admin/programs?/createProgram', { name: 'Fleet trials', description: 'Depot vans, winter' });
		expect(made.status).toBe(303);
		expect(made.headers.get('location')).toBe('/admin/programs');
		const page = await (await admin.follow(made)).text();
		expect(page).toContain('Program “Fleet trials” created.');
		// Shown once: a reload of the page does not repeat it (nor post again).
		expect(await (await admin.get('/admin/programs')).text()).not.toContain('Program “Fleet trials” created.');

		const retried = await admin.form('/admin/outbox?/retryFailed', {});
		expect(retried.status).toBe(303);
		expect(retried.headers.get('location')).toBe('/admin/outbox?done=none-failed');
		expect(await (await admin.follow(retried)).text()).toContain('No failed messages to retry.');
	});
});

describe('error handling', () => {
	it('should answer empty fields with a message and store nothing', async () => {
		const before = await databaseChecksum(app.dataDir);
		const c = new Client(app.url);
		const noEmail = await c.form('/login', { email: '', password: 'x' });
		expect(noEmail.status).toBe(400);
		expect(await noEmail.text()).toContain('Enter your e-mail address.');
		const noPassword = await c.form('/login', { email: DEMO.engineer, password: '' });
		expect(noPassword.status).toBe(400);
		expect(await noPassword.text()).toContain('Enter your password.');
		expect(await databaseChecksum(app.dataDir)).toBe(before);
	});

	it('should refuse a 10 MB password with a clear message', async () => {
		const before = await databaseChecksum(app.dataDir);
		const c = new Client(app.url);
		const res = await c.form('/login', { email: 'nobody@paretherm.test', password: 'p'.repeat(10 * 1024 * 1024) });
		expect([400, 413]).toContain(res.status);
		const text = await res.text();
		expect(text).toMatch(/at most 72 bytes|too large|Content-length/i);
		expect(await databaseChecksum(app.dataDir)).toBe(before);
	});

	it('should answer an unknown or malformed program id with 404', async () => {
		const c = new Client(app.url);
		await c.signIn(DEMO.engineer);
		expect((await c.get('/programs/99999')).status).toBe(404);
		expect((await c.get('/programs/abc')).status).toBe(404);
		expect((await c.get('/programs/1%27%20OR%201=1')).status).toBe(404);
	});

	it('should treat a tampered session cookie as signed out and clear it', async () => {
		const res = await fetch(`${app.url}/programs/1`, {
			headers: { cookie: 'paretherm_session=forged-value-123' },
			redirect: 'manual'
		});
		expect(res.status).toBe(303);
		expect(res.headers.get('location')).toBe('/login?next=%2Fprograms%2F1');
		expect(res.headers.getSetCookie().join(';')).toMatch(/paretherm_session=;/);
	});

	it('should refuse a cross-site form post', async () => {
		const res = await fetch(`${app.url}/login`, {
			method: 'POST',
			headers: { 'content-type': 'application/x-www-form-urlencoded', origin: 'http://evil.example' },
			body: 'email=a%40b.c&password=x',
			redirect: 'manual'
		});
		expect(res.status).toBe(403);
	});
});
