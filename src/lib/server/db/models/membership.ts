import { DataTypes, Model, type CreationOptional } from 'sequelize';
import { sequelize } from '../index';
import type { ProgramRole } from '../../auth/roles';

export class Membership extends Model {
	declare id: CreationOptional<number>;
	declare program_id: number;
	declare user_id: string;
	declare role: ProgramRole;
	declare digest_subscribed: boolean;
	declare created_at: CreationOptional<Date>;
	declare updated_at: CreationOptional<Date>;
}

Membership.init(
	{
		id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
		program_id: { type: DataTypes.INTEGER, allowNull: false },
		user_id: { type: DataTypes.STRING, allowNull: false },
		role: { type: DataTypes.STRING, allowNull: false },
		digest_subscribed: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false }
	},
	{ sequelize, tableName: 'memberships', underscored: true, timestamps: true, createdAt: 'created_at', updatedAt: 'updated_at' }
);
