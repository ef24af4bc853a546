import { DataTypes, Model, type CreationOptional } from 'sequelize';
import { sequelize } from '../index';

export const STRATEGY_STATES = ['proposed', 'endorsed', 'declined', 'superseded', 'withdrawn'] as const;
export type StrategyState = (typeof STRATEGY_STATES)[number];

export class Strategy extends Model {
	declare id: CreationOptional<number>;
	declare program_id: number;
	declare sweep_id: number;
	declare point_id: number;
	declare scenario_key: string;
	declare title: string;
	declare rationale: string;
	declare state: StrategyState;
	declare figures: string;
	declare created_by: string;
	declare created_at: CreationOptional<Date>;
	declare updated_at: CreationOptional<Date>;
}

Strategy.init(
	{
		id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
		program_id: { type: DataTypes.INTEGER, allowNull: false },
		sweep_id: { type: DataTypes.INTEGER, allowNull: false },
		point_id: { type: DataTypes.INTEGER, allowNull: false },
		scenario_key: { type: DataTypes.TEXT, allowNull: false },
		title: { type: DataTypes.STRING, allowNull: false },
		rationale: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
		state: { type: DataTypes.STRING, allowNull: false },
		figures: { type: DataTypes.TEXT, allowNull: false },
		created_by: { type: DataTypes.STRING, allowNull: false }
	},
	{ sequelize, tableName: 'strategies', underscored: true, timestamps: true, createdAt: 'created_at', updatedAt: 'updated_at' }
);

/** A comment or a state change in a strategy's thread. */
export class StrategyEvent extends Model {
	declare id: CreationOptional<number>;
	declare strategy_id: number;
	declare user_id: string | null;
	declare kind: 'comment' | 'state';
	declare from_state: StrategyState | null;
	declare to_state: StrategyState | null;
	declare body: string;
	declare created_at: CreationOptional<Date>;
}

StrategyEvent.init(
	{
		id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
		strategy_id: { type: DataTypes.INTEGER, allowNull: false },
		user_id: { type: DataTypes.STRING, allowNull: true },
		kind: { type: DataTypes.STRING, allowNull: false },
		from_state: { type: DataTypes.STRING, allowNull: true },
		to_state: { type: DataTypes.STRING, allowNull: true },
		body: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' }
	},
	{ sequelize, tableName: 'strategy_events', underscored: true, timestamps: true, createdAt: 'created_at', updatedAt: false }
);
