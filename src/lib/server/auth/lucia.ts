import { Lucia, TimeSpan } from 'lucia';
import { SequelizeAdapter } from './adapter';

/** Cookies are Secure in production; `PARETHERM_INSECURE_COOKIE=1` allows plain-HTTP demos on a LAN. */
const secureCookie =
	process.env.NODE_ENV === 'production' && process.env.PARETHERM_INSECURE_COOKIE !== '1';

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
