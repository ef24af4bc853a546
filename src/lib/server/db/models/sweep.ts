import { DataTypes, Model, type CreationOptional } from 'sequelize';
import { sequelize } from '../index';

export type SweepStatus = 'queued' | 'running' | 'finalizing' | 'done' | 'failed' | 'cancelled';

/** Statuses in which the sweep still has work in the queue (what start-up reconciliation checks). */
export const ACTIVE_SWEEP_STATUSES: SweepStatus[] = ['queued', 'running', 'finalizing'];

/**
 * A queued grid of pre-conditioning strategies × scenarios. `definition` is what the engineer
 * asked for; `inputs` snapshots the exact engine inputs (see migration 002).
 */
export class Sweep extends Model {
	declare id: CreationOptional<number>;
	declare program_id: number;
	declare name: string;
	declare status: CreationOptional<SweepStatus>;
	declare definition: string;
	declare inputs: string;
	declare rule_max_energy_Wh: number | null;
	declare queue_token: string;
	declare chunk_size: number;
	declare chunk_count: number;
	declare grid_points: number;
	declare simulation_count: number;
	declare simulations_done: CreationOptional<number>;
	declare chunks_done: CreationOptional<number>;
	declare failure_reason: string | null;
	declare created_by: string | null;
	declare started_at: Date | null;
	declare finished_at: Date | null;
	declare created_at: CreationOptional<Date>;
	declare updated_at: CreationOptional<Date>;
}

Sweep.init(
	{
		id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
		program_id: { type: DataTypes.INTEGER, allowNull: false },
		name: { type: DataTypes.STRING, allowNull: false },
		status: { type: DataTypes.STRING, allowNull: false, defaultValue: 'queued' },
		definition: { type: DataTypes.TEXT, allowNull: false },
		inputs: { type: DataTypes.TEXT, allowNull: false },
		// Explicit field: `underscored` would turn the unit suffix _Wh into __wh.
		rule_max_energy_Wh: { type: DataTypes.REAL, allowNull: true, field: 'rule_max_energy_Wh' },
		queue_token: { type: DataTypes.STRING, allowNull: false },
		chunk_size: { type: DataTypes.INTEGER, allowNull: false },
		chunk_count: { type: DataTypes.INTEGER, allowNull: false },
		grid_points: { type: DataTypes.INTEGER, allowNull: false },
		simulation_count: { type: DataTypes.INTEGER, allowNull: false },
		simulations_done: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
		chunks_done: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
		failure_reason: { type: DataTypes.TEXT, allowNull: true },
		created_by: { type: DataTypes.STRING, allowNull: true },
		started_at: { type: DataTypes.DATE, allowNull: true },
		finished_at: { type: DataTypes.DATE, allowNull: true }
	},
	{ sequelize, tableName: 'sweeps', underscored: true, timestamps: true, createdAt: 'created_at', updatedAt: 'updated_at' }
);
