/** Headless Debian chromium driven by playwright-core (no browser download). */
import { chromium, type BrowserContext } from 'playwright-core';
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
