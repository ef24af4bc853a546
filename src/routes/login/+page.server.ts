import { fail, redirect } from '@sveltejs/kit';
import { readForm } from '$lib/server/read-form';
import type { Actions, PageServerLoad } from './$types';
import { User } from '$lib/server/db/models/index';
import { lucia } from '$lib/server/auth/lucia';
import { dummyHash, verifyPassword, PASSWORD_MAX_BYTES } from '$lib/server/auth/password';
import { signInThrottle, throttleKey } from '$lib/server/auth/throttle';
import { normaliseEmail } from '$lib/server/auth/users';

export const load: PageServerLoad = async ({ locals }) => {
	if (locals.user) redirect(303, '/');
	return {};
};

/** "Try again in 8 seconds (after 09:41:07 UTC)." */
function retryMessage(wait_ms: number, now = Date.now()): string {
	const until = now + wait_ms;
	const seconds = Math.max(1, Math.ceil(wait_ms / 1000));
	const amount = seconds < 120 ? `${seconds} second${seconds === 1 ? '' : 's'}` : `${Math.ceil(seconds / 60)} minutes`;
	const at = new Date(until).toISOString().slice(11, 19);
	return `Too many failed sign-ins to this account from your address. Try again in ${amount} (after ${at} UTC).`;
}

export const actions: Actions = {
	default: async ({ request, cookies, getClientAddress, url }) => {
		const form = await readForm(request);
		const emailRaw = form.get('email');
		const password = form.get('password');
		const email = typeof emailRaw === 'string' ? normaliseEmail(emailRaw).slice(0, 254) : '';
		const values = { email };
		if (!email) return fail(400, { message: 'Enter your e-mail address.', field: 'email', values });
		if (typeof password !== 'string' || password.length === 0)
			return fail(400, { message: 'Enter your password.', field: 'password', values });

		// Keyed on account and address: guessing slows the guesser, not the owner elsewhere or others nearby.
		const throttle = signInThrottle();
		const key = throttleKey(email, getClientAddress());
		const wait = await throttle.waitMs(key);
		if (wait > 0) return fail(429, { message: retryMessage(wait), field: null, values, retryAt: Date.now() + wait });

		if (password.length > 4 * PASSWORD_MAX_BYTES) {
			await throttle.recordFailure(key);
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
			const imposed = await throttle.recordFailure(key);
			if (imposed > 0) return fail(429, { message: retryMessage(imposed), field: null, values, retryAt: Date.now() + imposed });
			return fail(400, { message: 'E-mail or password is not right.', field: null, values });
		}
		if (!user.active)
			return fail(403, { message: 'This account is deactivated. Ask an administrator to reactivate it.', field: null, values });

		await throttle.recordSuccess(key);
		const session = await lucia.createSession(user.id, {});
		const cookie = lucia.createSessionCookie(session.id);
		cookies.set(cookie.name, cookie.value, { path: '.', ...cookie.attributes });
		const next = url.searchParams.get('next');
		redirect(303, next && /^\/(?!\/)[\w\-/?=&.%]*$/.test(next) ? next : '/');
	}
};
