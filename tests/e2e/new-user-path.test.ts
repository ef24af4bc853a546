/**
 * What a new user runs into, tried in headless chromium against the built app with the finished
 * demo sweep: fronts measured against the baseline with energy parts that add up, the newest
 * version of every input, calibration exports that say where they came from, managers who decide,
 * the comparison of variants, forms that behave, and pages that fit a 390 px phone. One block per
 * finding; screenshots (1280 px and 390 px) go to docs/screenshots.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Download, Page } from 'playwright-core';
import fs from 'node:fs';
import { execFile } from 'node:child_process';
import path from 'node:path';
import { promisify } from 'node:util';
import { DEMO, ROOT, startApp, tempDataDir, type RunningApp } from '../helpers/app';
import { BrowserSession } from '../helpers/browser';
import { queryDb } from '../helpers/db-checksum';
import { DEMO_SWEEP_NAME } from '../../src/lib/server/sweeps/demo';
import { demoLfpPrismatic, demoNmcPouch, demoPack } from '../../src/lib/engine/demo';

let app: RunningApp;
let session: BrowserSession;
let page: Page;
let programPath = '';
let demoSweepId = 0;

beforeAll(async () => {
	const dataDir = tempDataDir('paretherm-new-user-');
	// The finished demo sweep, as a newcomer sees it (seeded without blocking the test runner).
	await promisify(execFile)(path.join(ROOT, 'node_modules/.bin/tsx'), ['scripts/seed.ts'], {
		cwd: ROOT,
		env: { ...process.env, PARETHERM_DATA_DIR: dataDir, PARETHERM_BCRYPT_COST: '4', PARETHERM_SEED_SWEEP: '1' }
	});
	app = await startApp({ dataDir, seed: false });
	session = await BrowserSession.open(app.url);
	page = session.page;
	const [program] = await queryDb<{ id: number }>(dataDir, 'SELECT id FROM programs ORDER BY id LIMIT 1');
	programPath = `/programs/${program.id}`;
	demoSweepId = (await queryDb<{ id: number }>(dataDir, 'SELECT id FROM sweeps WHERE name = ?', [DEMO_SWEEP_NAME]))[0].id;
}, 300_000);
afterAll(async () => {
	await session?.close();
	await app?.stop();
});

const go = (p: string) => page.goto(`${app.url}${programPath}${p}`);
const shot = (name: string) => session.shot(name);

/** The text of a file the page downloaded. */
async function readDownload(d: Download): Promise<string> {
	const file = await d.path();
	return fs.readFileSync(file!, 'utf8');
}

/** The chart's HTML legend ends above its canvas: nothing of the legend sits over the plot. */
async function expectLegendAbovePlot(scope: ReturnType<Page['locator']>) {
	const legendBox = await scope.getByTestId('chart-legend').first().boundingBox();
	await scope.locator('canvas').first().waitFor();
	const canvasBox = await scope.locator('canvas').first().boundingBox();
	expect(legendBox && canvasBox).toBeTruthy();
	expect(legendBox!.y + legendBox!.height).toBeLessThanOrEqual(canvasBox!.y + 0.5);
}

/** Every row of the sweep's points table (clicks "Show … more" until all are shown). */
async function showAllRows() {
	for (;;) {
		const more = page.getByRole('button', { name: /^Show \d+ more$/ });
		if (!(await more.count())) return;
		await more.click();
	}
}

/** "2.44 kWh before arrival − 0.27 kWh during charge = 2.17 kWh" → [2.44, −0.27, 2.17]. */
function splitParts(text: string): [number, number, number] {
	const m = /(−?[\d.]+) kWh before arrival ([+−]) ([\d.]+) kWh during charge = (−?[\d.]+) kWh/.exec(text);
	if (!m) throw new Error(`No energy split in “${text}”`);
	const n = (s: string) => Number(s.replace('−', '-'));
	return [n(m[1]), (m[2] === '−' ? -1 : 1) * n(m[3]), n(m[4])];
}

describe('a new user on the demo program', () => {
	it('should see fronts that never hold a strategy slower than the baseline, and energy parts that add up', async () => {
		await session.signInAs(DEMO.architect);
		await go(`/sweeps/${demoSweepId}`);
		await page.getByTestId('knee').waitFor();
		await page.getByLabel('Front points and baselines only').check();
		await showAllRows();
		const saved = await page.locator('[data-testid="time-saved"][data-front="yes"]').allTextContents();
		expect(saved.length).toBeGreaterThan(0);
		const slowerOnFront = saved.filter((t) => Number(t.replace(/[^\d.−-]/g, '').replace('−', '-')) < 0);
		expect(slowerOnFront).toEqual([]);

		await page.getByRole('link', { name: 'Open the knee point' }).click();
		await page.waitForURL(/\/points\/\d+$/);
		const [pre, during, net] = splitParts((await page.getByTestId('energy-split').textContent()) ?? '');
		expect(pre + during).toBeCloseTo(net, 6);
		await session.signOut();
	});

	it('should show the newest version everywhere, let the builder pick a version and show which versions a sweep ran', async () => {
		await session.signInAs(DEMO.engineer);
		// Copy the demo NMC cell and edit it twice, renaming it on the way (v1 → v3).
		await go('/inputs');
		await page.getByRole('link', { name: demoNmcPouch.name, exact: true }).click();
		await page.getByRole('button', { name: 'Duplicate as a new input' }).click();
		await page.waitForURL(/\/inputs\/\d+$/);
		const baseName = ((await page.locator('input[name="name"]').inputValue()) ?? '').trim();
		for (const [margin_V, suffix] of [
			[0.015, 'with 15 mV plating margin'],
			[0.02, 'with 20 mV plating margin']
		] as const) {
			const json = JSON.parse(await page.locator('textarea[name="json"]').inputValue());
			json.limits.anodePotentialMargin_V = margin_V;
			await page.locator('input[name="name"]').fill(`${baseName} ${suffix}`);
			await page.locator('textarea[name="json"]').fill(JSON.stringify(json, null, 2));
			await page.getByRole('button', { name: 'Save as new version' }).click();
			await page.waitForURL(/\/inputs\/\d+$/);
		}
		const newestUrl = new URL(page.url()).pathname;
		const newestName = `${baseName} with 20 mV plating margin`;

		await go('/inputs');
		const item = page.getByTestId('input-item').filter({ hasText: '20 mV plating margin' });
		await expect(item.getByTestId('input-version').textContent()).resolves.toBe('v3 (newest of 3)');
		await expect(item.getByRole('link').getAttribute('href')).resolves.toBe(newestUrl);
		await expect(page.getByTestId('input-item').filter({ hasText: `${baseName}` }).count()).resolves.toBe(1);

		// The builder lists the newest name, offers every version (newest by default) and runs the one picked.
		await go('/sweeps/new');
		await expect(page.getByText(newestName, { exact: true }).count()).resolves.toBe(1);
		const slug = (await page.locator(`input[name="cells"]`).evaluateAll((els, n) => els.find((e) => e.parentElement?.textContent?.includes(n))?.getAttribute('value'), newestName))!;
		const versionSelect = page.locator(`select[name="cellVersion:${slug}"]`);
		await expect(versionSelect.inputValue()).resolves.toBe('3');
		for (const c of await page.locator('input[name="cells"]').all()) if ((await c.getAttribute('value')) !== slug) await c.uncheck();
		await page.locator(`input[name="cells"][value="${slug}"]`).check();
		await versionSelect.selectOption('2');
		await page.getByLabel('Ambient temperatures').fill('-10');
		await page.getByLabel('States of health').fill('100');
		await page.getByLabel('Arrival states of charge').fill('20');
		await page.getByLabel('Heater lead times before arrival').fill('0, 10');
		await page.getByLabel('Coolant set-points').fill('25');
		await page.getByRole('button', { name: 'Queue sweep' }).click();
		await page.waitForURL(/\/sweeps\/\d+$/);
		const ran = page.getByTestId('ran-version').filter({ hasText: 'plating margin' });
		await expect(ran.textContent()).resolves.toContain(`${baseName} with 15 mV plating margin · version 2`);
		await expect(ran.textContent()).resolves.toContain('since edited: version 3');
		await session.signOut();
	});

	it('should export calibration tables that say where they came from, and agree with the page on the rule', async () => {
		await session.signInAs(DEMO.manager);
		await go(`/calibration?sweep=${demoSweepId}`);
		await page.getByTestId('calibration-table').waitFor();
		const pageRule = (await page.getByTestId('calibration-rule').textContent())!.trim();
		const pageCodes = await page.getByTestId('row-rule').evaluateAll((els) => els.map((e) => e.getAttribute('data-rule')));

		const [jsonDownload] = await Promise.all([page.waitForEvent('download'), page.getByRole('link', { name: 'Export JSON' }).click()]);
		const doc = JSON.parse(await readDownload(jsonDownload));
		expect(doc.provenance.sweep).toMatchObject({ id: demoSweepId, name: DEMO_SWEEP_NAME });
		expect(doc.provenance.inputs.cells.map((c: { name: string; version: number }) => c.version)).toEqual(doc.provenance.inputs.cells.map(() => 1));
		expect(doc.provenance.inputs.cells.map((c: { name: string }) => c.name)).toContain(demoNmcPouch.name);
		expect(doc.provenance.inputs.baseScenario).toMatchObject({ slug: 'cold-morning-depot', version: 1 });
		expect(new Date(doc.provenance.createdAt).toISOString()).toBe(doc.provenance.createdAt);
		expect(doc.provenance.generator).toMatch(/^Paretherm \d+\.\d+\.\d+/);
		expect(doc.rule.kind).toBe('knee');
		expect(doc.rule.description).toBe(pageRule);
		expect(doc.rows.map((r: { rule: string }) => r.rule)).toEqual(pageCodes);
		expect(doc.rows.every((r: { cell_name: string; cell_version: number }) => r.cell_name && r.cell_version === 1)).toBe(true);

		const [csvDownload] = await Promise.all([page.waitForEvent('download'), page.getByRole('link', { name: 'Export CSV' }).click()]);
		const lines = (await readDownload(csvDownload)).split('\r\n');
		expect(lines[0]).toBe('# format: paretherm-calibration/2');
		expect(lines).toContain(`# sweep: ${demoSweepId} "${DEMO_SWEEP_NAME}" finished ${doc.provenance.sweep.finishedAt}`);
		expect(lines.find((l) => l.startsWith('# rule: '))).toBe(`# rule: ${pageRule}`);
		expect(lines.some((l) => /^# input: cell ".+" slug .+ version 1 \(parameter set \d+\)$/.test(l))).toBe(true);
		expect(lines.some((l) => /^# generator: Paretherm \d/.test(l))).toBe(true);
		await session.signOut();
	});

	it('should let a program manager decide on a proposed strategy', async () => {
		await session.signInAs(DEMO.engineer);
		await go(`/sweeps/${demoSweepId}`);
		await page.getByRole('link', { name: 'Open the knee point' }).click();
		await page.waitForURL(/\/points\/\d+$/);
		await page.getByLabel('Title').fill('Knee of the first demo scenario');
		await page.getByRole('button', { name: 'Promote to strategy' }).click();
		await page.waitForURL(/\/strategies\/\d+$/);
		const strategyUrl = new URL(page.url()).pathname;
		await session.signOut();

		await session.signInAs(DEMO.manager);
		await expect(page.getByTestId('role-focus').textContent()).resolves.toContain('awaiting your decision');
		await page.goto(`${app.url}${strategyUrl}`);
		await page.getByLabel('Note (optional)').fill('Declined for now: the aged-cell case needs a bench check first.');
		await page.getByRole('button', { name: 'Decline' }).click();
		await page.getByText('Strategy is now declined.').waitFor();
		await expect(page.getByTestId('strategy-state').textContent()).resolves.toBe('Declined');
		await session.signOut();
	});

	it('should compare variants of finished sweeps scenario by scenario, with legends that name every series in full and stay off the plot', async () => {
		await session.signInAs(DEMO.architect);
		await go(`/sweeps/${demoSweepId}`);
		await page.getByTestId('knee').waitFor();
		// The all-scenario overlay: every front named in full, no paging, the legend above the plot.
		const overlay = page.locator('section[aria-labelledby="h-overlay"]');
		const overlayNames = await overlay.getByTestId('chart-legend').locator('li').allTextContents();
		const optionNames = await page.getByTestId('scenario-select').locator('option').allTextContents();
		expect(overlayNames.map((t) => t.trim())).toEqual([...optionNames.map((t) => t.trim()), 'Baseline (no pre-conditioning)']);
		await expectLegendAbovePlot(overlay);

		await overlay.getByRole('link', { name: /Compare its variants/ }).click();
		await page.waitForURL(/\/compare\?/);
		const scenarios = page.getByTestId('compare-scenario');
		await expect(scenarios.count()).resolves.toBe(4); // 2 ambients × 2 states of health, shared by both cells
		const first = scenarios.first();
		const legend = (await first.getByTestId('chart-legend').locator('li').allTextContents()).map((t) => t.trim());
		expect(legend).toEqual([
			expect.stringMatching(new RegExp(`^${demoNmcPouch.name} v1 · .+ v1 \\(sweep #${demoSweepId}\\)$`)),
			expect.stringMatching(new RegExp(`^${demoLfpPrismatic.name} v1 · .+ v1 \\(sweep #${demoSweepId}\\)$`)),
			'Baseline (no pre-conditioning)'
		]);
		await expectLegendAbovePlot(first);
		await expect(first.getByTestId('knee-table').locator('tbody tr').count()).resolves.toBe(2);
		const equal = first.getByTestId('equal-energy-table');
		await expect(equal.locator('tbody tr').count()).resolves.toBeGreaterThan(0);
		await expect(equal.locator('tbody').textContent()).resolves.toMatch(/\([+−]?\d+\.\d min\)/);
		await shot('13-compare-variants');
		await session.signOut();
	});

	it('should ask before cancelling a sweep and leave no form address to post again after a post', async () => {
		await session.signInAs(DEMO.engineer);
		await go('/sweeps/new');
		// Large enough (420 simulations, over a minute of work) to be running when it is cancelled.
		await page.getByLabel('Heater lead times before arrival').fill('0, 5, 10, 15, 20, 30, 45');
		await page.getByLabel('Coolant set-points').fill('15, 20, 25, 30, 35');
		await page.getByRole('button', { name: 'Queue sweep' }).click();
		await page.waitForURL(/\/sweeps\/\d+$/);
		const sweepPath = new URL(page.url()).pathname;
		await page.getByText('Cancel sweep…').click();
		await expect(page.getByRole('dialog', { name: 'Confirm cancelling the sweep' }).isVisible()).resolves.toBe(true);
		await page.getByRole('button', { name: 'Keep it running' }).click();
		await expect(page.getByRole('button', { name: 'Yes, cancel the sweep' }).isVisible()).resolves.toBe(false);
		await page.getByText('Cancel sweep…').click();
		await page.getByRole('button', { name: 'Yes, cancel the sweep' }).click();
		await page.getByText('Sweep cancelled. Results already stored are kept.').waitFor();
		expect(new URL(page.url()).pathname).toBe(sweepPath);
		expect(page.url()).not.toContain('?/');
		await expect(page.locator('[data-status]').first().getAttribute('data-status')).resolves.toBe('cancelled');

		// A comment on a strategy: the page comes back at its own address.
		await go('/strategies');
		await page.locator('a[href*="/strategies/"]').first().click();
		await page.waitForURL(/\/strategies\/\d+$/);
		await page.getByLabel('Add a comment (plain text)').fill('Re-run with the 20 mV margin cell before deciding.');
		await page.getByRole('button', { name: 'Post comment' }).click();
		await page.getByText('Comment posted.').waitFor();
		expect(page.url()).not.toContain('?/');
		await expect(page.getByLabel('Add a comment (plain text)').inputValue()).resolves.toBe('');
		await session.signOut();
	});

	it('should refuse unknown keys in the cell JSON editor, naming the key and the one probably meant', async () => {
		await session.signInAs(DEMO.engineer);
		await go('/inputs');
		await page.getByRole('link', { name: demoLfpPrismatic.name, exact: true }).click();
		await page.waitForURL(/\/inputs\/\d+$/);
		const heading = (await page.locator('h1').textContent())!;
		const json = JSON.parse(await page.locator('textarea[name="json"]').inputValue());
		json.limits.anodePotentialMargin_mV = 20;
		await page.locator('textarea[name="json"]').fill(JSON.stringify(json, null, 2));
		await page.getByRole('button', { name: 'Save as new version' }).click();
		const error = page.getByTestId('input-error');
		await error.waitFor();
		await expect(error.textContent()).resolves.toContain('Unknown key “limits.anodePotentialMargin_mV” (did you mean “anodePotentialMargin_V”?)');
		// Nothing was saved: the same version, and the edited text is still there to fix.
		await go('/inputs');
		await page.getByRole('link', { name: demoLfpPrismatic.name, exact: true }).click();
		await page.waitForURL(/\/inputs\/\d+$/);
		await expect(page.locator('h1').textContent()).resolves.toBe(heading);
		await session.signOut();
	});

	it('should check the sweep builder as the user types, list every problem and keep "Queue sweep" off until they are fixed', async () => {
		await session.signInAs(DEMO.engineer);
		await go('/sweeps/new');
		const queue = page.getByRole('button', { name: 'Queue sweep' });
		const live = page.getByTestId('live-problems');
		await expect(queue.isEnabled()).resolves.toBe(true);

		await page.getByLabel('Ambient temperatures').fill('-20, abc, 70');
		await page.getByLabel('States of health').fill('100, 100');
		await page.getByLabel('User rule: fastest within').fill('-1');
		await live.waitFor();
		const text = (await live.textContent())!;
		expect(text).toContain('“abc” is not a number');
		expect(text).toContain('appears twice');
		expect(text).toContain('The energy budget must be zero or more kWh');
		expect(text).not.toMatch(/watt-hours|more problem\)/);
		await expect(live.locator('li').count()).resolves.toBe(3);
		await expect(queue.isDisabled()).resolves.toBe(true);
		expect(page.url()).toMatch(/\/sweeps\/new$/); // nothing was posted

		await page.getByLabel('Ambient temperatures').fill('-20, -10, 70');
		await expect(live.textContent()).resolves.toContain('Ambient temperature 70 °C is out of range');

		// Over the grid limit: 200 lead times × 100 set-points.
		await page.getByLabel('Ambient temperatures').fill('-20');
		await page.getByLabel('States of health').fill('100');
		await page.getByLabel('User rule: fastest within').fill('1.5');
		await page.getByLabel('Heater lead times before arrival').fill(Array.from({ length: 200 }, (_, i) => (i * 0.5).toFixed(1)).join(', '));
		await page.getByLabel('Coolant set-points').fill(Array.from({ length: 100 }, (_, i) => (10 + i * 0.25).toFixed(2)).join(', '));
		await expect(live.textContent()).resolves.toMatch(/the limit is 20000/);
		await expect(queue.isDisabled()).resolves.toBe(true);

		await page.getByLabel('Heater lead times before arrival').fill('0, 10');
		await page.getByLabel('Coolant set-points').fill('25');
		await page.getByTestId('live-ok').waitFor();
		await expect(queue.isEnabled()).resolves.toBe(true);
		await session.signOut();
	});

	it('should fit every page on a 390 px phone, with wide tables scrolling inside their own box', async () => {
		await session.signInAs(DEMO.admin);
		await page.setViewportSize({ width: 390, height: 844 });
		try {
			// Ids to visit, read as the pages link them.
			await go(`/sweeps/${demoSweepId}`);
			await page.getByTestId('knee').waitFor();
			const pointPath = (await page.getByRole('link', { name: 'Open the knee point' }).getAttribute('href'))!;
			await go('/strategies');
			const strategyPath = (await page.locator('a[href*="/strategies/"]').first().getAttribute('href'))!;
			await go('/checks');
			const checkPath = (await page.locator('a[href*="/checks/"]:not([href*="uploads"])').first().getAttribute('href'))!;
			await go('/inputs');
			const inputPath = (await page.getByTestId('input-item').first().getByRole('link').getAttribute('href'))!;
			await page.goto(`${app.url}/admin/outbox`);
			const messagePath = (await page.locator('a[href^="/admin/outbox/"]').first().getAttribute('href'))!;
			const compare = `${programPath}/compare?v=${encodeURIComponent(`${demoSweepId}:${demoNmcPouch.id}:${demoPack.id}`)}&v=${encodeURIComponent(`${demoSweepId}:${demoLfpPrismatic.id}:${demoPack.id}`)}`;
			const paths = [
				programPath,
				`${programPath}/inputs`,
				inputPath,
				`${programPath}/sweeps`,
				`${programPath}/sweeps/new`,
				`${programPath}/sweeps/${demoSweepId}`,
				pointPath,
				`${programPath}/strategies`,
				strategyPath,
				`${programPath}/calibration`,
				compare,
				`${programPath}/checks`,
				checkPath,
				'/admin',
				'/admin/programs',
				'/admin/outbox',
				messagePath,
				'/settings'
			];
			const wide: string[] = [];
			for (const p of paths) {
				await page.goto(`${app.url}${p}`);
				await page.waitForLoadState('networkidle');
				const width = await page.evaluate(() => document.documentElement.scrollWidth);
				if (width > 390) wide.push(`${p}: ${width} px`);
			}
			expect(wide).toEqual([]);

			// Legends stay off the plots on a phone too.
			await go(`/sweeps/${demoSweepId}`);
			await page.getByTestId('knee').waitFor();
			await expectLegendAbovePlot(page.locator('section[aria-labelledby="h-scenario"]'));
			await expectLegendAbovePlot(page.locator('section[aria-labelledby="h-overlay"]'));
			await shot('14-sweep-page-390px');
			await page.goto(`${app.url}${compare}`);
			await page.getByTestId('compare-scenario').first().locator('canvas').first().waitFor();
			await shot('15-compare-variants-390px');
			await session.signOut();
			await session.signInAs(DEMO.manager);
			await shot('16-manager-overview-390px');
			await session.signOut();
		} finally {
			await page.setViewportSize({ width: 1360, height: 900 });
		}
	});

	it('should send a digest whose table fits a 600 px mail card, label picks by their rule, and write dates one way', async () => {
		await session.signInAs(DEMO.admin);
		await page.goto(`${app.url}/admin/outbox`);
		const digestPath = (await page.getByRole('link', { name: /Sweep “.+” finished/ }).first().getAttribute('href'))!;
		const messagePaths = await page.locator('a[href^="/admin/outbox/"]').evaluateAll((as) => as.map((a) => a.getAttribute('href')!));
		// Dates on pages: ISO 8601 date, 24-hour time and the zone, the same everywhere.
		const iso = /^\d{4}-\d\d-\d\d \d\d:\d\d UTC$/;
		const outboxDates = await page.getByTestId('outbox-table').getByTestId('when').allTextContents();
		expect(outboxDates.length).toBeGreaterThan(0);
		for (const d of outboxDates) expect(d.trim()).toMatch(iso);
		await go('/sweeps');
		const sweepDates = await page.getByTestId('when').allTextContents();
		expect(sweepDates.length).toBeGreaterThan(0);
		for (const d of sweepDates) expect(d.trim()).toMatch(iso);

		// Every message as a mail client shows it, 600 px wide: nothing wider than the window.
		await page.setViewportSize({ width: 600, height: 900 });
		try {
			const wide: string[] = [];
			for (const m of messagePaths) {
				await page.goto(`${app.url}${m}/html`);
				const width = await page.evaluate(() => document.documentElement.scrollWidth);
				if (width > 600) wide.push(`${m}: ${width} px`);
			}
			expect(wide).toEqual([]);
			await page.goto(`${app.url}${digestPath}/html`);
			const body = (await page.locator('body').textContent())!;
			expect(body).toMatch(/Picked by\s*(knee|per kWh|baseline)/);
			expect(body).toMatch(/Finished \d{4}-\d\d-\d\d \d\d:\d\d UTC\./);
		} finally {
			await page.setViewportSize({ width: 1360, height: 900 });
		}
		await go('');
		await session.signOut();
	});
});
