import { DataTypes, Model, type CreationOptional } from 'sequelize';
import { sequelize } from '../index';

/** A front point's engine TimeSeries, gzip-compressed JSON (encoding 'json+gzip'). */
export class SweepSeries extends Model {
	declare id: CreationOptional<number>;
	declare sweep_id: number;
	declare point_id: number;
	declare encoding: string;
	declare series_interval_s: number;
	declare data: Buffer;
	declare created_at: CreationOptional<Date>;
}

SweepSeries.init(
	{
		id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
		sweep_id: { type: DataTypes.INTEGER, allowNull: false },
		point_id: { type: DataTypes.INTEGER, allowNull: false, unique: true },
		encoding: { type: DataTypes.STRING, allowNull: false },
		series_interval_s: { type: DataTypes.REAL, allowNull: false, field: 'series_interval_s' },
		data: { type: DataTypes.BLOB, allowNull: false }
	},
	{ sequelize, tableName: 'sweep_series', underscored: true, timestamps: true, createdAt: 'created_at', updatedAt: false }
);
