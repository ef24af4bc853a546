/** User administration shared by the admin pages, the seed and the invitation flow. */
import { encodeBase32LowerCaseNoPadding, encodeHexLowerCase } from '@oslojs/encoding';
import { sha256 } from '@oslojs/crypto/sha2';
import { Op } from 'sequelize';
import { sequelize } from '../db/index';
import { Invitation, User } from '../db/models/index';
import { hashPassword } from './password';
import { lucia } from './lucia';

export function newId(bytes = 15): string {
	const b = new Uint8Array(bytes);
	crypto.getRandomValues(b);
	return encodeBase32LowerCaseNoPadding(b);
}

export function normaliseEmail(email: string): string {
	return email.trim().toLowerCase();
}

const EMAIL_RE = /^[^\s@]{1,64}@[^\s@]{1,189}\.[^\s@]{2,}$/;
export function emailProblem(email: string): string | null {
	if (!email) return 'Enter an e-mail address.';
	if (email.length > 254 || !EMAIL_RE.test(email)) return 'Enter an e-mail address such as name@example.org.';
	return null;
}

export async function createUser(input: {
	email: string;
	name: string;
	password?: string | null;
	isAdmin?: boolean;
}): Promise<User> {
	return User.create({
		id: newId(),
		email: normaliseEmail(input.email),
		name: input.name.trim(),
		password_hash: input.password ? await hashPassword(input.password) : null,
		is_admin: input.isAdmin ?? false,
		active: true
	});
}

/** Deactivation ends every session of the user at once. */
export async function setActive(userId: string, active: boolean): Promise<void> {
	await User.update({ active }, { where: { id: userId } });
	if (!active) await lucia.invalidateUserSessions(userId);
}

const INVITE_TTL_MS = 7 * 24 * 3600_000;

function tokenHash(token: string): string {
	return encodeHexLowerCase(sha256(new TextEncoder().encode(token)));
}

/** Returns the raw token (shown once, put in the link); only its hash is stored. */
export async function createInvitation(userId: string): Promise<string> {
	const token = newId(20);
	await Invitation.create({
		token_hash: tokenHash(token),
		user_id: userId,
		expires_at: Date.now() + INVITE_TTL_MS,
		used_at: null
	});
	return token;
}

export async function findOpenInvitation(token: string): Promise<Invitation | null> {
	if (!/^[a-z2-7]{20,64}$/.test(token)) return null;
	const inv = await Invitation.findByPk(tokenHash(token));
	if (!inv || inv.used_at || Number(inv.expires_at) < Date.now()) return null;
	return inv;
}

/**
 * Set the password through an open invitation: the link is used up, every other open invitation
 * of the person stops working, and every existing session of the person ends (whoever held an
 * older link or session no longer gets in). Returns false when the link was used meanwhile.
 */
export async function acceptInvitation(inv: Invitation, passwordHash: string): Promise<boolean> {
	const now = Date.now();
	const accepted = await sequelize.transaction(async (transaction) => {
		const [used] = await Invitation.update({ used_at: now }, { where: { token_hash: inv.token_hash, used_at: null }, transaction });
		if (used === 0) return false;
		await User.update({ password_hash: passwordHash }, { where: { id: inv.user_id }, transaction });
		await Invitation.update({ used_at: now }, { where: { user_id: inv.user_id, used_at: null, token_hash: { [Op.ne]: inv.token_hash } }, transaction });
		return true;
	});
	if (accepted) await lucia.invalidateUserSessions(inv.user_id);
	return accepted;
}
