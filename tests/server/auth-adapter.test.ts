/**
 * The Lucia adapter over Sequelize: sessions are created, validated, extended, expired and
 * invalidated in SQLite; deactivating a user ends their sessions at once.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { tempDataDir } from '../helpers/app';

process.env.PARETHERM_DATA_DIR = tempDataDir('paretherm-adapter-');
process.env.PARETHERM_BCRYPT_COST = '4';

const { ensureDb } = await import('../../src/lib/server/db/index');
const { Session, User } = await import('../../src/lib/server/db/models/index');
const { lucia } = await import('../../src/lib/server/auth/lucia');
const { SequelizeAdapter } = await import('../../src/lib/server/auth/adapter');
const { createUser, setActive } = await import('../../src/lib/server/auth/users');
const { verifyPassword, passwordProblem } = await import('../../src/lib/server/auth/password');
const { runMigrations } = await import('../../src/lib/server/db/migrate');
const { sequelize } = await import('../../src/lib/server/db/index');

describe('session adapter', () => {
	let userId: string;
	beforeAll(async () => {
		await ensureDb();
		userId = (await createUser({ email: 'Cell.Tester@Example.org', name: 'Cell Tester', password: 'long-enough-pw' })).id;
	});

	it('should store e-mails normalised and passwords as bcrypt hashes', async () => {
		const u = await User.findByPk(userId);
		expect(u!.email).toBe('cell.tester@example.org');
		expect(u!.password_hash).toMatch(/^\$2[aby]\$04\$/);
		expect(await verifyPassword('long-enough-pw', u!.password_hash)).toBe(true);
		expect(await verifyPassword('wrong-password', u!.password_hash)).toBe(false);
	});

	it('should create and validate a session', async () => {
		const session = await lucia.createSession(userId, {});
		const row = await Session.findByPk(session.id);
		expect(row).not.toBeNull();
		const { session: s, user } = await lucia.validateSession(session.id);
		expect(s?.id).toBe(session.id);
		expect(user?.email).toBe('cell.tester@example.org');
		expect(user).not.toHaveProperty('password_hash');
	});

	it('should refuse and delete an expired session', async () => {
		const session = await lucia.createSession(userId, {});
		await Session.update({ expires_at: Date.now() - 1000 }, { where: { id: session.id } });
		const { session: s, user } = await lucia.validateSession(session.id);
		expect(s).toBeNull();
		expect(user).toBeNull();
		expect(await Session.findByPk(session.id)).toBeNull();
	});

	it('should extend a session past half its life (fresh)', async () => {
		const session = await lucia.createSession(userId, {});
		const soon = Date.now() + 3600_000; // 1 h left of a 7-day session
		await Session.update({ expires_at: soon }, { where: { id: session.id } });
		const { session: s } = await lucia.validateSession(session.id);
		expect(s?.fresh).toBe(true);
		const row = await Session.findByPk(session.id);
		expect(Number(row!.expires_at)).toBeGreaterThan(soon + 24 * 3600_000);
	});

	it('should invalidate one session and all sessions of a user', async () => {
		const a = await lucia.createSession(userId, {});
		const b = await lucia.createSession(userId, {});
		await lucia.invalidateSession(a.id);
		expect((await lucia.validateSession(a.id)).session).toBeNull();
		expect((await lucia.validateSession(b.id)).session).not.toBeNull();
		await lucia.invalidateUserSessions(userId);
		expect((await lucia.validateSession(b.id)).session).toBeNull();
		expect(await new SequelizeAdapter().getUserSessions(userId)).toHaveLength(0);
	});

	it('should delete only expired sessions in the sweep-up', async () => {
		const live = await lucia.createSession(userId, {});
		const old = await lucia.createSession(userId, {});
		await Session.update({ expires_at: Date.now() - 1 }, { where: { id: old.id } });
		await lucia.deleteExpiredSessions();
		expect(await Session.findByPk(old.id)).toBeNull();
		expect(await Session.findByPk(live.id)).not.toBeNull();
	});

	it('should end every session when the user is deactivated', async () => {
		const other = await createUser({ email: 'soon.gone@example.org', name: 'Soon Gone', password: 'long-enough-pw' });
		const s = await lucia.createSession(other.id, {});
		await setActive(other.id, false);
		expect((await lucia.validateSession(s.id)).session).toBeNull();
		expect(await Session.count({ where: { user_id: other.id } })).toBe(0);
	});

	describe('error handling', () => {
		it('should return nothing for an unknown session id', async () => {
			expect(await new SequelizeAdapter().getSessionAndUser('no-such-session')).toEqual([null, null]);
		});
		it('should refuse short and over-long passwords with a message', () => {
			expect(passwordProblem('short')).toMatch(/at least 10/);
			expect(passwordProblem('x'.repeat(73))).toMatch(/at most 72 bytes/);
			expect(passwordProblem('a-fine-password')).toBeNull();
		});
		it('should not rerun applied migrations', async () => {
			expect(await runMigrations(sequelize)).toEqual([]);
		});
	});
});
