/** Year of use: climates (hourly ambient years) and charging patterns as versioned program inputs, and evaluations. */
import { DataTypes } from 'sequelize';
import type { Migration } from './types';

const now = { type: DataTypes.DATE, allowNull: false };
const program = { type: DataTypes.INTEGER, allowNull: false, references: { model: 'programs', key: 'id' }, onDelete: 'CASCADE' };

const migration: Migration = {
	id: '030-year-of-use',
	async up(qi, transaction) {
		await qi.createTable(
			'climates',
			{
				id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
				program_id: program,
				slug: { type: DataTypes.STRING, allowNull: false },
				version: { type: DataTypes.INTEGER, allowNull: false },
				name: { type: DataTypes.STRING, allowNull: false },
				/** True for made-up demo climates (shown as “invented”). */
				invented: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
				original_name: { type: DataTypes.STRING, allowNull: false },
				/** SHA-256 of the file as uploaded, hex. */
				sha256: { type: DataTypes.STRING(64), allowNull: false },
				hours: { type: DataTypes.INTEGER, allowNull: false },
				/** Summary (min, mean, max per month, notes) as JSON. */
				meta: { type: DataTypes.TEXT, allowNull: false },
				/** 'json+gzip': ambient per hour in kelvin. */
				encoding: { type: DataTypes.STRING, allowNull: false },
				data: { type: DataTypes.BLOB, allowNull: false },
				created_by: { type: DataTypes.STRING, allowNull: true, references: { model: 'users', key: 'id' } },
				created_at: now
			},
			{ transaction }
		);
		await qi.addIndex('climates', ['program_id', 'slug', 'version'], { unique: true, transaction });
		await qi.createTable(
			'charging_patterns',
			{
				id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
				program_id: program,
				slug: { type: DataTypes.STRING, allowNull: false },
				version: { type: DataTypes.INTEGER, allowNull: false },
				name: { type: DataTypes.STRING, allowNull: false },
				/** The validated pattern (src/lib/year/pattern.ts) as JSON. */
				data: { type: DataTypes.TEXT, allowNull: false },
				created_by: { type: DataTypes.STRING, allowNull: true, references: { model: 'users', key: 'id' } },
				created_at: now
			},
			{ transaction }
		);
		await qi.addIndex('charging_patterns', ['program_id', 'slug', 'version'], { unique: true, transaction });
		await qi.createTable(
			'year_evaluations',
			{
				id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
				program_id: program,
				name: { type: DataTypes.STRING, allowNull: false },
				climate_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'climates', key: 'id' } },
				pattern_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'charging_patterns', key: 'id' } },
				sweep_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'sweeps', key: 'id' } },
				/** 'lookup' (stored sweep results). */
				mode: { type: DataTypes.STRING, allowNull: false },
				status: { type: DataTypes.STRING, allowNull: false },
				/** Cell, pack, state of health, fixed rule, fleet size as JSON. */
				settings: { type: DataTypes.TEXT, allowNull: false },
				/** The year's figures (src/lib/year/evaluate.ts YearResult) as JSON. */
				result: { type: DataTypes.TEXT, allowNull: true },
				created_by: { type: DataTypes.STRING, allowNull: true, references: { model: 'users', key: 'id' } },
				created_at: now
			},
			{ transaction }
		);
		await qi.addIndex('year_evaluations', ['program_id', 'created_at'], { transaction });
	}
};

export default migration;
