import { DataTypes, Model } from 'sequelize';
import { sequelize } from '../index';

export class Session extends Model {
	declare id: string;
	declare user_id: string;
	/** Milliseconds since the epoch. */
	declare expires_at: number;
}

Session.init(
	{
		id: { type: DataTypes.STRING, primaryKey: true },
		user_id: { type: DataTypes.STRING, allowNull: false },
		expires_at: { type: DataTypes.BIGINT, allowNull: false }
	},
	{ sequelize, tableName: 'sessions', underscored: true, timestamps: false }
);
