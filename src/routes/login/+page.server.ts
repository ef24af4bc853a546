import { fail, redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { User } from '$lib/server/db/models/index';
import { lucia } from '$lib/server/auth/lucia';
import { dummyHash, verifyPassword, PASSWORD_MAX_BYTES } from '$lib/server/auth/password';
import { lockedUntil, recordFailure, recordSuccess } from '$lib/server/auth/throttle';
import { normaliseEmail } from '$lib/server/auth/users';

export const load: PageServerLoad = async ({ locals }) => {
	if (locals.user) redirect(303, '/');
	return {};
};

function retryMessage(until: number): string {
	const minutes = Math.max(1, Math.ceil((until - Date.now()) / 60_000));
	const at = new Date(until).toISOString().slice(11, 16);
	return `Too many failed sign-ins. Try again in ${minutes} minute${minutes === 1 ? '' : 's'} (after ${at} UTC).`;
}

export const actions: Actions = {
	default: async ({ request, cookies, getClientAddress, url }) => {
		const form = await request.formData();
		const emailRaw = form.get('email');
		const password = form.get('password');
		const email = typeof emailRaw === 'string' ? normaliseEmail(emailRaw).slice(0, 254) : '';
		const values = { email };
		if (!email) return fail(400, { message: 'Enter your e-mail address.', field: 'email', values });
		if (typeof password !== 'string' || password.length === 0)
			return fail(400, { message: 'Enter your password.', field: 'password', values });

		const accountKey = `account:${email}`;
		const addressKey = `address:${getClientAddress()}`;
		const locked = lockedUntil([accountKey, addressKey]);
		if (locked) return fail(429, { message: retryMessage(locked), field: null, values, retryAt: locked });

		if (password.length > 4 * PASSWORD_MAX_BYTES) {
			recordFailure(accountKey, addressKey);
			return fail(400, {
				message: `Passwords are at most ${PASSWORD_MAX_BYTES} bytes; check what you pasted.`,
				field: 'password',
				values
			});
		}

		const user = await User.findOne({ where: { email } });
		// Verify even for unknown accounts so response time does not reveal which e-mails exist.
		const ok = await verifyPassword(password, user?.password_hash ?? (await dummyHash()));
		if (!user || !ok) {
			recordFailure(accountKey, addressKey);
			const now = lockedUntil([accountKey, addressKey]);
			if (now) return fail(429, { message: retryMessage(now), field: null, values, retryAt: now });
			return fail(400, { message: 'E-mail or password is not right.', field: null, values });
		}
		if (!user.active)
			return fail(403, { message: 'This account is deactivated. Ask an administrator to reactivate it.', field: null, values });

		recordSuccess(accountKey);
		const session = await lucia.createSession(user.id, {});
		const cookie = lucia.createSessionCookie(session.id);
		cookies.set(cookie.name, cookie.value, { path: '.', ...cookie.attributes });
		const next = url.searchParams.get('next');
		redirect(303, next && /^\/(?!\/)[\w\-/?=&.%]*$/.test(next) ? next : '/');
	}
};
