import { DataTypes, Model, type CreationOptional } from 'sequelize';
import { sequelize } from '../index';

/** Per-scenario result of a finished sweep: baseline, Pareto front and recommended points. */
export class SweepScenario extends Model {
	declare id: CreationOptional<number>;
	declare sweep_id: number;
	declare scenario_index: number;
	declare scenario_key: string;
	/** JSON ScenarioKey: ambient_K, stateOfHealth, arrivalSoc, cellId, packId. */
	declare axes: string;
	declare baseline_point_id: number | null;
	declare baseline_time_to_target_s: number | null;
	declare baseline_reached_target: boolean;
	/** JSON array of point ids, energy ascending. */
	declare front_point_ids: string;
	declare knee_point_id: number | null;
	declare knee_method: string | null;
	declare rule_point_id: number | null;
	declare no_strategy_beats_baseline: boolean;
	declare series_status: 'pending' | 'stored' | 'failed' | 'none';
	declare note: string | null;
	declare created_at: CreationOptional<Date>;
}

SweepScenario.init(
	{
		id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
		sweep_id: { type: DataTypes.INTEGER, allowNull: false },
		scenario_index: { type: DataTypes.INTEGER, allowNull: false },
		scenario_key: { type: DataTypes.TEXT, allowNull: false },
		axes: { type: DataTypes.TEXT, allowNull: false },
		baseline_point_id: { type: DataTypes.INTEGER, allowNull: true },
		baseline_time_to_target_s: { type: DataTypes.REAL, allowNull: true, field: 'baseline_time_to_target_s' },
		baseline_reached_target: { type: DataTypes.BOOLEAN, allowNull: false },
		front_point_ids: { type: DataTypes.TEXT, allowNull: false },
		knee_point_id: { type: DataTypes.INTEGER, allowNull: true },
		knee_method: { type: DataTypes.STRING, allowNull: true },
		rule_point_id: { type: DataTypes.INTEGER, allowNull: true },
		no_strategy_beats_baseline: { type: DataTypes.BOOLEAN, allowNull: false },
		series_status: { type: DataTypes.STRING, allowNull: false, defaultValue: 'pending' },
		note: { type: DataTypes.TEXT, allowNull: true }
	},
	{ sequelize, tableName: 'sweep_scenarios', underscored: true, timestamps: true, createdAt: 'created_at', updatedAt: false }
);
