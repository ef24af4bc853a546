/** Strategies promoted from sweep points, their review events and comment threads. */
import { DataTypes } from 'sequelize';
import type { Migration } from './types';

const now = { type: DataTypes.DATE, allowNull: false };

const migration: Migration = {
	id: '003-strategies',
	async up(qi, transaction) {
		await qi.createTable(
			'strategies',
			{
				id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
				program_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'programs', key: 'id' }, onDelete: 'CASCADE' },
				sweep_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'sweeps', key: 'id' }, onDelete: 'CASCADE' },
				point_id: { type: DataTypes.INTEGER, allowNull: false },
				scenario_key: { type: DataTypes.TEXT, allowNull: false },
				title: { type: DataTypes.STRING, allowNull: false },
				rationale: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
				state: { type: DataTypes.STRING, allowNull: false },
				/** Snapshot of the point's figures at promotion, so the strategy reads on its own. */
				figures: { type: DataTypes.TEXT, allowNull: false },
				created_by: { type: DataTypes.STRING, allowNull: false, references: { model: 'users', key: 'id' } },
				created_at: now,
				updated_at: now
			},
			{ transaction }
		);
		await qi.addIndex('strategies', ['program_id', 'state'], { transaction });
		await qi.createTable(
			'strategy_events',
			{
				id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
				strategy_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'strategies', key: 'id' }, onDelete: 'CASCADE' },
				user_id: { type: DataTypes.STRING, allowNull: true, references: { model: 'users', key: 'id' } },
				kind: { type: DataTypes.STRING, allowNull: false },
				from_state: { type: DataTypes.STRING, allowNull: true },
				to_state: { type: DataTypes.STRING, allowNull: true },
				body: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
				created_at: now
			},
			{ transaction }
		);
		await qi.addIndex('strategy_events', ['strategy_id', 'created_at'], { transaction });
	}
};

export default migration;
