import { hash, verify } from '@node-rs/bcrypt';
import { config } from '../config';

/** bcrypt reads only the first 72 bytes; longer input is refused rather than silently truncated. */
export const PASSWORD_MAX_BYTES = 72;
export const PASSWORD_MIN_LENGTH = 10;
const COST = config().bcryptCost;

/** Returns an error message a user can act on, or null when the password is acceptable. */
export function passwordProblem(password: string): string | null {
	if (password.length < PASSWORD_MIN_LENGTH)
		return `Choose a password of at least ${PASSWORD_MIN_LENGTH} characters.`;
	if (Buffer.byteLength(password, 'utf8') > PASSWORD_MAX_BYTES)
		return `Choose a password of at most ${PASSWORD_MAX_BYTES} bytes (about ${PASSWORD_MAX_BYTES} plain characters).`;
	return null;
}

export function hashPassword(password: string): Promise<string> {
	return hash(password, COST);
}

export async function verifyPassword(password: string, passwordHash: string | null): Promise<boolean> {
	if (!passwordHash || Buffer.byteLength(password, 'utf8') > PASSWORD_MAX_BYTES) return false;
	return verify(password, passwordHash);
}

let dummy: Promise<string> | null = null;
/** A hash of a random string, verified against for unknown accounts so timing reveals nothing. */
export function dummyHash(): Promise<string> {
	dummy ??= hash(crypto.randomUUID(), COST);
	return dummy;
}
