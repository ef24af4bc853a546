import { DataTypes, Model, type CreationOptional } from 'sequelize';
import { sequelize } from '../index';

/** Receipt of one stored chunk result; UNIQUE (sweep_id, chunk_index) makes storing idempotent. */
export class SweepChunk extends Model {
	declare id: CreationOptional<number>;
	declare sweep_id: number;
	declare chunk_index: number;
	declare simulations: number;
	declare worker: string;
	declare attempt: number;
	declare elapsed_ms: number;
	declare created_at: CreationOptional<Date>;
}

SweepChunk.init(
	{
		id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
		sweep_id: { type: DataTypes.INTEGER, allowNull: false },
		chunk_index: { type: DataTypes.INTEGER, allowNull: false },
		simulations: { type: DataTypes.INTEGER, allowNull: false },
		worker: { type: DataTypes.STRING, allowNull: false },
		attempt: { type: DataTypes.INTEGER, allowNull: false },
		elapsed_ms: { type: DataTypes.INTEGER, allowNull: false }
	},
	{ sequelize, tableName: 'sweep_chunks', underscored: true, timestamps: true, createdAt: 'created_at', updatedAt: false }
);
