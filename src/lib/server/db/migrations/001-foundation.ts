/** Users, sessions, programs, memberships with a role per program, invitations and parameter sets. */
import { DataTypes } from 'sequelize';
import type { Migration } from './types';

const now = { type: DataTypes.DATE, allowNull: false };

const migration: Migration = {
	id: '001-foundation',
	async up(qi, transaction) {
		await qi.createTable(
			'users',
			{
				id: { type: DataTypes.STRING, primaryKey: true },
				email: { type: DataTypes.STRING, allowNull: false, unique: true },
				name: { type: DataTypes.STRING, allowNull: false },
				password_hash: { type: DataTypes.STRING, allowNull: true },
				is_admin: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
				active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
				created_at: now,
				updated_at: now
			},
			{ transaction }
		);
		await qi.createTable(
			'sessions',
			{
				id: { type: DataTypes.STRING, primaryKey: true },
				user_id: {
					type: DataTypes.STRING,
					allowNull: false,
					references: { model: 'users', key: 'id' },
					onDelete: 'CASCADE'
				},
				expires_at: { type: DataTypes.BIGINT, allowNull: false }
			},
			{ transaction }
		);
		await qi.addIndex('sessions', ['user_id'], { transaction });
		await qi.createTable(
			'programs',
			{
				id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
				name: { type: DataTypes.STRING, allowNull: false, unique: true },
				description: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
				created_at: now,
				updated_at: now
			},
			{ transaction }
		);
		await qi.createTable(
			'memberships',
			{
				id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
				program_id: {
					type: DataTypes.INTEGER,
					allowNull: false,
					references: { model: 'programs', key: 'id' },
					onDelete: 'CASCADE'
				},
				user_id: {
					type: DataTypes.STRING,
					allowNull: false,
					references: { model: 'users', key: 'id' },
					onDelete: 'CASCADE'
				},
				role: { type: DataTypes.STRING, allowNull: false },
				digest_subscribed: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
				created_at: now,
				updated_at: now
			},
			{ transaction }
		);
		await qi.addIndex('memberships', ['program_id', 'user_id'], { unique: true, transaction });
		await qi.createTable(
			'invitations',
			{
				token_hash: { type: DataTypes.STRING, primaryKey: true },
				user_id: {
					type: DataTypes.STRING,
					allowNull: false,
					references: { model: 'users', key: 'id' },
					onDelete: 'CASCADE'
				},
				expires_at: { type: DataTypes.BIGINT, allowNull: false },
				used_at: { type: DataTypes.BIGINT, allowNull: true },
				created_at: now
			},
			{ transaction }
		);
		await qi.createTable(
			'parameter_sets',
			{
				id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
				program_id: {
					type: DataTypes.INTEGER,
					allowNull: false,
					references: { model: 'programs', key: 'id' },
					onDelete: 'CASCADE'
				},
				kind: { type: DataTypes.STRING, allowNull: false },
				slug: { type: DataTypes.STRING, allowNull: false },
				version: { type: DataTypes.INTEGER, allowNull: false },
				name: { type: DataTypes.STRING, allowNull: false },
				data: { type: DataTypes.TEXT, allowNull: false },
				created_by: { type: DataTypes.STRING, allowNull: true },
				created_at: now
			},
			{ transaction }
		);
		await qi.addIndex('parameter_sets', ['program_id', 'kind', 'slug', 'version'], {
			unique: true,
			transaction
		});
	}
};

export default migration;
