import { DataTypes, Model, type CreationOptional } from 'sequelize';
import { sequelize } from '../index';

/** An hourly ambient year of a program; versioned like parameter sets (a new file → version n+1 of the slug). */
export class Climate extends Model {
	declare id: CreationOptional<number>;
	declare program_id: number;
	declare slug: string;
	declare version: number;
	declare name: string;
	declare invented: boolean;
	declare original_name: string;
	declare sha256: string;
	declare hours: number;
	declare meta: string;
	declare encoding: string;
	declare data: Buffer;
	declare created_by: string | null;
	declare created_at: CreationOptional<Date>;
}

Climate.init(
	{
		id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
		program_id: { type: DataTypes.INTEGER, allowNull: false },
		slug: { type: DataTypes.STRING, allowNull: false },
		version: { type: DataTypes.INTEGER, allowNull: false },
		name: { type: DataTypes.STRING, allowNull: false },
		invented: { type: DataTypes.BOOLEAN, allowNull: false },
		original_name: { type: DataTypes.STRING, allowNull: false },
		sha256: { type: DataTypes.STRING(64), allowNull: false },
		hours: { type: DataTypes.INTEGER, allowNull: false },
		meta: { type: DataTypes.TEXT, allowNull: false },
		encoding: { type: DataTypes.STRING, allowNull: false },
		data: { type: DataTypes.BLOB, allowNull: false },
		created_by: { type: DataTypes.STRING, allowNull: true }
	},
	{ sequelize, tableName: 'climates', underscored: true, timestamps: true, createdAt: 'created_at', updatedAt: false }
);

/** A charging pattern of a program; versioned like parameter sets. */
export class ChargingPatternRow extends Model {
	declare id: CreationOptional<number>;
	declare program_id: number;
	declare slug: string;
	declare version: number;
	declare name: string;
	declare data: string;
	declare created_by: string | null;
	declare created_at: CreationOptional<Date>;
}

ChargingPatternRow.init(
	{
		id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
		program_id: { type: DataTypes.INTEGER, allowNull: false },
		slug: { type: DataTypes.STRING, allowNull: false },
		version: { type: DataTypes.INTEGER, allowNull: false },
		name: { type: DataTypes.STRING, allowNull: false },
		data: { type: DataTypes.TEXT, allowNull: false },
		created_by: { type: DataTypes.STRING, allowNull: true }
	},
	{ sequelize, tableName: 'charging_patterns', underscored: true, timestamps: true, createdAt: 'created_at', updatedAt: false }
);

/** A year-of-use evaluation: exact input versions, settings and the stored yearly figures. */
export class YearEvaluation extends Model {
	declare id: CreationOptional<number>;
	declare program_id: number;
	declare name: string;
	declare climate_id: number;
	declare pattern_id: number;
	declare sweep_id: number;
	declare mode: 'lookup';
	declare status: 'done';
	declare settings: string;
	declare result: string | null;
	declare created_by: string | null;
	declare created_at: CreationOptional<Date>;
}

YearEvaluation.init(
	{
		id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
		program_id: { type: DataTypes.INTEGER, allowNull: false },
		name: { type: DataTypes.STRING, allowNull: false },
		climate_id: { type: DataTypes.INTEGER, allowNull: false },
		pattern_id: { type: DataTypes.INTEGER, allowNull: false },
		sweep_id: { type: DataTypes.INTEGER, allowNull: false },
		mode: { type: DataTypes.STRING, allowNull: false },
		status: { type: DataTypes.STRING, allowNull: false },
		settings: { type: DataTypes.TEXT, allowNull: false },
		result: { type: DataTypes.TEXT, allowNull: true },
		created_by: { type: DataTypes.STRING, allowNull: true }
	},
	{ sequelize, tableName: 'year_evaluations', underscored: true, timestamps: true, createdAt: 'created_at', updatedAt: false }
);

export type YearExactStatus = 'queued' | 'running' | 'done' | 'failed' | 'cancelled';
export const ACTIVE_EXACT_STATUSES: YearExactStatus[] = ['queued', 'running'];

/** An exact-mode run of an evaluation: every sampled charge simulated in background chunks. */
export class YearExactRun extends Model {
	declare id: CreationOptional<number>;
	declare evaluation_id: number;
	declare status: YearExactStatus;
	declare queue_token: string;
	declare plan: string;
	declare chunk_size: number;
	declare chunk_count: number;
	declare chunks_done: CreationOptional<number>;
	declare simulation_count: number;
	declare simulations_done: CreationOptional<number>;
	declare result: string | null;
	declare failure_reason: string | null;
	declare created_by: string | null;
	declare created_at: CreationOptional<Date>;
	declare started_at: Date | null;
	declare finished_at: Date | null;
}
YearExactRun.init(
	{
		id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
		evaluation_id: { type: DataTypes.INTEGER, allowNull: false },
		status: { type: DataTypes.STRING, allowNull: false },
		queue_token: { type: DataTypes.STRING, allowNull: false },
		plan: { type: DataTypes.TEXT, allowNull: false },
		chunk_size: { type: DataTypes.INTEGER, allowNull: false },
		chunk_count: { type: DataTypes.INTEGER, allowNull: false },
		chunks_done: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
		simulation_count: { type: DataTypes.INTEGER, allowNull: false },
		simulations_done: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
		result: { type: DataTypes.TEXT, allowNull: true },
		failure_reason: { type: DataTypes.TEXT, allowNull: true },
		created_by: { type: DataTypes.STRING, allowNull: true },
		started_at: { type: DataTypes.DATE, allowNull: true },
		finished_at: { type: DataTypes.DATE, allowNull: true }
	},
	{ sequelize, tableName: 'year_exact_runs', underscored: true, timestamps: true, createdAt: 'created_at', updatedAt: false }
);

/** One stored chunk of an exact run (the receipt that makes storing it happen once). */
export class YearExactChunk extends Model {
	declare id: CreationOptional<number>;
	declare run_id: number;
	declare chunk_index: number;
	declare figures: string;
	declare worker: string;
	declare attempt: number;
	declare elapsed_ms: number;
	declare created_at: CreationOptional<Date>;
}
YearExactChunk.init(
	{
		id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
		run_id: { type: DataTypes.INTEGER, allowNull: false },
		chunk_index: { type: DataTypes.INTEGER, allowNull: false },
		figures: { type: DataTypes.TEXT, allowNull: false },
		worker: { type: DataTypes.STRING, allowNull: false },
		attempt: { type: DataTypes.INTEGER, allowNull: false },
		elapsed_ms: { type: DataTypes.INTEGER, allowNull: false }
	},
	{ sequelize, tableName: 'year_exact_chunks', underscored: true, timestamps: true, createdAt: 'created_at', updatedAt: false }
);
