/**
 * Migration 010 on a database written before the baseline joined the candidate set: stored front
 * points slower than the baseline (or dominated by it) lose their front mark, the others keep it,
 * and nothing else changes.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';

const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'paretherm-fronts-migration-'));
process.env.PARETHERM_DATA_DIR = dir;

const { sequelize, ensureDb } = await import('../../src/lib/server/db/index');
const { runMigrations } = await import('../../src/lib/server/db/migrate');

const q = async <T = Record<string, unknown>>(sql: string, replacements: unknown[] = []) => (await sequelize.query(sql, { replacements }))[0] as T[];

beforeAll(async () => {
	await ensureDb();
});
afterAll(async () => {
	await sequelize.close();
	fs.rmSync(dir, { recursive: true, force: true });
});

describe('migration 010 (fronts measured against the baseline)', () => {
	it('should drop stored front marks of points the baseline dominates and keep the rest', async () => {
		const now = new Date().toISOString();
		await q("INSERT INTO programs (id, name, description, created_at, updated_at) VALUES (1, 'Invented program', '', ?, ?)", [now, now]);
		await q(
			`INSERT INTO sweeps (id, program_id, name, status, definition, inputs, queue_token, chunk_size, chunk_count, grid_points, simulation_count, created_at, updated_at)
			 VALUES (1, 1, 'old sweep', 'done', '{}', '{}', 'abcd', 1, 1, 5, 6, ?, ?)`,
			[now, now]
		);
		// (energy Wh, time saved s): as stored by the old finalisation, where the strategies alone
		// made the front. Hand checked against the dominance definition with the baseline at (0, 0):
		// (180, −654) and (240, −1128) are slower; (0, 0) ties the baseline (kept); (300, 0) is
		// dominated by it; (900, 300) saves time (kept).
		const rows: [number, number, number, boolean][] = [
			[11, 180, -654, true],
			[12, 240, -1128, true],
			[13, 0, 0, true],
			[14, 300, 0, true],
			[15, 900, 300, true]
		];
		await q(`INSERT INTO sweep_points (id, sweep_id, scenario_index, strategy_index, chunk_index, reached_target, feasible, on_front, summary, compute_ms, created_at) VALUES (10, 1, 0, NULL, 0, 1, 1, 0, '{}', 1, ?)`, [now]);
		for (const [id, e, t, front] of rows)
			await q(
				`INSERT INTO sweep_points (id, sweep_id, scenario_index, strategy_index, chunk_index, reached_target, feasible, time_saved_s, energy_Wh, on_front, summary, compute_ms, created_at)
				 VALUES (?, 1, 0, ?, 0, 1, 1, ?, ?, ?, '{}', 1, ?)`,
				[id, id - 11, t, e, front ? 1 : 0, now]
			);
		await q(
			`INSERT INTO sweep_scenarios (sweep_id, scenario_index, scenario_key, axes, baseline_point_id, baseline_time_to_target_s, baseline_reached_target, front_point_ids, knee_point_id, knee_method, no_strategy_beats_baseline, created_at)
			 VALUES (1, 0, 'k', '{}', 10, 3600, 1, '[11,12,13,14,15]', 15, 'max-time-saved-per-kWh', 0, ?)`,
			[now]
		);
		await q("DELETE FROM schema_migrations WHERE id = '010-fronts-beat-baseline'");

		expect(await runMigrations(sequelize)).toEqual(['010-fronts-beat-baseline']);

		const [sc] = await q<{ front_point_ids: string; knee_point_id: number }>('SELECT front_point_ids, knee_point_id FROM sweep_scenarios');
		expect(JSON.parse(sc.front_point_ids)).toEqual([13, 15]);
		expect(sc.knee_point_id).toBe(15);
		const marks = await q<{ id: number; on_front: number }>('SELECT id, on_front FROM sweep_points ORDER BY id');
		expect(marks.map((m) => [m.id, Boolean(m.on_front)])).toEqual([
			[10, false],
			[11, false],
			[12, false],
			[13, true],
			[14, false],
			[15, true]
		]);
	});
});
