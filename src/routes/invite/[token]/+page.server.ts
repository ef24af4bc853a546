import { error, fail, redirect } from '@sveltejs/kit';
import { readForm } from '$lib/server/read-form';
import type { Actions, PageServerLoad } from './$types';
import { User } from '$lib/server/db/models/index';
import { acceptInvitation, findOpenInvitation } from '$lib/server/auth/users';
import { hashPassword, passwordProblem } from '$lib/server/auth/password';
import { lucia } from '$lib/server/auth/lucia';

export const load: PageServerLoad = async ({ params }) => {
	const inv = await findOpenInvitation(params.token);
	if (!inv) error(404, 'This invitation link is unknown, used or expired. Ask an administrator for a new one.');
	const user = await User.findByPk(inv.user_id);
	return { email: user?.email ?? '', name: user?.name ?? '' };
};

export const actions: Actions = {
	default: async ({ params, request, cookies }) => {
		const inv = await findOpenInvitation(params.token);
		if (!inv) return fail(404, { message: 'This invitation link is unknown, used or expired.' });
		const form = await readForm(request);
		const rawPassword = form.get('password');
		const rawConfirm = form.get('confirm');
		// A file part would otherwise become the password "[object File]".
		if ((rawPassword !== null && typeof rawPassword !== 'string') || (rawConfirm !== null && typeof rawConfirm !== 'string'))
			return fail(400, { message: 'Type the password into the form; files are not accepted here.' });
		const password = rawPassword ?? '';
		const confirm = rawConfirm ?? '';
		const problem = passwordProblem(password);
		if (problem) return fail(400, { message: problem });
		if (password !== confirm) return fail(400, { message: 'The two passwords differ; type the same one twice.' });
		const passwordHash = await hashPassword(password);
		if (!(await acceptInvitation(inv, passwordHash))) return fail(404, { message: 'This invitation link is unknown, used or expired.' });
		const session = await lucia.createSession(inv.user_id, {});
		const cookie = lucia.createSessionCookie(session.id);
		cookies.set(cookie.name, cookie.value, { path: '.', ...cookie.attributes });
		redirect(303, '/');
	}
};
