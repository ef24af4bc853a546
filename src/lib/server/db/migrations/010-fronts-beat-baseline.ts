/**
 * Stored fronts measured against the baseline. Fronts stored before this release were built from
 * the strategies alone, so a strategy slower than the baseline, or one the baseline dominates, could
 * be marked as a front point. The baseline (0 Wh, 0 s) belongs to the candidate set: among points
 * that were non-dominated by the other strategies, the only new dominator is the baseline, so a
 * stored front point stays on the front iff it saves time (time_saved_s > 0) or saves no time for
 * no more than the baseline's energy (time_saved_s = 0 and energy_Wh ≤ 0). Derived columns only
 * (`on_front`, `front_point_ids`); the knee and the rule pick never chose such a point, so they
 * stand. Results themselves are not touched.
 */
import type { Migration } from './types';

const migration: Migration = {
	id: '010-fronts-beat-baseline',
	async up(qi, transaction) {
		const q = (sql: string, replacements: unknown[] = []) => qi.sequelize.query(sql, { replacements, transaction });
		const [scenarios] = (await q('SELECT id, front_point_ids FROM sweep_scenarios')) as [{ id: number; front_point_ids: string }[], unknown];
		for (const s of scenarios) {
			const ids = JSON.parse(s.front_point_ids || '[]') as number[];
			if (ids.length === 0) continue;
			const [rows] = (await q(`SELECT id, time_saved_s, energy_Wh FROM sweep_points WHERE id IN (${ids.map(() => '?').join(',')})`, ids)) as [
				{ id: number; time_saved_s: number | null; energy_Wh: number | null }[],
				unknown
			];
			const byId = new Map(rows.map((r) => [r.id, r]));
			const keep = ids.filter((id) => {
				const p = byId.get(id);
				if (!p || p.time_saved_s === null || p.energy_Wh === null) return false;
				return p.time_saved_s > 0 || (p.time_saved_s === 0 && p.energy_Wh <= 0);
			});
			if (keep.length === ids.length) continue;
			const dropped = ids.filter((id) => !keep.includes(id));
			await q(`UPDATE sweep_points SET on_front = 0 WHERE id IN (${dropped.map(() => '?').join(',')})`, dropped);
			await q('UPDATE sweep_scenarios SET front_point_ids = ? WHERE id = ?', [JSON.stringify(keep), s.id]);
		}
	}
};

export default migration;
