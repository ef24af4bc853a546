/**
 * Sweep service without a queue: validation of sweep requests, idempotent storage of chunk
 * results (the UNIQUE (sweep_id, chunk_index) guard), finalisation (baseline, time saved, front,
 * knee, rule) and cancellation. Chunk results come from the real engine via computeChunk.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';

process.env.PARETHERM_DATA_DIR = fs.mkdtempSync(path.join(os.tmpdir(), 'paretherm-persist-'));

const { seedSweepProgram, smallSweepRequest, C } = await import('../helpers/sweeps');
const { createSweep, persistChunkResult, finalizeSweep, cancelSweep, chunkJobData, SweepInputError } = await import('../../src/lib/server/sweeps/service');
const { sweepFronts, sweepStatus, sweepCalibration, getProgramSweep } = await import('../../src/lib/server/sweeps/results');
const { computeChunk } = await import('../../src/lib/server/queue/compute');
const { Sweep, SweepChunk, SweepPoint, SweepScenario } = await import('../../src/lib/server/db/models/index');
const { MAX_GRID_POINTS } = await import('../../src/lib/engine/sweep-grid');
const { paretoFront } = await import('../../src/lib/engine/pareto');
type ChunkJobResult = import('../../src/lib/server/queue/jobs').ChunkJobResult;

let programId: number;

async function resultOf(sweep: InstanceType<typeof Sweep>, chunkIndex: number): Promise<ChunkJobResult> {
	const data = chunkJobData(sweep, chunkIndex);
	return { sweepId: sweep.id, chunkIndex, cancelled: false, points: computeChunk(data), worker: 'test', attempt: 1, elapsed_ms: 1 };
}

async function expectInputError(body: unknown, field: string | undefined, message: RegExp) {
	const err = await createSweep(programId, null, body).then(
		() => null,
		(e) => e
	);
	expect(err).toBeInstanceOf(SweepInputError);
	expect(err.field).toBe(field);
	expect(err.message).toMatch(message);
}

beforeAll(async () => {
	programId = await seedSweepProgram('Persistence');
});

afterAll(() => fs.rmSync(process.env.PARETHERM_DATA_DIR!, { recursive: true, force: true }));

describe('sweep requests', () => {
	it('should snapshot the resolved parameter sets and plan the chunks', async () => {
		const sweep = await createSweep(programId, null, smallSweepRequest({ chunkSize: 4 }));
		expect(sweep.status).toBe('queued');
		expect(sweep.grid_points).toBe(2 * 9);
		expect(sweep.simulation_count).toBe(2 * 10); // plus one baseline per scenario
		expect(sweep.chunk_count).toBe(5);
		const inputs = JSON.parse(sweep.inputs);
		expect(inputs.cells.nmc).toMatchObject({ slug: 'nmc', version: 1 });
		expect(inputs.baseScenario.data.target.soc).toBe(0.5);
		// the job is built from the snapshot: scenario axes put into the base scenario
		const job = chunkJobData(sweep, 0);
		expect(job.scenarios['0'].scenario.ambient_K).toBeCloseTo(C(-10));
		expect(job.tasks[0]).toEqual({ scenarioIndex: 0, strategyIndex: null });
	});

	describe('error handling', () => {
		it('should name an unknown cell and list the available ones', async () => {
			const body = smallSweepRequest();
			body.definition.cellIds = ['lfp-missing'];
			await expectInputError(body, 'definition.cellIds[0]', /No cell “lfp-missing” in this program\. Available: nmc\./);
		});

		it('should name a missing base scenario', async () => {
			const { scenarioId: _omit, ...body } = smallSweepRequest();
			await expectInputError(body, 'scenarioId', /base scenario/);
		});

		it('should state the grid size asked for and the limit', async () => {
			const body = smallSweepRequest();
			body.definition.leadTimes_s = Array.from({ length: 200 }, (_, i) => i * 30);
			body.definition.setpoints_K = Array.from({ length: 60 }, (_, i) => C(0 + i * 0.5));
			const size = 2 * 200 * 60;
			await expectInputError(body, 'definition', new RegExp(`${size} grid points .* the limit is ${MAX_GRID_POINTS}`));
		});

		it('should point at the set-point axis when a set-point exceeds the cell limit', async () => {
			// 58 °C passes the grid's own range (up to 60 °C) but not the demo cell's 55 °C limit.
			const body = smallSweepRequest({ setpoints_C: [25, 58] });
			await expectInputError(body, 'definition.setpoints_K', /above the cell's maximum temperature/);
		});

		it('should refuse unknown fields and out-of-range axis values with their path', async () => {
			await expectInputError({ ...smallSweepRequest(), colour: 'red' }, 'colour', /Unknown field/);
			const body = smallSweepRequest({ ambients_C: [-10, 80] });
			await expectInputError(body, 'definition.ambients_K[1]', /80 °C is out of range/);
		});

		it('should 404 a sweep of another program', async () => {
			const other = await seedSweepProgram('Other program');
			const sweep = await createSweep(programId, null, smallSweepRequest({ ambients_C: [0], leadTimes_s: [0], setpoints_C: [25] }));
			await expect(getProgramSweep(other, sweep.id)).rejects.toMatchObject({ status: 404 });
			await expect(getProgramSweep(programId, 'abc')).rejects.toMatchObject({ status: 404 });
		});
	});
});

describe('storing chunk results', () => {
	it('should store a chunk once and report a second delivery as a duplicate', async () => {
		const sweep = await createSweep(programId, null, smallSweepRequest({ chunkSize: 4 }));
		const r0 = await resultOf(sweep, 0);
		expect(await persistChunkResult(r0, sweep.queue_token)).toBe('stored');
		expect(await persistChunkResult(r0, sweep.queue_token)).toBe('duplicate');
		expect(await SweepChunk.count({ where: { sweep_id: sweep.id } })).toBe(1);
		expect(await SweepPoint.count({ where: { sweep_id: sweep.id } })).toBe(4);
		await sweep.reload();
		expect(sweep.simulations_done).toBe(4);
		expect(sweep.chunks_done).toBe(1);
		expect(sweep.status).toBe('running');
	});

	it('should store exactly once when the same result arrives concurrently', async () => {
		const sweep = await createSweep(programId, null, smallSweepRequest({ chunkSize: 4 }));
		const r1 = await resultOf(sweep, 1);
		const outcomes = await Promise.all(Array.from({ length: 5 }, () => persistChunkResult(r1, sweep.queue_token)));
		expect(outcomes.filter((o) => o === 'stored')).toHaveLength(1);
		expect(outcomes.filter((o) => o === 'duplicate')).toHaveLength(4);
		expect(await SweepPoint.count({ where: { sweep_id: sweep.id } })).toBe(4);
		await sweep.reload();
		expect(sweep.simulations_done).toBe(4);
	});

	it('should roll back the receipt when the points cannot be stored', async () => {
		const sweep = await createSweep(programId, null, smallSweepRequest({ chunkSize: 4 }));
		const r0 = await resultOf(sweep, 0);
		// Pre-store one of the chunk's points by hand: the unique point index must abort the chunk.
		await SweepPoint.create({
			sweep_id: sweep.id, scenario_index: 0, strategy_index: 2, chunk_index: 0, reached_target: true,
			feasible: true, summary: '{}', compute_ms: 0
		});
		expect(await persistChunkResult(r0, sweep.queue_token)).toBe('duplicate');
		expect(await SweepChunk.count({ where: { sweep_id: sweep.id } })).toBe(0);
		expect(await SweepPoint.count({ where: { sweep_id: sweep.id } })).toBe(1);
	});

	it('should refuse a result that does not match the chunk and store nothing', async () => {
		const sweep = await createSweep(programId, null, smallSweepRequest({ chunkSize: 4 }));
		const r0 = await resultOf(sweep, 0);
		const wrong = { ...r0, points: r0.points.slice(1) };
		await expect(persistChunkResult(wrong, sweep.queue_token)).rejects.toThrow(/does not match/);
		expect(await SweepChunk.count({ where: { sweep_id: sweep.id } })).toBe(0);
	});

	it('should discard results of another queue incarnation and of a cancelled sweep', async () => {
		const sweep = await createSweep(programId, null, smallSweepRequest({ chunkSize: 4 }));
		const r0 = await resultOf(sweep, 0);
		expect(await persistChunkResult(r0, 'deadbeef')).toBe('discarded');
		expect(await cancelSweep(sweep.id)).toBe(true);
		expect(await cancelSweep(sweep.id)).toBe(false);
		expect(await persistChunkResult(r0, sweep.queue_token)).toBe('discarded');
		expect(await SweepPoint.count({ where: { sweep_id: sweep.id } })).toBe(0);
	});
});

describe('finalising a sweep', () => {
	let sweep: InstanceType<typeof Sweep>;
	beforeAll(async () => {
		sweep = await createSweep(programId, null, smallSweepRequest({ chunkSize: 3, fastestWithinEnergy_Wh: 1500 }));
		for (let i = sweep.chunk_count - 1; i >= 0; i--) {
			// Out of order, and the last chunk before the others: finalisation waits for all.
			expect(await persistChunkResult(await resultOf(sweep, i), sweep.queue_token)).toBe('stored');
			if (i > 0) expect(await finalizeSweep(sweep.id)).toBe('not-ready');
		}
		expect(await finalizeSweep(sweep.id)).toBe('finalized');
		await sweep.reload();
	});

	it('should keep every simulation exactly once', async () => {
		const points = await SweepPoint.findAll({ where: { sweep_id: sweep.id } });
		expect(points).toHaveLength(sweep.simulation_count);
		const keys = new Set(points.map((p) => `${p.scenario_index}/${p.strategy_index}`));
		expect(keys.size).toBe(sweep.simulation_count);
		expect(sweep.status).toBe('finalizing'); // time series of front points are still to come
		expect(sweepStatus(sweep).progress.percent).toBe(100);
	});

	it('should rate every point against its scenario baseline', async () => {
		const points = await SweepPoint.findAll({ where: { sweep_id: sweep.id } });
		for (const p of points.filter((q) => q.strategy_index !== null)) {
			const base = points.find((q) => q.scenario_index === p.scenario_index && q.strategy_index === null)!;
			const s = JSON.parse(p.summary);
			const b = JSON.parse(base.summary);
			expect(p.time_saved_s).toBeCloseTo(b.timeToTarget_s - s.timeToTarget_s, 6);
			const pre = s.heaterEnergyDrive_Wh + s.chillerEnergyDrive_Wh - (b.heaterEnergyDrive_Wh + b.chillerEnergyDrive_Wh);
			expect(p.energy_pre_arrival_Wh).toBeCloseTo(pre, 6);
			expect(p.energy_Wh).toBeCloseTo(p.energy_pre_arrival_Wh! + p.energy_during_charge_Wh!, 6);
		}
	});

	it('should mark exactly the feasible points that neither the baseline nor another strategy dominates as the front', async () => {
		const { scenarios } = await sweepFronts(sweep);
		expect(scenarios).toHaveLength(2);
		for (const sc of scenarios) {
			const all = await SweepPoint.findAll({ where: { sweep_id: sweep.id, scenario_index: sc.scenarioIndex } });
			const strategies = all.filter((p) => p.strategy_index !== null && p.feasible);
			// The baseline (0 Wh, 0 s) is a candidate, and a strategy slower than it is never on a
			// front (definition of dominance, common practice, no source).
			const origin = { id: -1, energy_Wh: 0, time_saved_s: 0 };
			const candidates = [origin, ...strategies.filter((p) => p.time_saved_s! >= 0).map((p) => ({ id: p.id, energy_Wh: p.energy_Wh!, time_saved_s: p.time_saved_s! }))];
			const expected = paretoFront(candidates, (p) => p.energy_Wh, (p) => p.time_saved_s)
				.filter((p) => p !== origin)
				.map((p) => p.id);
			expect(sc.front.every((p) => p.timeSaved_s! >= 0)).toBe(true);
			expect(sc.front.map((p) => p.id)).toEqual(expected);
			expect(all.filter((p) => p.on_front).map((p) => p.id).sort()).toEqual([...expected].sort());
			if (sc.knee) expect(expected).toContain(sc.knee.id);
			if (sc.rule) {
				expect(sc.rule.energy_Wh!).toBeLessThanOrEqual(1500);
				const better = strategies.filter((p) => p.energy_Wh! <= 1500 && p.time_saved_s! > sc.rule!.timeSaved_s!);
				expect(better).toHaveLength(0);
			}
		}
	});

	it('should re-pick the rule for another budget and export the calibration table', async () => {
		const { scenarios } = await sweepFronts(sweep, { fastestWithinEnergy_Wh: 0 });
		for (const sc of scenarios) if (sc.rule) expect(sc.rule.energy_Wh!).toBeLessThanOrEqual(0);
		const csv = await sweepCalibration(sweep, { kind: 'knee' }, 'csv');
		const all = csv.trimEnd().split('\r\n');
		expect(all[0]).toBe('# format: paretherm-calibration/2');
		const lines = all.filter((l) => !l.startsWith('#'));
		expect(lines[0]).toMatch(/^ambient_C,state_of_health,arrival_soc,cell,pack,lead_time_min,setpoint_C/);
		expect(lines).toHaveLength(3);
		expect(lines[1]).toMatch(/^-10,1,0\.2,nmc,pack,/);
		const json = JSON.parse(await sweepCalibration(sweep, { kind: 'fastest-within', maxEnergy_Wh: 1500 }, 'json'));
		expect(json.rows).toHaveLength(2);
	});

	it('should be idempotent', async () => {
		const before = await SweepScenario.findAll({ where: { sweep_id: sweep.id }, order: [['scenario_index', 'ASC']] });
		// status is finalizing now: a second finalisation is skipped and changes nothing
		expect(await finalizeSweep(sweep.id)).toBe('skipped');
		const after = await SweepScenario.findAll({ where: { sweep_id: sweep.id }, order: [['scenario_index', 'ASC']] });
		expect(after.map((s) => s.front_point_ids)).toEqual(before.map((s) => s.front_point_ids));
	});
});
