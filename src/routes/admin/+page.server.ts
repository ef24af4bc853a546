import { fail } from '@sveltejs/kit';
import { readForm } from '$lib/server/read-form';
import { redirectWithFlash, takeFlash } from '$lib/server/after-post';
import type { Actions, PageServerLoad } from './$types';
import { Membership, Program, User } from '$lib/server/db/models/index';
import { requireAdmin } from '$lib/server/auth/guard';
import { createInvitation, createUser, emailProblem, newId, normaliseEmail, setActive } from '$lib/server/auth/users';
import { sendInvitationMail } from '$lib/server/mail/invitation';

/** Queue the invitation e-mail; the link stays on the page either way. */
async function mailInvitation(userId: string, email: string, link: string, invitedBy: string): Promise<string> {
	try {
		await sendInvitationMail(userId, link, invitedBy);
		return `An invitation e-mail to ${email} is queued (see Outbox); the link below works too.`;
	} catch (e) {
		console.error('[paretherm mail] could not queue an invitation', (e as Error).message);
		return `The invitation e-mail to ${email} could not be queued; send the link below yourself.`;
	}
}

export const load: PageServerLoad = async ({ locals, cookies, url }) => {
	requireAdmin(locals);
	const flash = takeFlash(cookies, url);
	const users = await User.findAll({ order: [['name', 'ASC']] });
	const memberships = await Membership.findAll();
	const programs = await Program.findAll();
	const programName = new Map(programs.map((p) => [p.id, p.name]));
	return {
		flash,
		people: users.map((u) => ({
			id: u.id,
			name: u.name,
			email: u.email,
			isAdmin: Boolean(u.is_admin),
			active: Boolean(u.active),
			hasPassword: Boolean(u.password_hash),
			memberships: memberships
				.filter((m) => m.user_id === u.id)
				.map((m) => ({ program: programName.get(m.program_id) ?? '?', role: m.role }))
		}))
	};
};

export const actions: Actions = {
	create: async ({ locals, request, url, cookies }) => {
		const admin = requireAdmin(locals);
		const form = await readForm(request);
		const name = String(form.get('name') ?? '').trim();
		const email = normaliseEmail(String(form.get('email') ?? ''));
		const isAdmin = form.get('isAdmin') === 'on';
		const mode = form.get('mode') === 'password' ? 'password' : 'invite';
		const values = { name, email, isAdmin, mode };
		if (!name || name.length > 120)
			return fail(400, { action: 'create', field: 'name', message: 'Enter a name of 1–120 characters.', values });
		const emailError = emailProblem(email);
		if (emailError) return fail(400, { action: 'create', field: 'email', message: emailError, values });
		if (await User.findOne({ where: { email } }))
			return fail(400, { action: 'create', field: 'email', message: `${email} already has an account.`, values });

		if (mode === 'password') {
			// A one-time password shown once; the person changes it via an invitation later if wanted.
			const password = newId(10);
			await createUser({ name, email, password, isAdmin });
			redirectWithFlash(cookies, url, { created: { email, password, link: null } });
		}
		const user = await createUser({ name, email, isAdmin });
		const token = await createInvitation(user.id);
		const link = `${url.origin}/invite/${token}`;
		const done = await mailInvitation(user.id, email, link, admin.name);
		redirectWithFlash(cookies, url, { done, created: { email, password: null, link } });
	},
	setActive: async ({ locals, request, url, cookies }) => {
		const admin = requireAdmin(locals);
		const form = await readForm(request);
		const userId = String(form.get('userId') ?? '');
		const active = form.get('active') === 'true';
		const user = await User.findByPk(userId);
		if (!user) return fail(404, { action: 'setActive', message: 'That person no longer exists; reload the page.' });
		if (user.id === admin.id && !active)
			return fail(400, { action: 'setActive', message: 'You cannot deactivate your own account.' });
		await setActive(user.id, active);
		redirectWithFlash(cookies, url, { done: `${user.name} is now ${active ? 'active' : 'deactivated; their sessions have ended'}.` });
	},
	invite: async ({ locals, request, url, cookies }) => {
		const admin = requireAdmin(locals);
		const form = await readForm(request);
		const user = await User.findByPk(String(form.get('userId') ?? ''));
		if (!user) return fail(404, { action: 'invite', message: 'That person no longer exists; reload the page.' });
		const token = await createInvitation(user.id);
		const link = `${url.origin}/invite/${token}`;
		const done = await mailInvitation(user.id, user.email, link, admin.name);
		redirectWithFlash(cookies, url, { done, created: { email: user.email, password: null, link } });
	}
};
