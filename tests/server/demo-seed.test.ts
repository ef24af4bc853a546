/**
 * The demo seed: an invented program with a person per role, the demo inputs and one finished
 * sweep with fronts, so a newcomer sees results on first sign-in. Running it twice changes nothing.
 */
import { describe, expect, it } from 'vitest';
import { seed, tempDataDir } from '../helpers/app';
import { databaseChecksum, queryDb } from '../helpers/db-checksum';

describe('demo seed', () => {
	const dataDir = tempDataDir('paretherm-seed-');

	it('should load people for every role, the inputs and a finished sweep with fronts', async () => {
		await seed(dataDir, 'scripts/seed.ts', { PARETHERM_SEED_SWEEP: '1' });
		const roles = await queryDb<{ role: string }>(dataDir, 'SELECT role FROM memberships ORDER BY role');
		expect(roles.map((r) => r.role)).toEqual(['architect', 'engineer', 'manager', 'viewer']);
		const admins = await queryDb(dataDir, 'SELECT id FROM users WHERE is_admin = 1');
		expect(admins).toHaveLength(1);
		const kinds = await queryDb<{ kind: string; n: number }>(dataDir, 'SELECT kind, COUNT(*) AS n FROM parameter_sets GROUP BY kind ORDER BY kind');
		expect(kinds).toEqual([
			{ kind: 'cell', n: 2 },
			{ kind: 'pack', n: 1 },
			{ kind: 'scenario', n: 3 }
		]);
		// The depot pre-conditioning sweep, then the year-of-use grid sweep.
		const sweeps = await queryDb<{ id: number; status: string; simulation_count: number; simulations_done: number }>(dataDir, 'SELECT * FROM sweeps ORDER BY id');
		expect(sweeps).toHaveLength(2);
		expect(sweeps.map((s) => s.status)).toEqual(['done', 'done']);
		expect(sweeps[0].status).toBe('done');
		expect(sweeps[0].simulations_done).toBe(sweeps[0].simulation_count);
		const points = await queryDb<{ n: number }>(dataDir, 'SELECT COUNT(*) AS n FROM sweep_points WHERE sweep_id = ?', [sweeps[0].id]);
		expect(points[0].n).toBe(sweeps[0].simulation_count);
		const scenarios = await queryDb<{ front_point_ids: string; knee_point_id: number | null }>(dataDir, 'SELECT front_point_ids, knee_point_id FROM sweep_scenarios WHERE sweep_id = ?', [sweeps[0].id]);
		expect(scenarios.length).toBeGreaterThan(1);
		for (const s of scenarios) expect(JSON.parse(s.front_point_ids).length).toBeGreaterThan(0);
		expect(scenarios.some((s) => s.knee_point_id !== null)).toBe(true);
	}, 300_000);

	it('should change nothing when run again', async () => {
		const before = await databaseChecksum(dataDir);
		await seed(dataDir, 'scripts/seed.ts', { PARETHERM_SEED_SWEEP: '1' });
		expect(await databaseChecksum(dataDir)).toBe(before);
	}, 300_000);
});
