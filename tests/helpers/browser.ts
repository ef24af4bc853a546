/** Headless Debian chromium driven by playwright-core (no browser download). */
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';

export const CHROMIUM = process.env.CHROMIUM_PATH ?? '/usr/bin/chromium';

export async function launchBrowser(): Promise<BrowserContext> {
	if (!fs.existsSync(CHROMIUM))
		throw new Error(`No chromium at ${CHROMIUM}: install it with \`apt-get install -y chromium\` (scripts/test.sh does).`);
	const userDataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'paretherm-chromium-'));
	return chromium.launchPersistentContext(userDataDir, {
		executablePath: CHROMIUM,
		headless: true,
		viewport: { width: 1360, height: 900 },
		args: [
			'--no-sandbox',
			'--disable-gpu',
			'--disable-quic',
			'--no-first-run',
			'--disable-background-networking',
			'--disable-component-update',
			'--disable-sync'
		]
	});
}

export const SCREENSHOT_DIR = path.resolve(__dirname, '../../docs/screenshots');

/**
 * One browser page against a running app, collecting console errors, with the sign-in steps and
 * screenshots the path tests share.
 */
export class BrowserSession {
	readonly consoleErrors: string[] = [];
	private constructor(
		readonly context: BrowserContext,
		readonly page: Page,
		readonly baseUrl: string
	) {
		page.on('console', (m) => m.type() === 'error' && this.consoleErrors.push(`${page.url()}: ${m.text()}`));
		page.on('pageerror', (e) => this.consoleErrors.push(`${page.url()}: ${e.message}`));
	}

	static async open(baseUrl: string): Promise<BrowserSession> {
		const context = await launchBrowser();
		// Generous waits: on a busy machine a page can take far longer than playwright's 30 s default.
		context.setDefaultTimeout(120_000);
		context.setDefaultNavigationTimeout(120_000);
		fs.mkdirSync(SCREENSHOT_DIR, { recursive: true });
		return new BrowserSession(context, await context.newPage(), baseUrl);
	}

	async shot(name: string) {
		await this.page.waitForTimeout(600); // let charts finish their first draw
		await this.page.screenshot({ path: path.join(SCREENSHOT_DIR, `${name}.png`), fullPage: true });
	}

	async signInAs(email: string, password = 'demo-paretherm-2026') {
		await this.page.goto(`${this.baseUrl}/login`);
		await this.page.getByLabel('E-mail').fill(email);
		await this.page.getByLabel('Password').fill(password);
		await this.page.getByRole('button', { name: 'Sign in' }).click();
		await this.page.waitForURL(/\/programs\/\d+$/);
	}

	async signOut() {
		await this.page.getByRole('button', { name: 'Sign out' }).click();
		await this.page.waitForURL(/\/login$/);
	}

	close() {
		return this.context.close();
	}
}
