/**
 * The model-check path in headless chromium against the built app: an engineer uploads a measured
 * log through the form, sees it charted, is told clearly why a broken file was refused, runs a model
 * check and reads the overlay and its statistics; a viewer reads the check. No console errors on the
 * way. Screenshots go to docs/screenshots.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { DEMO, startApp, type RunningApp } from '../helpers/app';
import { BrowserSession } from '../helpers/browser';
import { replayCurrent } from '../../src/lib/engine/replay';
import { demoNmcPouch } from '../../src/lib/engine/demo';

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

/** A 40-minute bench charge of the demo NMC cell made by the engine, with a small measurement offset (invented). */
function benchLog(): string {
	const t_s = Array.from({ length: 481 }, (_, i) => i * 5);
	const current_A = t_s.map((t) => (t < 60 ? 0 : t < 1800 ? 60 : 0));
	const temp_K = t_s.map((t) => 273.15 + 8 + (6 * t) / 2400);
	const r = replayCurrent(demoNmcPouch, 1, { t_s, current_A, temp_K }, 0.15);
	const rows = t_s.map((t, i) => `${t},${current_A[i]},${(r.voltage_V[i] + 0.003).toFixed(5)},${(temp_K[i] - 273.15).toFixed(2)}`);
	return ['time_s,current_A,voltage_V,temp_C', ...rows].join('\n') + '\n';
}

describe('uploads and model checks in the browser', () => {
	let checkUrl = '';

	it('should let an engineer upload a log, be told why a broken file is refused, and run a model check', async () => {
		await signInAs(DEMO.engineer);
		const programUrl = page.url();
		await page.getByRole('link', { name: 'Checks' }).click();
		await page.waitForURL(/\/checks$/);

		// A broken file first: semicolons.
		await page.locator('input[type=file][name=file]').setInputFiles({ name: 'bench-semicolon.csv', mimeType: 'text/csv', buffer: Buffer.from('time_s;current_A;voltage_V\n0;1,5;3,6\n') });
		await page.getByRole('button', { name: 'Upload' }).click();
		await expect.poll(() => page.getByTestId('upload-error').textContent()).toMatch(/separates values with semicolons/);
		await shot('10-upload-refused');

		await page.getByLabel('What the file holds').selectOption('measured-log');
		await page.locator('input[type=file][name=file]').setInputFiles({ name: 'bench-3-charge.csv', mimeType: 'text/csv', buffer: Buffer.from(benchLog()) });
		await page.getByLabel('Name (blank = file name)').fill('Bench 3, 1C charge at 8 °C');
		await page.getByRole('button', { name: 'Upload' }).click();
		await page.waitForURL(/\/checks\/uploads\/\d+$/);
		await expect.poll(() => page.locator('canvas').count()).toBeGreaterThan(0);
		await shot('11-uploaded-log');

		await page.goto(`${programUrl}/checks`);
		// The log was made with the demo NMC pouch: pick its newest version by name, not by list position.
		const nmc = await page.getByLabel('Cell parameter set version').locator('option', { hasText: demoNmcPouch.name }).first().getAttribute('value');
		await page.getByLabel('Cell parameter set version').selectOption(nmc!);
		await page.getByLabel('Initial state of charge (%)').fill('15');
		await page.getByLabel('Title (optional)').fill('Bench 3 against the demo NMC cell');
		await page.getByRole('button', { name: 'Run check' }).click();
		await page.waitForURL(/\/checks\/\d+$/);
		checkUrl = page.url();
		// The log is the model plus a 3 mV offset: RMSE and bias read 3.0 mV (to the display's 0.1 mV).
		await expect.poll(() => page.getByTestId('rmse').textContent()).toBe('3.0 mV');
		await expect.poll(() => page.locator('canvas').count()).toBeGreaterThan(0);
		await shot('12-model-check');
	});

	it('should let a viewer read the check but not comment', async () => {
		await page.getByRole('button', { name: 'Sign out' }).click();
		await page.waitForURL(/\/login$/);
		await signInAs(DEMO.viewer);
		await page.goto(checkUrl);
		await expect.poll(() => page.getByTestId('rmse').textContent()).toBe('3.0 mV');
		expect(await page.getByRole('button', { name: 'Post comment' }).count()).toBe(0);
		// The refused upload answers 400 by design (no-JavaScript form semantics); the browser logs that status, nothing else may appear.
		expect(session.consoleErrors.filter((e) => !/checks\?\/upload: Failed to load resource: the server responded with a status of 400/.test(e))).toEqual([]);
	});
});
