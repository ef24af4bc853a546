/** A person signs in through the real form in headless chromium, sees their overview, signs out. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { BrowserContext } from 'playwright-core';
import { DEMO, DEMO_PASSWORD, startApp, type RunningApp } from '../helpers/app';
import { launchBrowser } from '../helpers/browser';

let app: RunningApp;
let browser: BrowserContext;
beforeAll(async () => {
	app = await startApp({ env: { PARETHERM_NO_RUNTIME: '1' } });
	browser = await launchBrowser();
});
afterAll(async () => {
	await browser?.close();
	await app?.stop();
});

describe('sign-in in a browser', () => {
	it('should sign in, show the role’s overview and sign out', async () => {
		const page = await browser.newPage();
		const consoleErrors: string[] = [];
		page.on('console', (m) => m.type() === 'error' && consoleErrors.push(m.text()));
		await page.goto(`${app.url}/programs/1`);
		await page.waitForURL(/\/login\?next=/);
		await page.getByLabel('E-mail').fill(DEMO.architect);
		await page.getByLabel('Password').fill(DEMO_PASSWORD);
		await page.getByRole('button', { name: 'Sign in' }).click();
		await page.waitForURL(/\/programs\/1$/);
		await expect(page.getByTestId('role-badge').textContent()).resolves.toBe('Pack architect');
		await expect(page.getByTestId('signed-in-as').textContent()).resolves.toBe('Omar Castellane');
		await page.getByRole('button', { name: 'Sign out' }).click();
		await page.waitForURL(/\/login$/);
		await page.goto(`${app.url}/programs/1`);
		await page.waitForURL(/\/login\?next=/);
		expect(consoleErrors.slice(0, 3)).toEqual([]);
	});

	it('should show the reason when the password is wrong', async () => {
		const page = await browser.newPage();
		await page.goto(`${app.url}/login`);
		await page.getByLabel('E-mail').fill(DEMO.viewer);
		await page.getByLabel('Password').fill('definitely-wrong');
		await page.getByRole('button', { name: 'Sign in' }).click();
		await expect(page.getByTestId('login-error').textContent()).resolves.toContain('E-mail or password is not right.');
	});
});
