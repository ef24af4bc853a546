/**
 * Lucia 3 adapter over Sequelize. Sessions of a deactivated user are treated as absent, so a
 * deactivation ends access at once even if a delete raced with a request.
 */
import { Op } from 'sequelize';
import type { Adapter, DatabaseSession, DatabaseUser } from 'lucia';
import { Session, User } from '../db/models/index';

function toDatabaseUser(u: User): DatabaseUser {
	return {
		id: u.id,
		attributes: { email: u.email, name: u.name, is_admin: Boolean(u.is_admin) }
	};
}

function toDatabaseSession(s: Session): DatabaseSession {
	return { id: s.id, userId: s.user_id, expiresAt: new Date(Number(s.expires_at)), attributes: {} };
}

export class SequelizeAdapter implements Adapter {
	async getSessionAndUser(
		sessionId: string
	): Promise<[session: DatabaseSession | null, user: DatabaseUser | null]> {
		const session = await Session.findByPk(sessionId);
		if (!session) return [null, null];
		const user = await User.findByPk(session.user_id);
		if (!user || !user.active) return [null, null];
		return [toDatabaseSession(session), toDatabaseUser(user)];
	}

	async getUserSessions(userId: string): Promise<DatabaseSession[]> {
		const rows = await Session.findAll({ where: { user_id: userId } });
		return rows.map(toDatabaseSession);
	}

	async setSession(session: DatabaseSession): Promise<void> {
		await Session.create({
			id: session.id,
			user_id: session.userId,
			expires_at: session.expiresAt.getTime()
		});
	}

	async updateSessionExpiration(sessionId: string, expiresAt: Date): Promise<void> {
		await Session.update({ expires_at: expiresAt.getTime() }, { where: { id: sessionId } });
	}

	async deleteSession(sessionId: string): Promise<void> {
		await Session.destroy({ where: { id: sessionId } });
	}

	async deleteUserSessions(userId: string): Promise<void> {
		await Session.destroy({ where: { user_id: userId } });
	}

	async deleteExpiredSessions(): Promise<void> {
		await Session.destroy({ where: { expires_at: { [Op.lte]: Date.now() } } });
	}
}
