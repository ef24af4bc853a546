/**
 * Sweeps and their results.
 *
 * - `sweeps`: the definition as submitted, and `inputs`, a snapshot of every cell, pack and
 *   scenario object (with parameter-set id and version) the engine was given, so a result always
 *   knows exactly what produced it even after the parameter sets gain new versions.
 * - `sweep_chunks`: one row per stored chunk result. UNIQUE (sweep_id, chunk_index) is what makes
 *   storing a chunk idempotent: a second delivery of the same result fails the insert and the
 *   whole transaction (points included) is rolled back.
 * - `sweep_points`: one row per simulation (grid point or baseline), also unique per
 *   (sweep, scenario, strategy) with the baseline's NULL strategy mapped to −1 in the index.
 * - `sweep_scenarios`: per scenario the baseline, the Pareto front and the recommendations.
 * - `sweep_series`: gzip-compressed JSON time series, kept for front points only.
 *
 * Column names carry units exactly as the engine names them (e.g. `coolant_setpoint_K`).
 */
import { DataTypes } from 'sequelize';
import type { Migration } from './types';

const now = { type: DataTypes.DATE, allowNull: false };

const migration: Migration = {
	id: '002-sweeps',
	async up(qi, transaction) {
		await qi.createTable(
			'sweeps',
			{
				id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
				program_id: {
					type: DataTypes.INTEGER,
					allowNull: false,
					references: { model: 'programs', key: 'id' },
					onDelete: 'CASCADE'
				},
				name: { type: DataTypes.STRING, allowNull: false },
				status: { type: DataTypes.STRING, allowNull: false, defaultValue: 'queued' },
				definition: { type: DataTypes.TEXT, allowNull: false },
				inputs: { type: DataTypes.TEXT, allowNull: false },
				rule_max_energy_Wh: { type: DataTypes.REAL, allowNull: true },
				queue_token: { type: DataTypes.STRING, allowNull: false },
				chunk_size: { type: DataTypes.INTEGER, allowNull: false },
				chunk_count: { type: DataTypes.INTEGER, allowNull: false },
				grid_points: { type: DataTypes.INTEGER, allowNull: false },
				simulation_count: { type: DataTypes.INTEGER, allowNull: false },
				simulations_done: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
				chunks_done: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
				failure_reason: { type: DataTypes.TEXT, allowNull: true },
				created_by: {
					type: DataTypes.STRING,
					allowNull: true,
					references: { model: 'users', key: 'id' },
					onDelete: 'SET NULL'
				},
				started_at: { type: DataTypes.DATE, allowNull: true },
				finished_at: { type: DataTypes.DATE, allowNull: true },
				created_at: now,
				updated_at: now
			},
			{ transaction }
		);
		await qi.addIndex('sweeps', ['program_id', 'created_at'], { transaction });
		await qi.addIndex('sweeps', ['status'], { transaction });

		await qi.createTable(
			'sweep_chunks',
			{
				id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
				sweep_id: {
					type: DataTypes.INTEGER,
					allowNull: false,
					references: { model: 'sweeps', key: 'id' },
					onDelete: 'CASCADE'
				},
				chunk_index: { type: DataTypes.INTEGER, allowNull: false },
				simulations: { type: DataTypes.INTEGER, allowNull: false },
				worker: { type: DataTypes.STRING, allowNull: false },
				attempt: { type: DataTypes.INTEGER, allowNull: false },
				elapsed_ms: { type: DataTypes.INTEGER, allowNull: false },
				created_at: now
			},
			{ transaction }
		);
		await qi.addIndex('sweep_chunks', ['sweep_id', 'chunk_index'], {
			unique: true,
			name: 'sweep_chunks_once',
			transaction
		});

		await qi.createTable(
			'sweep_points',
			{
				id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
				sweep_id: {
					type: DataTypes.INTEGER,
					allowNull: false,
					references: { model: 'sweeps', key: 'id' },
					onDelete: 'CASCADE'
				},
				scenario_index: { type: DataTypes.INTEGER, allowNull: false },
				strategy_index: { type: DataTypes.INTEGER, allowNull: true },
				chunk_index: { type: DataTypes.INTEGER, allowNull: false },
				lead_time_s: { type: DataTypes.REAL, allowNull: true },
				coolant_setpoint_K: { type: DataTypes.REAL, allowNull: true },
				heater_power_cap_W: { type: DataTypes.REAL, allowNull: true },
				reached_target: { type: DataTypes.BOOLEAN, allowNull: false },
				feasible: { type: DataTypes.BOOLEAN, allowNull: false },
				time_to_target_s: { type: DataTypes.REAL, allowNull: true },
				thermal_energy_Wh: { type: DataTypes.REAL, allowNull: true },
				// Filled when the sweep is finalised (needs the scenario's baseline).
				time_saved_s: { type: DataTypes.REAL, allowNull: true },
				energy_Wh: { type: DataTypes.REAL, allowNull: true },
				energy_pre_arrival_Wh: { type: DataTypes.REAL, allowNull: true },
				energy_during_charge_Wh: { type: DataTypes.REAL, allowNull: true },
				on_front: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
				summary: { type: DataTypes.TEXT, allowNull: false },
				compute_ms: { type: DataTypes.REAL, allowNull: false },
				created_at: now
			},
			{ transaction }
		);
		await qi.sequelize.query(
			'CREATE UNIQUE INDEX sweep_points_once ON sweep_points (sweep_id, scenario_index, IFNULL(strategy_index, -1))',
			{ transaction }
		);

		await qi.createTable(
			'sweep_scenarios',
			{
				id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
				sweep_id: {
					type: DataTypes.INTEGER,
					allowNull: false,
					references: { model: 'sweeps', key: 'id' },
					onDelete: 'CASCADE'
				},
				scenario_index: { type: DataTypes.INTEGER, allowNull: false },
				scenario_key: { type: DataTypes.TEXT, allowNull: false },
				axes: { type: DataTypes.TEXT, allowNull: false },
				baseline_point_id: { type: DataTypes.INTEGER, allowNull: true },
				baseline_time_to_target_s: { type: DataTypes.REAL, allowNull: true },
				baseline_reached_target: { type: DataTypes.BOOLEAN, allowNull: false },
				front_point_ids: { type: DataTypes.TEXT, allowNull: false },
				knee_point_id: { type: DataTypes.INTEGER, allowNull: true },
				knee_method: { type: DataTypes.STRING, allowNull: true },
				rule_point_id: { type: DataTypes.INTEGER, allowNull: true },
				no_strategy_beats_baseline: { type: DataTypes.BOOLEAN, allowNull: false },
				// 'pending' until the front and baseline time series are stored; 'stored', 'failed'
				// (they are then recomputed when opened) or 'none' (nothing to record).
				series_status: { type: DataTypes.STRING, allowNull: false, defaultValue: 'pending' },
				note: { type: DataTypes.TEXT, allowNull: true },
				created_at: now
			},
			{ transaction }
		);
		await qi.addIndex('sweep_scenarios', ['sweep_id', 'scenario_index'], {
			unique: true,
			name: 'sweep_scenarios_once',
			transaction
		});

		await qi.createTable(
			'sweep_series',
			{
				id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
				sweep_id: {
					type: DataTypes.INTEGER,
					allowNull: false,
					references: { model: 'sweeps', key: 'id' },
					onDelete: 'CASCADE'
				},
				point_id: {
					type: DataTypes.INTEGER,
					allowNull: false,
					unique: true,
					references: { model: 'sweep_points', key: 'id' },
					onDelete: 'CASCADE'
				},
				encoding: { type: DataTypes.STRING, allowNull: false },
				series_interval_s: { type: DataTypes.REAL, allowNull: false },
				data: { type: DataTypes.BLOB, allowNull: false },
				created_at: now
			},
			{ transaction }
		);
		await qi.addIndex('sweep_series', ['sweep_id'], { transaction });
	}
};

export default migration;
