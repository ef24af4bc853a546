import { DataTypes, Model, type CreationOptional } from 'sequelize';
import { sequelize } from '../index';

export class Program extends Model {
	declare id: CreationOptional<number>;
	declare name: string;
	declare description: string;
	declare created_at: CreationOptional<Date>;
	declare updated_at: CreationOptional<Date>;
}

Program.init(
	{
		id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
		name: { type: DataTypes.STRING, allowNull: false, unique: true },
		description: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' }
	},
	{ sequelize, tableName: 'programs', underscored: true, timestamps: true, createdAt: 'created_at', updatedAt: 'updated_at' }
);
