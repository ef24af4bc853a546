import type { AuthUser } from '$lib/server/auth/lucia';
import type { Session } from 'lucia';

declare global {
	namespace App {
		interface Locals {
			user: AuthUser | null;
			session: Session | null;
		}
		interface Error {
			message: string;
		}
	}
}

export {};
