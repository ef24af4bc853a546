import { DataTypes, Model } from 'sequelize';
import { sequelize } from '../index';

/** One-time sign-up links. Only a SHA-256 of the token is stored, so a leaked database opens nothing. */
export class Invitation extends Model {
	declare token_hash: string;
	declare user_id: string;
	declare expires_at: number;
	declare used_at: number | null;
}

Invitation.init(
	{
		token_hash: { type: DataTypes.STRING, primaryKey: true },
		user_id: { type: DataTypes.STRING, allowNull: false },
		expires_at: { type: DataTypes.BIGINT, allowNull: false },
		used_at: { type: DataTypes.BIGINT, allowNull: true }
	},
	{ sequelize, tableName: 'invitations', underscored: true, timestamps: true, createdAt: 'created_at', updatedAt: false }
);
