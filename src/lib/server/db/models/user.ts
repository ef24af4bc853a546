import { DataTypes, Model, type CreationOptional } from 'sequelize';
import { sequelize } from '../index';

export class User extends Model {
	declare id: string;
	declare email: string;
	declare name: string;
	declare password_hash: string | null;
	declare is_admin: boolean;
	declare active: boolean;
	declare created_at: CreationOptional<Date>;
	declare updated_at: CreationOptional<Date>;
}

User.init(
	{
		id: { type: DataTypes.STRING, primaryKey: true },
		email: { type: DataTypes.STRING, allowNull: false, unique: true },
		name: { type: DataTypes.STRING, allowNull: false },
		password_hash: { type: DataTypes.STRING, allowNull: true },
		is_admin: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
		active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true }
	},
	{ sequelize, tableName: 'users', underscored: true, timestamps: true, createdAt: 'created_at', updatedAt: 'updated_at' }
);
