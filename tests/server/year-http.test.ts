/**
 * Year of use over HTTP against the built app (run `npm run build` first): the seeded invented
 * climates, pattern and evaluation are listed and shown to every member; engineers, architects
 * and managers may evaluate, viewers may not; bad climates, patterns and evaluation settings are
 * refused with the reason and the database is unchanged; the CSV export carries the figures.
 * Expectations are common practice, no source (calendar: 8 760 / 8 784 hours).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Client, DEMO, seed, startApp, tempDataDir, type RunningApp } from '../helpers/app';
import { databaseChecksum, queryDb } from '../helpers/db-checksum';
import { climateCsv_C } from '../../src/lib/year/climate';
import { waitFor } from '../helpers/sweeps';

let app: RunningApp;
const clients = {} as Record<'engineer' | 'manager' | 'viewer' | 'architect', Client>;
let programId = 0;
let climateId = 0;
let patternId = 0;
let sweepId = 0;

const yearPath = () => `/programs/${programId}/year`;

/** Posts a form; a chosen file travels as text (the page reads climate CSV and pattern JSON into text fields). */
function multipart(c: Client, action: string, fields: Record<string, string>, file?: { name: string; text: string }) {
	const body = new FormData();
	for (const [k, v] of Object.entries(fields)) body.set(k, v);
	if (file && action === 'uploadClimate') {
		body.set('csv', file.text);
		body.set('fileName', file.name);
	} else if (file) body.set('json', file.text);
	return c.request(`${yearPath()}?/${action}`, { method: 'POST', headers: { accept: 'text/html' }, body });
}

const goodEvaluation = () => ({
	name: 'Coastal check',
	climateId: String(climateId),
	patternId: String(patternId),
	sweepId: String(sweepId),
	fixedLeadTime_min: '30',
	fixedSetpoint_C: '20',
	fixedBelowAmbient_C: '',
	fleetSize: '40'
});

beforeAll(async () => {
	const dataDir = tempDataDir();
	await seed(dataDir, 'scripts/seed.ts', { PARETHERM_SEED_YEAR_SWEEP: '1' });
	app = await startApp({ dataDir, seed: false });
	for (const who of ['engineer', 'manager', 'viewer', 'architect'] as const) {
		clients[who] = new Client(app.url);
		expect((await clients[who].signIn(DEMO[who])).status).toBe(303);
	}
	programId = Number(/\/programs\/(\d+)/.exec((await clients.manager.get('/')).headers.get('location')!)![1]);
	climateId = (await queryDb<{ id: number }>(app.dataDir, "SELECT id FROM climates WHERE name LIKE '%coastal%'"))[0].id;
	patternId = (await queryDb<{ id: number }>(app.dataDir, 'SELECT id FROM charging_patterns ORDER BY id LIMIT 1'))[0].id;
	sweepId = (await queryDb<{ id: number }>(app.dataDir, "SELECT id FROM sweeps WHERE name LIKE 'Year-of-use grid%'"))[0].id;
}, 300_000);
afterAll(async () => {
	await app?.stop();
});

describe('year of use over HTTP', () => {
	it('should list the invented climates, the pattern and the demo evaluation for a manager', async () => {
		const res = await clients.manager.get(yearPath());
		expect(res.status).toBe(200);
		const html = await res.text();
		expect(html).toContain('Invented cold continental year');
		expect(html).toContain('Invented mild coastal year');
		expect(html).toContain('invented</span>');
		expect(html).toContain('Delivery vans, depot fast charges (invented)');
		expect(html).toContain('Cold continental year, delivery vans (demo)');
	});

	it('should show the demo evaluation with the three policies and the caution', async () => {
		const id = (await queryDb<{ id: number }>(app.dataDir, 'SELECT id FROM year_evaluations ORDER BY id LIMIT 1'))[0].id;
		for (const who of ['manager', 'architect', 'engineer', 'viewer'] as const) {
			const res = await clients[who].get(`${yearPath()}/${id}`);
			expect(res.status).toBe(200);
			const html = await res.text();
			for (const label of ['No pre-conditioning', 'Fixed rule', 'Calibration table']) expect(html).toContain(label);
			expect(html).toContain('simulation results inform but do not replace cell and pack testing');
		}
	});

	describe('creating an evaluation', () => {
		it('should let a manager evaluate, store the exact inputs and export the figures as CSV', async () => {
			const res = await clients.manager.form(`${yearPath()}?/evaluate`, goodEvaluation());
			expect(res.status).toBe(303);
			const id = Number(/year\/(\d+)$/.exec(res.headers.get('location')!)![1]);
			const [row] = await queryDb<{ climate_id: number; pattern_id: number; sweep_id: number; settings: string; result: string }>(app.dataDir, 'SELECT * FROM year_evaluations WHERE id = ?', [id]);
			expect([row.climate_id, row.pattern_id, row.sweep_id]).toEqual([climateId, patternId, sweepId]);
			expect(JSON.parse(row.settings).fleetSize).toBe(40);
			const result = JSON.parse(row.result);
			// 6 charges a week over 365 days.
			expect(result.events).toBe(Math.round((6 * 365) / 7));
			expect((await clients.manager.get(`${yearPath()}/${id}`)).status).toBe(200);
			const csv = await (await clients.manager.get(`${yearPath()}/${id}/export?fleet=7`)).text();
			const lines = csv.trim().split('\r\n');
			expect(lines[0]).toBe('policy,period,scope,vehicles,charge_events,events_without_figures,hours_saved_h,energy_kWh,energy_cost,time_value,kWh_per_hour_saved,events_worth_it_share,currency');
			const fleetYear = lines.find((l) => l.startsWith('Fixed rule,year,fleet,7,'))!.split(',');
			expect(Number(fleetYear[4])).toBe(result.events * 7);
			const fixed = result.policies.find((p: { kind: string }) => p.kind === 'fixed');
			expect(Number(fleetYear[6])).toBeCloseTo(((fixed.timeSaved_s / 3600) * 7), 5);
			// One digest to each subscribed member (the demo manager), stored with the evaluation.
			const mail = await queryDb<{ dedupe_key: string; to_address: string; subject: string; text: string }>(app.dataDir, "SELECT dedupe_key, to_address, subject, text FROM mail_outbox WHERE kind = 'year-digest' AND dedupe_key LIKE ?", [`year-digest:${id}:%`]);
			expect(mail.map((m) => m.to_address)).toEqual([DEMO.manager]);
			expect(mail[0].subject).toContain('Year of use: Coastal check');
			expect(mail[0].text).toContain('Calibration table');
			expect(mail[0].text).toContain(`/programs/${programId}/year/${id}`);
			expect(mail[0].text).toMatch(/simulation results inform but do not replace/i);
			// The outbox delivers in the background; wait for it so the next tests' database checksums are not racing it.
			await waitFor('the year digest delivered', async () => {
				const pending = await queryDb<{ n: number }>(app.dataDir, "SELECT COUNT(*) AS n FROM mail_outbox WHERE status = 'pending'");
				return pending[0].n === 0;
			}, 60_000);
		});

		it('should refuse a viewer', async () => {
			const before = await databaseChecksum(app.dataDir);
			const res = await clients.viewer.form(`${yearPath()}?/evaluate`, goodEvaluation());
			expect(res.status).toBe(403);
			expect(await databaseChecksum(app.dataDir)).toBe(before);
		});

		const bad: [string, Record<string, string>, string][] = [
			['a fixed rule off the sweep grid', { fixedLeadTime_min: '25' }, 'the fixed rule must be one of its strategies: lead times 30 min and set-points 20, 30 °C'],
			['a fleet size that is not a whole number', { fleetSize: 'many' }, 'The fleet size must be a number'],
			['a sweep of no program of ours', { sweepId: '99999' }, 'No sweep with id 99999 in this program. A calibration table from another program cannot be used here.'],
			['an unknown climate', { climateId: '424242' }, 'No climate with id 424242 in this program.'],
			['a missing name', { name: ' ' }, 'Give it a name.']
		];
		for (const [what, change, message] of bad) {
			it(`should refuse ${what} with the reason and store nothing`, async () => {
				const before = await databaseChecksum(app.dataDir);
				const res = await clients.architect.form(`${yearPath()}?/evaluate`, { ...goodEvaluation(), ...change });
				expect(res.status).toBe(400);
				expect(await res.text()).toContain(message);
				expect(await databaseChecksum(app.dataDir)).toBe(before);
			});
		}

		it('should answer JSON with the message and the field for a client that asks for it', async () => {
			const res = await clients.engineer.request(`${yearPath()}?/evaluate`, {
				method: 'POST',
				headers: { 'content-type': 'application/x-www-form-urlencoded', accept: 'application/json', 'x-sveltekit-action': 'true' },
				body: new URLSearchParams({ ...goodEvaluation(), fleetSize: '0' }).toString()
			});
			const body = await res.json();
			expect(body.type).toBe('failure');
			expect(body.status).toBe(400);
			expect(body.data).toContain('fleetSize');
		});
	});

	describe('climates', () => {
		it('should accept a leap year of 8 784 hours as a new version of a climate', async () => {
			const slug = (await queryDb<{ slug: string }>(app.dataDir, 'SELECT slug FROM climates WHERE id = ?', [climateId]))[0].slug;
			const res = await multipart(clients.engineer, 'uploadClimate', { name: 'Coastal, leap year', slug }, { name: 'leap.csv', text: climateCsv_C(new Array(8784).fill(4.5)) });
			expect(res.status).toBe(303);
			const rows = await queryDb<{ version: number; hours: number }>(app.dataDir, 'SELECT version, hours FROM climates WHERE slug = ? ORDER BY version', [slug]);
			expect(rows.map((r) => [r.version, r.hours])).toEqual([
				[1, 8760],
				[2, 8784]
			]);
		});

		it('should refuse 8 000 rows with the reason and store nothing', async () => {
			const before = await databaseChecksum(app.dataDir);
			const res = await multipart(clients.engineer, 'uploadClimate', { name: 'Short year' }, { name: 'short.csv', text: climateCsv_C(new Array(8000).fill(4.5)) });
			expect(res.status).toBe(400);
			expect(await res.text()).toContain('The file has 8,000 hourly rows; a year has 8,760 (8,784 in a leap year).');
			expect(await databaseChecksum(app.dataDir)).toBe(before);
		});

		it('should refuse text in a number and an ambient beyond 60 °C, naming the rows', async () => {
			const values: (number | string)[] = new Array(8760).fill(4.5);
			values[9] = 'warm';
			values[20] = 71;
			const before = await databaseChecksum(app.dataDir);
			const res = await multipart(clients.engineer, 'uploadClimate', { name: 'Broken' }, { name: 'broken.csv', text: climateCsv_C(values as number[]) });
			expect(res.status).toBe(400);
			const html = await res.text();
			expect(html).toContain('row 11: ambient “warm” is not a number');
			expect(html).toContain('row 22: ambient 71 °C (71 °C) is outside -60…60 °C');
			expect(await databaseChecksum(app.dataDir)).toBe(before);
		});

		it('should not let a manager upload a climate', async () => {
			const res = await multipart(clients.manager, 'uploadClimate', { name: 'x' }, { name: 'x.csv', text: climateCsv_C(new Array(8760).fill(1)) });
			expect(res.status).toBe(403);
		});
	});

	describe('charging patterns', () => {
		const fields = {
			name: 'Weekend vans',
			eventsPerWeek: '4',
			scenarioSlug: 'cold-morning-depot',
			arrivalSocs_pct: '20:1, 35:1',
			targetSoc_pct: '80',
			monthWeights: '1,1,1,1,1,1,1,1,1,1,1,1',
			hourWeights: '0,0,0,0,0,0,1,1,1,1,1,1,1,1,1,1,1,1,1,0,0,0,0,0',
			energyPrice_per_kWh: '0.3',
			hourValue: '40',
			currency: 'EUR',
			sampling: 'even',
			seed: '1'
		};

		it('should store a pattern from the form, and one imported as JSON', async () => {
			expect((await multipart(clients.engineer, 'savePattern', fields)).status).toBe(303);
			const json = JSON.stringify({ format: 'paretherm-charging-pattern/1', name: 'Imported vans', data: { eventsPerWeek: 2, monthWeights: new Array(12).fill(1), hourWeights: new Array(24).fill(1), arrivalSocs: [{ soc: 0.3, weight: 1 }], targetSoc: 0.8, scenarioSlug: 'cold-morning-depot' } });
			expect((await multipart(clients.engineer, 'savePattern', { name: '' }, { name: 'p.json', text: json })).status).toBe(303);
			const names = (await queryDb<{ name: string }>(app.dataDir, 'SELECT name FROM charging_patterns')).map((r) => r.name);
			expect(names).toEqual(expect.arrayContaining(['Weekend vans', 'Imported vans']));
		});

		const badPatterns: [string, Record<string, string>, string][] = [
			['negative weekly events', { eventsPerWeek: '-2' }, 'eventsPerWeek: events per week must not be negative'],
			['absurd weekly events', { eventsPerWeek: '150' }, 'eventsPerWeek: more than 100 fast charges a week per vehicle is not a plausible pattern'],
			['eleven month weights', { monthWeights: '1,1,1,1,1,1,1,1,1,1,1' }, 'monthWeights: give twelve month weights'],
			['an unknown drive scenario', { scenarioSlug: 'nowhere-run' }, 'no scenario “nowhere-run” in this program']
		];
		for (const [what, change, message] of badPatterns) {
			it(`should refuse ${what} with the reason and store nothing`, async () => {
				const before = await databaseChecksum(app.dataDir);
				const res = await multipart(clients.engineer, 'savePattern', { ...fields, ...change });
				expect(res.status).toBe(400);
				expect(await res.text()).toContain(message);
				expect(await databaseChecksum(app.dataDir)).toBe(before);
			});
		}
	});
});
