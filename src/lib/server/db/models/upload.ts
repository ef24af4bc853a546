import { DataTypes, Model, type CreationOptional } from 'sequelize';
import { sequelize } from '../index';

/**
 * An accepted upload: the parsed SI columns (gzip-compressed JSON) with the original file's name,
 * size and SHA-256, who uploaded it and when. Rows are never changed; a corrected file is a new upload.
 */
export class Upload extends Model {
	declare id: CreationOptional<number>;
	declare program_id: number;
	declare kind: 'drive-profile' | 'ocp-table' | 'measured-log';
	declare name: string;
	declare original_name: string;
	declare size_bytes: number;
	declare sha256: string;
	declare row_count: number;
	declare meta: string;
	declare encoding: string;
	declare data: Buffer;
	declare created_by: string;
	declare created_at: CreationOptional<Date>;
}

Upload.init(
	{
		id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
		program_id: { type: DataTypes.INTEGER, allowNull: false },
		kind: { type: DataTypes.STRING, allowNull: false },
		name: { type: DataTypes.STRING, allowNull: false },
		original_name: { type: DataTypes.STRING, allowNull: false },
		size_bytes: { type: DataTypes.INTEGER, allowNull: false },
		sha256: { type: DataTypes.STRING(64), allowNull: false },
		row_count: { type: DataTypes.INTEGER, allowNull: false },
		meta: { type: DataTypes.TEXT, allowNull: false },
		encoding: { type: DataTypes.STRING, allowNull: false },
		data: { type: DataTypes.BLOB, allowNull: false },
		created_by: { type: DataTypes.STRING, allowNull: false }
	},
	{ sequelize, tableName: 'uploads', underscored: true, timestamps: true, createdAt: 'created_at', updatedAt: false }
);
