import { fail } from '@sveltejs/kit';
import { readForm } from '$lib/server/read-form';
import { redirectWithFlash, takeFlash } from '$lib/server/after-post';
import type { Actions, PageServerLoad } from './$types';
import { Membership, Program, User } from '$lib/server/db/models/index';
import { requireAdmin } from '$lib/server/auth/guard';
import { isProgramRole, PROGRAM_ROLES, ROLE_LABELS } from '$lib/server/auth/roles';
import { normaliseEmail } from '$lib/server/auth/users';

export const load: PageServerLoad = async ({ locals, cookies, url }) => {
	requireAdmin(locals);
	const flash = takeFlash(cookies, url);
	const programs = await Program.findAll({ order: [['name', 'ASC']] });
	const memberships = await Membership.findAll();
	const users = await User.findAll({ order: [['name', 'ASC']] });
	const byId = new Map(users.map((u) => [u.id, u]));
	return {
		flash,
		roles: PROGRAM_ROLES.map((r) => ({ value: r, label: ROLE_LABELS[r] })),
		people: users.filter((u) => u.active).map((u) => ({ email: u.email, name: u.name })),
		programs: programs.map((p) => ({
			id: p.id,
			name: p.name,
			description: p.description,
			members: memberships
				.filter((m) => m.program_id === p.id)
				.map((m) => ({
					userId: m.user_id,
					name: byId.get(m.user_id)?.name ?? '?',
					email: byId.get(m.user_id)?.email ?? '?',
					role: m.role,
					digest: Boolean(m.digest_subscribed)
				}))
		}))
	};
};

async function programFrom(form: FormData) {
	const raw = String(form.get('programId') ?? '');
	if (!/^[1-9][0-9]{0,9}$/.test(raw)) return null;
	return Program.findByPk(Number(raw));
}

export const actions: Actions = {
	createProgram: async ({ locals, request, url, cookies }) => {
		requireAdmin(locals);
		const form = await readForm(request);
		const name = String(form.get('name') ?? '').trim();
		const description = String(form.get('description') ?? '').trim();
		if (!name || name.length > 120)
			return fail(400, { action: 'createProgram', message: 'Give the program a name of 1–120 characters.' });
		if (description.length > 2000)
			return fail(400, { action: 'createProgram', message: 'Keep the description under 2000 characters.' });
		if (await Program.findOne({ where: { name } }))
			return fail(400, { action: 'createProgram', message: `A program called “${name}” already exists; choose another name.` });
		const p = await Program.create({ name, description });
		redirectWithFlash(cookies, url, { done: `Program “${p.name}” created.` });
	},
	addMember: async ({ locals, request, url, cookies }) => {
		requireAdmin(locals);
		const form = await readForm(request);
		const program = await programFrom(form);
		if (!program) return fail(404, { action: 'addMember', message: 'That program does not exist; reload the page.' });
		const email = normaliseEmail(String(form.get('email') ?? ''));
		const role = form.get('role');
		if (!isProgramRole(role))
			return fail(400, { action: 'addMember', message: `Choose a role: ${PROGRAM_ROLES.join(', ')}.` });
		const user = await User.findOne({ where: { email } });
		if (!user) return fail(400, { action: 'addMember', message: `No person with e-mail “${email.slice(0, 80)}”; add them under People first.` });
		const existing = await Membership.findOne({ where: { program_id: program.id, user_id: user.id } });
		if (existing) {
			await existing.update({ role });
			redirectWithFlash(cookies, url, { done: `${user.name} is now ${ROLE_LABELS[role].toLowerCase()} in ${program.name}.` });
		}
		await Membership.create({ program_id: program.id, user_id: user.id, role, digest_subscribed: role === 'manager' });
		redirectWithFlash(cookies, url, { done: `${user.name} added to ${program.name} as ${ROLE_LABELS[role].toLowerCase()}.` });
	},
	removeMember: async ({ locals, request, url, cookies }) => {
		requireAdmin(locals);
		const form = await readForm(request);
		const program = await programFrom(form);
		if (!program) return fail(404, { action: 'removeMember', message: 'That program does not exist; reload the page.' });
		const userId = String(form.get('userId') ?? '');
		const n = await Membership.destroy({ where: { program_id: program.id, user_id: userId } });
		if (!n) return fail(404, { action: 'removeMember', message: 'That person is not a member; reload the page.' });
		redirectWithFlash(cookies, url, { done: 'Member removed.' });
	}
};
