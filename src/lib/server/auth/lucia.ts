import { Lucia, TimeSpan } from 'lucia';
import { SequelizeAdapter } from './adapter';
import { config } from '../config';

/**
 * Session cookies are Secure whenever the app is served over HTTPS (ORIGIN https://…), and in any
 * production run without an ORIGIN. A plain-HTTP ORIGIN (the local demo on http://localhost) gets
 * no Secure flag, because clients other than browsers would then drop the cookie.
 */
const { origin, production } = config();
const secureCookie = origin ? origin.startsWith('https:') : production;

export const lucia = new Lucia(new SequelizeAdapter(), {
	sessionExpiresIn: new TimeSpan(7, 'd'),
	sessionCookie: {
		name: 'paretherm_session',
		attributes: { secure: secureCookie, sameSite: 'lax' }
	},
	getUserAttributes(attributes) {
		return { email: attributes.email, name: attributes.name, isAdmin: attributes.is_admin };
	}
});

declare module 'lucia' {
	interface Register {
		Lucia: typeof lucia;
		DatabaseUserAttributes: { email: string; name: string; is_admin: boolean };
	}
}

export type AuthUser = { id: string; email: string; name: string; isAdmin: boolean };
