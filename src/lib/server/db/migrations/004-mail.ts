/**
 * Mail: the outbox every message goes through, per-user notification settings, strategy
 * notifications waiting for a daily summary, and small marks (cursors, "digest written for
 * sweep N") that make the event-to-message step idempotent and restartable.
 *
 * - `mail_outbox`: one row per message and recipient. UNIQUE dedupe_key ("sweep-digest:12:<user>")
 *   is what guarantees an event produces at most one message per recipient, however often the
 *   event is handled. status pending → sent, or failed after the last attempt (kept, retryable).
 * - `notification_settings`: a row only when the user chose something; no row = the default.
 * - `notification_items`: strategy events a user receives in the daily summary.
 * - `mail_marks`: key/value; `installed_at` is written here so that only sweeps finishing after
 *   mail was installed get a digest, and the strategy-event cursor starts after existing events.
 */
import { DataTypes } from 'sequelize';
import type { Migration } from './types';

const now = { type: DataTypes.DATE, allowNull: false };

const migration: Migration = {
	id: '004-mail',
	async up(qi, transaction) {
		await qi.createTable(
			'mail_outbox',
			{
				id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
				dedupe_key: { type: DataTypes.STRING, allowNull: false, unique: true },
				kind: { type: DataTypes.STRING, allowNull: false },
				to_address: { type: DataTypes.STRING, allowNull: false },
				to_name: { type: DataTypes.STRING, allowNull: false, defaultValue: '' },
				user_id: { type: DataTypes.STRING, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
				program_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'programs', key: 'id' }, onDelete: 'SET NULL' },
				subject: { type: DataTypes.STRING(400), allowNull: false },
				html: { type: DataTypes.TEXT, allowNull: false },
				text: { type: DataTypes.TEXT, allowNull: false },
				status: { type: DataTypes.STRING, allowNull: false, defaultValue: 'pending' },
				attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
				next_attempt_at: { type: DataTypes.DATE, allowNull: false },
				last_error: { type: DataTypes.TEXT, allowNull: true },
				transport: { type: DataTypes.STRING, allowNull: true },
				message_id: { type: DataTypes.STRING, allowNull: true },
				raw: { type: DataTypes.TEXT, allowNull: true },
				sent_at: { type: DataTypes.DATE, allowNull: true },
				created_at: now,
				updated_at: now
			},
			{ transaction }
		);
		await qi.addIndex('mail_outbox', ['status', 'next_attempt_at'], { transaction });
		await qi.addIndex('mail_outbox', ['created_at'], { transaction });

		await qi.createTable(
			'notification_settings',
			{
				user_id: { type: DataTypes.STRING, primaryKey: true, references: { model: 'users', key: 'id' }, onDelete: 'CASCADE' },
				strategy_mode: { type: DataTypes.STRING, allowNull: false },
				created_at: now,
				updated_at: now
			},
			{ transaction }
		);

		await qi.createTable(
			'notification_items',
			{
				id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
				user_id: { type: DataTypes.STRING, allowNull: false, references: { model: 'users', key: 'id' }, onDelete: 'CASCADE' },
				program_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'programs', key: 'id' }, onDelete: 'CASCADE' },
				strategy_id: { type: DataTypes.INTEGER, allowNull: false },
				event_id: { type: DataTypes.INTEGER, allowNull: false },
				line: { type: DataTypes.TEXT, allowNull: false },
				summary_key: { type: DataTypes.STRING, allowNull: true },
				created_at: now
			},
			{ transaction }
		);
		await qi.addIndex('notification_items', ['user_id', 'event_id'], { unique: true, name: 'notification_items_once', transaction });
		await qi.addIndex('notification_items', ['summary_key', 'user_id'], { transaction });

		await qi.createTable(
			'mail_marks',
			{
				key: { type: DataTypes.STRING, primaryKey: true },
				value: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
				created_at: now
			},
			{ transaction }
		);
		const stamp = new Date();
		const [rows] = (await qi.sequelize.query('SELECT MAX(id) AS id FROM strategy_events', { transaction })) as [{ id: number | null }[], unknown];
		await qi.bulkInsert(
			'mail_marks',
			[
				{ key: 'installed_at', value: stamp.toISOString(), created_at: stamp },
				{ key: 'strategy-events-cursor', value: String(rows[0]?.id ?? 0), created_at: stamp }
			],
			{ transaction }
		);
	}
};

export default migration;
