/** Year of use, exact mode: background runs that simulate every sampled charge, and their stored chunks. */
import { DataTypes } from 'sequelize';
import type { Migration } from './types';

const now = { type: DataTypes.DATE, allowNull: false };

const migration: Migration = {
	id: '031-year-exact',
	async up(qi, transaction) {
		await qi.createTable(
			'year_exact_runs',
			{
				id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
				evaluation_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'year_evaluations', key: 'id' }, onDelete: 'CASCADE' },
				/** queued, running, done, failed, cancelled */
				status: { type: DataTypes.STRING, allowNull: false },
				/** Random per run: job ids stay unique when a database is recreated but Redis keeps old jobs. */
				queue_token: { type: DataTypes.STRING, allowNull: false },
				/** The simulations to run (src/lib/year/exact.ts ExactPlan) as JSON. */
				plan: { type: DataTypes.TEXT, allowNull: false },
				chunk_size: { type: DataTypes.INTEGER, allowNull: false },
				chunk_count: { type: DataTypes.INTEGER, allowNull: false },
				chunks_done: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
				simulation_count: { type: DataTypes.INTEGER, allowNull: false },
				simulations_done: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
				/** The exact year and the lookup's error (ExactYear) as JSON, once done. */
				result: { type: DataTypes.TEXT, allowNull: true },
				failure_reason: { type: DataTypes.TEXT, allowNull: true },
				created_by: { type: DataTypes.STRING, allowNull: true, references: { model: 'users', key: 'id' } },
				created_at: now,
				started_at: { type: DataTypes.DATE, allowNull: true },
				finished_at: { type: DataTypes.DATE, allowNull: true }
			},
			{ transaction }
		);
		await qi.addIndex('year_exact_runs', ['evaluation_id'], { transaction });
		await qi.createTable(
			'year_exact_chunks',
			{
				id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
				run_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'year_exact_runs', key: 'id' }, onDelete: 'CASCADE' },
				chunk_index: { type: DataTypes.INTEGER, allowNull: false },
				/** Per simulation of the chunk, in task order: { reached, time_s, energy_Wh } as JSON. */
				figures: { type: DataTypes.TEXT, allowNull: false },
				worker: { type: DataTypes.STRING, allowNull: false },
				attempt: { type: DataTypes.INTEGER, allowNull: false },
				elapsed_ms: { type: DataTypes.INTEGER, allowNull: false },
				created_at: now
			},
			{ transaction }
		);
		// The chunk receipt: a chunk's result is stored at most once.
		await qi.addIndex('year_exact_chunks', ['run_id', 'chunk_index'], { unique: true, transaction });
	}
};

export default migration;
