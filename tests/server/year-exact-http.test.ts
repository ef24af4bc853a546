/**
 * Year of use, exact mode, over HTTP against the built app (run `npm run build` first): an
 * engineer starts an exact run; its chunks run on the sweep queue behind the chunk gate, so the
 * test holds the run where it wants it (queued, one chunk in, finished) instead of racing it.
 *
 * The figures are checked on a case with a known answer: a constant climate equal to one of the
 * sweep's ambients and a single kind of charge (one arrival state of charge on a sweep node, the
 * sweep's state of health). There the lookup reads the node's stored figures without
 * interpolation, and the exact run simulates the very scenario and strategies the sweep stored,
 * so exact totals = lookup totals = charges × the stored point's figures (lookup error 0 within
 * floating-point tolerance). Common practice, no source.
 *
 * Bad input (viewer, unknown evaluation, a form without its mode, starting twice) is refused with
 * the reason and the database is unchanged.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Client, DEMO, seed, startApp, tempDataDir, type RunningApp } from '../helpers/app';
import { databaseChecksum, queryDb } from '../helpers/db-checksum';
import { ChunkGate } from '../helpers/chunk-gate';
import { waitFor } from '../helpers/sweeps';
import { climateCsv_C } from '../../src/lib/year/climate';

const AMBIENT_C = -10; // one of the demo year-of-use sweep's ambients
const ARRIVAL_SOC = 0.15; // one of its arrival states of charge
const EVENTS_PER_WEEK = 0.5; // round(0.5 × 365 / 7) = 26 charges a year

let app: RunningApp;
let gate: ChunkGate;
const clients = {} as Record<'engineer' | 'viewer', Client>;
let programId = 0;
let sweepId = 0;
let evaluationId = 0;
let otherEvaluationId = 0;

const yearPath = () => `/programs/${programId}/year`;
const evalPath = (id: number) => `${yearPath()}/${id}`;

function multipart(c: Client, action: string, fields: Record<string, string>) {
	const body = new FormData();
	for (const [k, v] of Object.entries(fields)) body.set(k, v);
	return c.request(`${yearPath()}?/${action}`, { method: 'POST', headers: { accept: 'text/html' }, body });
}

async function evaluate(name: string, climateId: number, patternId: number): Promise<number> {
	const res = await clients.engineer.form(`${yearPath()}?/evaluate`, {
		name,
		climateId: String(climateId),
		patternId: String(patternId),
		sweepId: String(sweepId),
		fixedLeadTime_min: '30',
		fixedSetpoint_C: '20',
		fixedBelowAmbient_C: '',
		fleetSize: '10'
	});
	expect(res.status).toBe(303);
	return Number(/year\/(\d+)$/.exec(res.headers.get('location')!)![1]);
}

type RunRow = { id: number; status: string; simulations_done: number; simulation_count: number; chunk_count: number; result: string | null; failure_reason: string | null };
const runsOf = (id: number) => queryDb<RunRow>(app.dataDir, 'SELECT * FROM year_exact_runs WHERE evaluation_id = ? ORDER BY id', [id]);

beforeAll(async () => {
	const dataDir = tempDataDir();
	await seed(dataDir, 'scripts/seed.ts', { PARETHERM_SEED_YEAR_SWEEP: '1' });
	gate = ChunkGate.create('closed');
	app = await startApp({ dataDir, seed: false, env: { ...gate.env, PARETHERM_WORKER_THREADS: '1' } });
	for (const who of ['engineer', 'viewer'] as const) {
		clients[who] = new Client(app.url);
		expect((await clients[who].signIn(DEMO[who])).status).toBe(303);
	}
	programId = Number(/\/programs\/(\d+)/.exec((await clients.engineer.get('/')).headers.get('location')!)![1]);
	sweepId = (await queryDb<{ id: number }>(app.dataDir, "SELECT id FROM sweeps WHERE name LIKE 'Year-of-use grid%'"))[0].id;
	const up = await multipart(clients.engineer, 'uploadClimate', { name: 'Constant minus ten', csv: climateCsv_C(new Array(8760).fill(AMBIENT_C)), fileName: 'constant.csv' });
	expect(up.status).toBe(303);
	const climateId = (await queryDb<{ id: number }>(app.dataDir, "SELECT id FROM climates WHERE name = 'Constant minus ten'"))[0].id;
	const pattern = {
		format: 'paretherm-charging-pattern/1',
		name: 'One kind of charge',
		data: { eventsPerWeek: EVENTS_PER_WEEK, monthWeights: new Array(12).fill(1), hourWeights: new Array(24).fill(1), arrivalSocs: [{ soc: ARRIVAL_SOC, weight: 1 }], targetSoc: 0.8, scenarioSlug: 'cold-morning-depot', sampling: 'even' }
	};
	expect((await multipart(clients.engineer, 'savePattern', { name: '', json: JSON.stringify(pattern) })).status).toBe(303);
	const patternId = (await queryDb<{ id: number }>(app.dataDir, "SELECT id FROM charging_patterns WHERE name = 'One kind of charge'"))[0].id;
	evaluationId = await evaluate('Exact at a node', climateId, patternId);
	otherEvaluationId = await evaluate('Exact, then cancelled', climateId, patternId);
	// The evaluations' digests are delivered in the background; wait for them so database checksums do not race the outbox.
	await waitFor('the year digests delivered', async () => {
		const pending = await queryDb<{ n: number }>(app.dataDir, "SELECT COUNT(*) AS n FROM mail_outbox WHERE status = 'pending'");
		return pending[0].n === 0;
	}, 60_000);
}, 300_000);
afterAll(async () => {
	gate?.open();
	await app?.stop();
});

describe('exact year-of-use evaluation over HTTP', () => {
	it('should refuse a viewer, an unknown evaluation and a form without its mode, and change nothing', async () => {
		const before = await databaseChecksum(app.dataDir);
		const viewer = await clients.viewer.form(`${evalPath(evaluationId)}?/exact`, { mode: 'exact' });
		expect(viewer.status).toBe(403);
		const unknown = await clients.engineer.form(`${evalPath(999_999)}?/exact`, { mode: 'exact' });
		expect(unknown.status).toBe(404);
		expect(await unknown.text()).toContain('No evaluation with id 999999 in this program.');
		const noMode = await clients.engineer.form(`${evalPath(evaluationId)}?/exact`, {});
		expect(noMode.status).toBe(400);
		expect(await noMode.text()).toContain('the form sends mode “exact”');
		const cancelNothing = await clients.engineer.form(`${evalPath(evaluationId)}?/cancelExact`, { mode: 'exact' });
		expect(cancelNothing.status).toBe(409);
		expect(await cancelNothing.text()).toContain('no exact run in progress to cancel');
		expect(await databaseChecksum(app.dataDir)).toBe(before);
		// A viewer sees the section but no button.
		const html = await (await clients.viewer.get(evalPath(evaluationId))).text();
		expect(html).toContain('Exact evaluation: is the sweep grid fine enough?');
		expect(html).not.toContain('Run the exact evaluation');
	});

	it('should queue the run, show its progress and refuse a second start with the reason', async () => {
		const res = await clients.engineer.form(`${evalPath(evaluationId)}?/exact`, { mode: 'exact' });
		expect(res.status).toBe(303);
		expect(res.headers.get('location')).toBe(`${evalPath(evaluationId)}#exact`);
		const [run] = await runsOf(evaluationId);
		expect(run.status).toBe('queued');
		// Baseline, fixed rule and the table's strategy for the one kind of charge (fewer when the table keeps the default, or shares the fixed rule's strategy).
		expect(run.simulation_count).toBeGreaterThanOrEqual(2);
		expect(run.simulation_count).toBeLessThanOrEqual(3);
		expect(run.chunk_count).toBe(run.simulation_count); // one simulation per chunk for a run this small
		const html = await (await clients.engineer.get(evalPath(evaluationId))).text();
		expect(html).toContain(`0 of ${run.simulation_count} simulations (26 charges)`);
		expect(html).toContain('Cancel the exact evaluation');

		const before = await databaseChecksum(app.dataDir);
		const again = await clients.engineer.form(`${evalPath(evaluationId)}?/exact`, { mode: 'exact' });
		expect(again.status).toBe(409);
		expect(await again.text()).toContain(`An exact run of this evaluation is already queued (run ${run.id}`);
		expect(await databaseChecksum(app.dataDir)).toBe(before);
	});

	it('should cancel a run on request and let it be started again', async () => {
		expect((await clients.engineer.form(`${evalPath(otherEvaluationId)}?/exact`, { mode: 'exact' })).status).toBe(303);
		expect((await clients.engineer.form(`${evalPath(otherEvaluationId)}?/cancelExact`, { mode: 'exact' })).status).toBe(303);
		const [cancelled] = await runsOf(otherEvaluationId);
		expect(cancelled.status).toBe('cancelled');
		const html = await (await clients.engineer.get(evalPath(otherEvaluationId))).text();
		expect(html).toContain('The last exact evaluation was cancelled.');
		expect(html).toContain('Run the exact evaluation');
	});

	it('should store chunks as they come and report progress mid-way', async () => {
		const [run] = await runsOf(evaluationId);
		gate.allow(1);
		const mid = await waitFor('the first chunk stored', async () => {
			const [r] = await runsOf(evaluationId);
			return r.simulations_done >= 1 ? r : null;
		});
		expect(run.chunk_count).toBeGreaterThanOrEqual(2);
		expect(mid.status).toBe('running');
		expect(mid.simulations_done).toBeLessThan(run.simulation_count); // the gate holds the rest
		const html = await (await clients.engineer.get(evalPath(evaluationId))).text();
		expect(html).toMatch(new RegExp(`Running · [0-9.]+ % · [1-9]\\d* of ${run.simulation_count} simulations`));
	});

	it('should finish with exact totals equal to the lookup totals at a sweep node', async () => {
		gate.open();
		const run = await waitFor('the exact run finished', async () => {
			const [r] = await runsOf(evaluationId);
			if (r.status === 'failed') throw new Error(`exact run failed: ${r.failure_reason}`);
			return r.status === 'done' ? r : null;
		});
		const exact = JSON.parse(run.result!);
		expect(exact.events).toBe(26);
		const [ev] = await queryDb<{ result: string }>(app.dataDir, 'SELECT result FROM year_evaluations WHERE id = ?', [evaluationId]);
		const lookup = JSON.parse(ev.result);
		const tol = (x: number) => 1e-9 * Math.max(1, Math.abs(x));
		for (const kind of ['fixed', 'table']) {
			const x = exact.policies.find((p: { kind: string }) => p.kind === kind);
			const l = lookup.policies.find((p: { kind: string }) => p.kind === kind);
			expect(x.withoutFigures).toBe(l.withoutFigures);
			expect(Math.abs(x.timeSaved_s - l.timeSaved_s)).toBeLessThanOrEqual(tol(l.timeSaved_s));
			expect(Math.abs(x.energy_Wh - l.energy_Wh)).toBeLessThanOrEqual(tol(l.energy_Wh));
			const err = exact.lookupError.find((e: { kind: string }) => e.kind === kind);
			expect(Math.abs(err.timeSaved_s.abs)).toBeLessThanOrEqual(tol(l.timeSaved_s));
			expect(Math.abs(err.energy_Wh.abs)).toBeLessThanOrEqual(tol(l.energy_Wh));
		}
		// And both equal 26 × the sweep's stored figures of the fixed rule's point in that scenario.
		const [point] = await queryDb<{ time_saved_s: number; energy_Wh: number }>(
			app.dataDir,
			`SELECT p.time_saved_s, p.energy_Wh FROM sweep_points p JOIN sweep_scenarios s ON s.sweep_id = p.sweep_id AND s.scenario_index = p.scenario_index
			 WHERE p.sweep_id = ? AND p.lead_time_s = 1800 AND abs(p.coolant_setpoint_K - 293.15) < 1e-6
			   AND abs(json_extract(s.axes, '$.ambient_K') - 263.15) < 1e-6 AND abs(json_extract(s.axes, '$.arrivalSoc') - 0.15) < 1e-9`,
			[sweepId]
		);
		expect(point.energy_Wh).toBeGreaterThan(0); // pre-heating from −10 °C costs energy: the check compares real figures, not zeros
		const fixed = exact.policies.find((p: { kind: string }) => p.kind === 'fixed');
		expect(Math.abs(fixed.timeSaved_s - 26 * point.time_saved_s)).toBeLessThanOrEqual(tol(26 * point.time_saved_s));
		expect(Math.abs(fixed.energy_Wh - 26 * point.energy_Wh)).toBeLessThanOrEqual(tol(26 * point.energy_Wh));
		expect(exact.gridFineEnough).toBe(true);

		const html = await (await clients.viewer.get(evalPath(evaluationId))).text();
		expect(html).toContain('The sweep grid is fine enough for this year');
		expect(html).toContain('data-testid="exact-table"');

		const csv = (await (await clients.viewer.get(`${evalPath(evaluationId)}/export?fleet=2`)).text()).trim().split('\r\n');
		expect(csv[0]).toBe(
			'policy,period,scope,vehicles,charge_events,events_without_figures,hours_saved_h,energy_kWh,energy_cost,time_value,kWh_per_hour_saved,events_worth_it_share,currency,' +
				'exact_hours_saved_h,exact_energy_kWh,lookup_error_hours_h,lookup_error_hours_share,lookup_error_energy_kWh,lookup_error_energy_share'
		);
		const header = csv[0].split(',');
		const row = csv.find((l) => l.startsWith('Fixed rule,year,fleet,2,'))!.split(',');
		const col = (name: string) => Number(row[header.indexOf(name)]);
		expect(col('exact_hours_saved_h')).toBeCloseTo((2 * 26 * point.time_saved_s) / 3600, 5);
		expect(col('exact_energy_kWh')).toBeCloseTo((2 * 26 * point.energy_Wh) / 1000, 5);
		expect(Math.abs(col('lookup_error_hours_h'))).toBeLessThanOrEqual(1e-6);
	});

	it('should refuse to start a finished run again, and leave the cancelled run cancelled', async () => {
		const before = await databaseChecksum(app.dataDir);
		const again = await clients.engineer.form(`${evalPath(evaluationId)}?/exact`, { mode: 'exact' });
		expect(again.status).toBe(409);
		expect(await again.text()).toContain('The exact run of this evaluation has already finished');
		expect(await databaseChecksum(app.dataDir)).toBe(before);
		const [cancelled] = await runsOf(otherEvaluationId);
		expect(cancelled.status).toBe('cancelled');
		expect(cancelled.result).toBeNull();
	});
});
