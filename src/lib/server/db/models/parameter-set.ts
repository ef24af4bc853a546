import { DataTypes, Model, type CreationOptional } from 'sequelize';
import { sequelize } from '../index';

export type ParameterKind = 'cell' | 'pack' | 'scenario';

/**
 * A versioned engine input (cell parameters, pack design or scenario) as JSON. Rows are never
 * updated in place once a sweep used them: an edit writes version n+1 under the same slug, so a
 * stored result always points at exactly what produced it.
 */
export class ParameterSet extends Model {
	declare id: CreationOptional<number>;
	declare program_id: number;
	declare kind: ParameterKind;
	declare slug: string;
	declare version: number;
	declare name: string;
	declare data: string;
	declare created_by: string | null;
	declare created_at: CreationOptional<Date>;
}

ParameterSet.init(
	{
		id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
		program_id: { type: DataTypes.INTEGER, allowNull: false },
		kind: { type: DataTypes.STRING, allowNull: false },
		slug: { type: DataTypes.STRING, allowNull: false },
		version: { type: DataTypes.INTEGER, allowNull: false },
		name: { type: DataTypes.STRING, allowNull: false },
		data: { type: DataTypes.TEXT, allowNull: false },
		created_by: { type: DataTypes.STRING, allowNull: true }
	},
	{ sequelize, tableName: 'parameter_sets', underscored: true, timestamps: true, createdAt: 'created_at', updatedAt: false }
);
