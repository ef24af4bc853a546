import { DataTypes, Model, type CreationOptional } from 'sequelize';
import { sequelize } from '../index';

export const MAIL_STATUSES = ['pending', 'sent', 'failed'] as const;
export type MailStatus = (typeof MAIL_STATUSES)[number];
export type MailKind = 'sweep-digest' | 'invitation' | 'strategy-event' | 'strategy-summary' | 'year-digest';

/** One message to one recipient, rendered when the event happened and sent by the dispatcher. */
export class MailOutbox extends Model {
	declare id: CreationOptional<number>;
	/** UNIQUE: one message per event and recipient, however often the event is handled. */
	declare dedupe_key: string;
	declare kind: MailKind;
	declare to_address: string;
	declare to_name: CreationOptional<string>;
	declare user_id: string | null;
	declare program_id: number | null;
	declare subject: string;
	declare html: string;
	declare text: string;
	declare status: CreationOptional<MailStatus>;
	declare attempts: CreationOptional<number>;
	declare next_attempt_at: Date;
	declare last_error: string | null;
	/** 'outbox' (local, SMTP_URL unset) or 'smtp://host:port' (never the credentials). */
	declare transport: string | null;
	declare message_id: string | null;
	/** The RFC 5322 message exactly as handed to the transport. */
	declare raw: string | null;
	declare sent_at: Date | null;
	declare created_at: CreationOptional<Date>;
	declare updated_at: CreationOptional<Date>;
}

MailOutbox.init(
	{
		id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
		dedupe_key: { type: DataTypes.STRING, allowNull: false, unique: true },
		kind: { type: DataTypes.STRING, allowNull: false },
		to_address: { type: DataTypes.STRING, allowNull: false },
		to_name: { type: DataTypes.STRING, allowNull: false, defaultValue: '' },
		user_id: { type: DataTypes.STRING, allowNull: true },
		program_id: { type: DataTypes.INTEGER, allowNull: true },
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
		sent_at: { type: DataTypes.DATE, allowNull: true }
	},
	{ sequelize, tableName: 'mail_outbox', underscored: true, timestamps: true, createdAt: 'created_at', updatedAt: 'updated_at' }
);

/** Small key/value marks: cursors and "already handled" flags (see migration 004). */
export class MailMark extends Model {
	declare key: string;
	declare value: string;
	declare created_at: CreationOptional<Date>;
}

MailMark.init(
	{
		key: { type: DataTypes.STRING, primaryKey: true },
		value: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' }
	},
	{ sequelize, tableName: 'mail_marks', underscored: true, timestamps: true, createdAt: 'created_at', updatedAt: false }
);
