import { DataTypes, Model, type CreationOptional } from 'sequelize';
import { sequelize } from '../index';

/**
 * One simulation of a sweep: a strategy in a scenario, or the scenario's baseline
 * (strategy_index null). `summary` is the engine's SimulationSummary as JSON; the columns beside
 * it are copies for sorting and the front. Energies are "attributable to the strategy": the
 * strategy's heater + chiller electrical energy minus the baseline's in the same scenario.
 */
export class SweepPoint extends Model {
	declare id: CreationOptional<number>;
	declare sweep_id: number;
	declare scenario_index: number;
	declare strategy_index: number | null;
	declare chunk_index: number;
	declare lead_time_s: number | null;
	declare coolant_setpoint_K: number | null;
	declare heater_power_cap_W: number | null;
	declare reached_target: boolean;
	declare feasible: boolean;
	declare time_to_target_s: number | null;
	declare thermal_energy_Wh: number | null;
	declare time_saved_s: number | null;
	declare energy_Wh: number | null;
	declare energy_pre_arrival_Wh: number | null;
	declare energy_during_charge_Wh: number | null;
	declare on_front: CreationOptional<boolean>;
	declare summary: string;
	declare compute_ms: number;
	declare created_at: CreationOptional<Date>;
}

// `field` given explicitly where the name ends in a unit: `underscored` would turn _K into __k.
const unit = (name: string) => ({ type: DataTypes.REAL, allowNull: true, field: name });

SweepPoint.init(
	{
		id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
		sweep_id: { type: DataTypes.INTEGER, allowNull: false },
		scenario_index: { type: DataTypes.INTEGER, allowNull: false },
		strategy_index: { type: DataTypes.INTEGER, allowNull: true },
		chunk_index: { type: DataTypes.INTEGER, allowNull: false },
		lead_time_s: unit('lead_time_s'),
		coolant_setpoint_K: unit('coolant_setpoint_K'),
		heater_power_cap_W: unit('heater_power_cap_W'),
		reached_target: { type: DataTypes.BOOLEAN, allowNull: false },
		feasible: { type: DataTypes.BOOLEAN, allowNull: false },
		time_to_target_s: unit('time_to_target_s'),
		thermal_energy_Wh: unit('thermal_energy_Wh'),
		time_saved_s: unit('time_saved_s'),
		energy_Wh: unit('energy_Wh'),
		energy_pre_arrival_Wh: unit('energy_pre_arrival_Wh'),
		energy_during_charge_Wh: unit('energy_during_charge_Wh'),
		on_front: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
		summary: { type: DataTypes.TEXT, allowNull: false },
		compute_ms: { type: DataTypes.REAL, allowNull: false }
	},
	{ sequelize, tableName: 'sweep_points', underscored: true, timestamps: true, createdAt: 'created_at', updatedAt: false }
);
