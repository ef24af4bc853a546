import { DataTypes, Model, type CreationOptional } from 'sequelize';
import { sequelize } from '../index';

export const STRATEGY_MODES = ['immediately', 'daily', 'off'] as const;
export type StrategyMode = (typeof STRATEGY_MODES)[number];

/** A user's explicit choice; no row means the default (see mail/strategy-notifications.ts). */
export class NotificationSetting extends Model {
	declare user_id: string;
	declare strategy_mode: StrategyMode;
	declare created_at: CreationOptional<Date>;
	declare updated_at: CreationOptional<Date>;
}

NotificationSetting.init(
	{
		user_id: { type: DataTypes.STRING, primaryKey: true },
		strategy_mode: { type: DataTypes.STRING, allowNull: false }
	},
	{ sequelize, tableName: 'notification_settings', underscored: true, timestamps: true, createdAt: 'created_at', updatedAt: 'updated_at' }
);

/** A strategy event waiting for the recipient's daily summary (summary_key set once mailed). */
export class NotificationItem extends Model {
	declare id: CreationOptional<number>;
	declare user_id: string;
	declare program_id: number;
	declare strategy_id: number;
	declare event_id: number;
	declare line: string;
	declare summary_key: string | null;
	declare created_at: CreationOptional<Date>;
}

NotificationItem.init(
	{
		id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
		user_id: { type: DataTypes.STRING, allowNull: false },
		program_id: { type: DataTypes.INTEGER, allowNull: false },
		strategy_id: { type: DataTypes.INTEGER, allowNull: false },
		event_id: { type: DataTypes.INTEGER, allowNull: false },
		line: { type: DataTypes.TEXT, allowNull: false },
		summary_key: { type: DataTypes.STRING, allowNull: true }
	},
	{ sequelize, tableName: 'notification_items', underscored: true, timestamps: true, createdAt: 'created_at', updatedAt: false }
);
