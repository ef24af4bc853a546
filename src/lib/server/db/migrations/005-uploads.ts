/** Uploaded tables (drive profiles, OCP tables, measured logs), model checks and their comment threads. */
import { DataTypes } from 'sequelize';
import type { Migration } from './types';

const now = { type: DataTypes.DATE, allowNull: false };

const migration: Migration = {
	id: '005-uploads',
	async up(qi, transaction) {
		await qi.createTable(
			'uploads',
			{
				id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
				program_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'programs', key: 'id' }, onDelete: 'CASCADE' },
				kind: { type: DataTypes.STRING, allowNull: false },
				name: { type: DataTypes.STRING, allowNull: false },
				original_name: { type: DataTypes.STRING, allowNull: false },
				size_bytes: { type: DataTypes.INTEGER, allowNull: false },
				/** SHA-256 of the file as uploaded, hex. */
				sha256: { type: DataTypes.STRING(64), allowNull: false },
				row_count: { type: DataTypes.INTEGER, allowNull: false },
				/** Parse facts: column sources and units, notes, kind-specific summary (JSON). */
				meta: { type: DataTypes.TEXT, allowNull: false },
				/** 'json+gzip': the parsed SI columns. */
				encoding: { type: DataTypes.STRING, allowNull: false },
				data: { type: DataTypes.BLOB, allowNull: false },
				created_by: { type: DataTypes.STRING, allowNull: false, references: { model: 'users', key: 'id' } },
				created_at: now
			},
			{ transaction }
		);
		await qi.addIndex('uploads', ['program_id', 'kind'], { transaction });
		await qi.createTable(
			'model_checks',
			{
				id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
				program_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'programs', key: 'id' }, onDelete: 'CASCADE' },
				title: { type: DataTypes.STRING, allowNull: false },
				upload_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'uploads', key: 'id' }, onDelete: 'CASCADE' },
				/** The exact cell parameter set version replayed (parameter_sets.id) and its slug/version for reading. */
				cell_input_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'parameter_sets', key: 'id' } },
				cell_slug: { type: DataTypes.STRING, allowNull: false },
				cell_version: { type: DataTypes.INTEGER, allowNull: false },
				/** Replay settings (state of health, initial SOC, thermal mode, conductance) as JSON. */
				settings: { type: DataTypes.TEXT, allowNull: false },
				/** Error statistics as JSON (engine/model-check.ts CheckStatistics). */
				stats: { type: DataTypes.TEXT, allowNull: false },
				/** 'json+gzip': measured and simulated series at full resolution. */
				encoding: { type: DataTypes.STRING, allowNull: false },
				series: { type: DataTypes.BLOB, allowNull: false },
				created_by: { type: DataTypes.STRING, allowNull: false, references: { model: 'users', key: 'id' } },
				created_at: now
			},
			{ transaction }
		);
		await qi.addIndex('model_checks', ['program_id', 'created_at'], { transaction });
		await qi.createTable(
			'model_check_events',
			{
				id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
				check_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'model_checks', key: 'id' }, onDelete: 'CASCADE' },
				user_id: { type: DataTypes.STRING, allowNull: true, references: { model: 'users', key: 'id' } },
				body: { type: DataTypes.TEXT, allowNull: false },
				created_at: now
			},
			{ transaction }
		);
		await qi.addIndex('model_check_events', ['check_id', 'created_at'], { transaction });
	}
};

export default migration;
