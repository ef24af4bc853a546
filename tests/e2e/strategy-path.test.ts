/**
 * The whole path a team walks, in headless chromium against the built app with its real sweep
 * runtime (private redis-server, in-process worker): an engineer creates a scenario, queues a small
 * sweep, watches it reach 100 %, opens the recommended point and promotes it; an architect
 * comments and endorses it; the manager sees the decision. Each main page is saved as a
 * screenshot in docs/screenshots.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { DEMO, startApp, type RunningApp } from '../helpers/app';
import { BrowserSession } from '../helpers/browser';

let app: RunningApp;
let session: BrowserSession;
let page: Page;

beforeAll(async () => {
	app = await startApp();
	session = await BrowserSession.open(app.url);
	page = session.page;
}, 300_000);
afterAll(async () => {
	await session?.close();
	await app?.stop();
});

const shot = (name: string) => session.shot(name);
const signInAs = (email: string) => session.signInAs(email);
const signOut = () => session.signOut();

describe('from scenario to endorsed strategy', () => {
	let strategyUrl = '';

	it('should let an engineer create a scenario, run a sweep and promote the knee point', async () => {
		await signInAs(DEMO.engineer);
		const programUrl = page.url();
		await shot('01-engineer-overview');

		await page.goto(`${programUrl}/inputs`);
		await page.getByLabel('Name', { exact: true }).fill('Browser test: depot C at −15 °C');
		await page.getByLabel('Ambient temperature').fill('-15');
		await page.getByLabel('Drive duration').fill('20');
		await page.getByRole('button', { name: 'Create scenario' }).click();
		await page.waitForURL(/\/inputs\/\d+$/);
		await expect(page.locator('h1').textContent()).resolves.toContain('Browser test: depot C');
		await expect(page.getByText('−15.0 °C').or(page.getByText('-15.0 °C')).first().isVisible()).resolves.toBe(true);
		await shot('02-scenario-page');

		await page.goto(`${programUrl}/sweeps/new`);
		await page.getByLabel('Base scenario').selectOption({ label: 'Browser test: depot C at −15 °C (v1)' });
		await page.getByLabel('Demo LFP prismatic 105 Ah').uncheck();
		await page.getByLabel('Ambient temperatures').fill('-15');
		await page.getByLabel('States of health').fill('100');
		await page.getByLabel('Arrival states of charge').fill('20');
		await page.getByLabel('Heater lead times before arrival').fill('0, 10, 20');
		await page.getByLabel('Coolant set-points').fill('15, 25, 35');
		await expect(page.getByTestId('grid-size').textContent()).resolves.toBe('9');
		await shot('03-sweep-builder');
		await page.getByRole('button', { name: 'Queue sweep' }).click();
		await page.waitForURL(/\/sweeps\/\d+$/);

		// Progress is polled from the JSON API; a reload mid-way keeps showing it.
		await page.reload();
		await page.getByTestId('knee').waitFor({ timeout: 300_000 });
		await expect(page.locator('[data-status]').first().getAttribute('data-status')).resolves.toBe('done');
		await shot('04-sweep-page');

		await page.getByRole('link', { name: 'Open the knee point' }).click();
		await page.waitForURL(/\/points\/\d+$/);
		await page.getByText('Cell current (A)').or(page.locator('canvas')).first().waitFor();
		await shot('05-point-traces');
		await page.getByLabel('Rationale').fill('Knee of the front: most of the time saving for a modest heater energy.');
		await page.getByRole('button', { name: 'Promote to strategy' }).click();
		await page.waitForURL(/\/strategies\/\d+$/);
		strategyUrl = page.url();
		await expect(page.getByTestId('strategy-state').textContent()).resolves.toBe('Proposed');
		await signOut();
	}, 420_000);

	it('should let the architect comment and endorse', async () => {
		await signInAs(DEMO.architect);
		await expect(page.getByTestId('role-focus').textContent()).resolves.toContain('awaiting your decision');
		await shot('06-architect-overview');
		await page.goto(strategyUrl);
		await page.getByLabel('Add a comment (plain text)').fill('Checked against the cold-soak cell tests <script>alert(1)</script> — agreed.');
		await page.getByRole('button', { name: 'Post comment' }).click();
		await page.getByText('Checked against the cold-soak cell tests').waitFor();
		// Comments are rendered as text, never as markup.
		await expect(page.getByTestId('thread-body').last().textContent()).resolves.toContain('<script>alert(1)</script>');
		await page.getByRole('button', { name: 'Endorse' }).click();
		await page.getByText('Strategy is now endorsed.').waitFor();
		await expect(page.getByTestId('strategy-state').textContent()).resolves.toBe('Endorsed');
		await shot('07-strategy-endorsed');
		await signOut();
	}, 240_000);

	it('should show the manager the decision', async () => {
		await signInAs(DEMO.manager);
		await expect(page.getByTestId('decision-state').first().textContent()).resolves.toBe('Endorsed');
		await shot('08-manager-overview');
		await page.goto(page.url() + '/calibration');
		await page.getByTestId('calibration-table').waitFor();
		await shot('09-calibration-table');
		await signOut();
	}, 240_000);

	describe('every page for every role', () => {
		let programPath = '';
		let pages: string[] = [];

		beforeAll(async () => {
			expect(strategyUrl, 'the strategy from the engineer’s path').not.toBe('');
			programPath = new URL(strategyUrl).pathname.replace(/\/strategies\/\d+$/, '');
			await signInAs(DEMO.viewer);
			await page.goto(strategyUrl);
			const pointPath = (await page.locator('a[href*="/points/"]').first().getAttribute('href'))!;
			await signOut();
			const sweepPath = pointPath.replace(/\/points\/\d+$/, '');
			const strategyPath = new URL(strategyUrl).pathname;
			pages = ['', '/inputs', '/inputs/1', '/sweeps', '/strategies', '/calibration', '/sweeps/new'].map((p) => programPath + p);
			pages.push(sweepPath, pointPath, strategyPath);
		}, 300_000);

		// One test per role, each with its own budget: a slow machine slows every role alike.
		for (const who of ['engineer', 'architect', 'manager', 'viewer', 'admin'] as const) {
			it(`should render every page for the ${who} without a console error, and refuse pages the role may not use`, async () => {
				const errorsBefore = session.consoleErrors.length;
				await signInAs(DEMO[who]);
				for (const p of pages) {
					const res = await page.goto(`${app.url}${p}`);
					const mayUse = !p.endsWith('/sweeps/new') || who === 'engineer' || who === 'admin';
					expect(res?.status(), `${who} ${p}`).toBe(mayUse ? 200 : 403);
					if (mayUse) await page.waitForLoadState('networkidle');
				}
				if (who === 'admin') for (const p of ['/admin', '/admin/programs', '/admin/outbox', '/settings']) expect((await page.goto(`${app.url}${p}`))?.status(), p).toBe(200);
				else expect((await page.goto(`${app.url}/admin`))?.status()).toBe(403);
				await page.goto(`${app.url}${programPath}`);
				await signOut();
				// A refused page is an expected 403, the only console error allowed on this tour.
				const unexpected = session.consoleErrors.slice(errorsBefore).filter((e) => !/status of 403/.test(e));
				expect(unexpected).toEqual([]);
			}, 240_000);
		}
	});

	it('should raise no console error on any page visited', () => {
		expect(session.consoleErrors.filter((e) => !/status of 403/.test(e))).toEqual([]);
	});
});
