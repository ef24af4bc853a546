import { DataTypes, Model, type CreationOptional } from 'sequelize';
import { sequelize } from '../index';

/** A model check: a measured log replayed through one cell parameter set version, with its statistics and series. */
export class ModelCheck extends Model {
	declare id: CreationOptional<number>;
	declare program_id: number;
	declare title: string;
	declare upload_id: number;
	declare cell_input_id: number;
	declare cell_slug: string;
	declare cell_version: number;
	declare settings: string;
	declare stats: string;
	declare encoding: string;
	declare series: Buffer;
	declare created_by: string;
	declare created_at: CreationOptional<Date>;
}

ModelCheck.init(
	{
		id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
		program_id: { type: DataTypes.INTEGER, allowNull: false },
		title: { type: DataTypes.STRING, allowNull: false },
		upload_id: { type: DataTypes.INTEGER, allowNull: false },
		cell_input_id: { type: DataTypes.INTEGER, allowNull: false },
		cell_slug: { type: DataTypes.STRING, allowNull: false },
		cell_version: { type: DataTypes.INTEGER, allowNull: false },
		settings: { type: DataTypes.TEXT, allowNull: false },
		stats: { type: DataTypes.TEXT, allowNull: false },
		encoding: { type: DataTypes.STRING, allowNull: false },
		series: { type: DataTypes.BLOB, allowNull: false },
		created_by: { type: DataTypes.STRING, allowNull: false }
	},
	{ sequelize, tableName: 'model_checks', underscored: true, timestamps: true, createdAt: 'created_at', updatedAt: false }
);

/** A comment in a model check's thread. */
export class ModelCheckEvent extends Model {
	declare id: CreationOptional<number>;
	declare check_id: number;
	declare user_id: string | null;
	declare body: string;
	declare created_at: CreationOptional<Date>;
}

ModelCheckEvent.init(
	{
		id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
		check_id: { type: DataTypes.INTEGER, allowNull: false },
		user_id: { type: DataTypes.STRING, allowNull: true },
		body: { type: DataTypes.TEXT, allowNull: false }
	},
	{ sequelize, tableName: 'model_check_events', underscored: true, timestamps: true, createdAt: 'created_at', updatedAt: false }
);
