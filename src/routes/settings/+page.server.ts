/**
 * Per-user notification settings: the sweep digest per program (memberships.digest_subscribed)
 * and how strategy review notifications arrive (immediately, daily summary, off, or the default).
 */
import { fail, redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { requireUser } from '$lib/server/auth/guard';
import { readForm } from '$lib/server/read-form';
import { doneMessage, redirectDone } from '$lib/server/after-post';
import { ROLE_LABELS } from '$lib/server/auth/roles';
import { sequelize } from '$lib/server/db/index';
import { Membership, NotificationSetting, Program, STRATEGY_MODES, type StrategyMode } from '$lib/server/db/models/index';
import { MODE_LABEL } from '$lib/server/mail/strategy-notifications';

export const load: PageServerLoad = async ({ locals, url }) => {
	if (!locals.user) redirect(303, `/login?next=${encodeURIComponent(url.pathname)}`);
	const user = requireUser(locals);
	const memberships = await Membership.findAll({ where: { user_id: user.id } });
	const programs = new Map((await Program.findAll({ where: { id: memberships.map((m) => m.program_id) } })).map((p) => [p.id, p.name]));
	const setting = await NotificationSetting.findByPk(user.id);
	return {
		done: doneMessage(url, { saved: 'Notification settings saved.' }),
		email: user.email,
		programs: memberships
			.map((m) => ({ id: m.program_id, name: programs.get(m.program_id) ?? `Program ${m.program_id}`, role: ROLE_LABELS[m.role] ?? m.role, roleKey: m.role, digest: Boolean(m.digest_subscribed) }))
			.sort((a, b) => a.name.localeCompare(b.name)),
		strategyMode: (setting?.strategy_mode ?? 'default') as StrategyMode | 'default',
		modes: STRATEGY_MODES.map((value) => ({ value, label: MODE_LABEL[value] }))
	};
};

export const actions: Actions = {
	default: async ({ locals, request, url }) => {
		const user = requireUser(locals);
		const form = await readForm(request);
		const mode = String(form.get('strategyMode') ?? '');
		if (mode !== 'default' && !(STRATEGY_MODES as readonly string[]).includes(mode))
			return fail(400, { field: 'strategyMode', message: 'Choose how strategy notifications arrive: default, immediately, daily summary or off.' });
		const memberships = await Membership.findAll({ where: { user_id: user.id } });
		const wanted = new Set(form.getAll('digest').map(String));
		const known = new Set(memberships.map((m) => String(m.program_id)));
		const stranger = [...wanted].find((id) => !known.has(id));
		// Only the caller's own memberships can change; another program's id gets no hint it exists.
		if (stranger) return fail(400, { field: 'digest', message: 'You can subscribe only to digests of programs you are a member of; reload the page.' });
		await sequelize.transaction(async (transaction) => {
			for (const m of memberships) {
				const on = wanted.has(String(m.program_id));
				if (Boolean(m.digest_subscribed) !== on) await m.update({ digest_subscribed: on }, { transaction });
			}
			if (mode === 'default') await NotificationSetting.destroy({ where: { user_id: user.id }, transaction });
			else await NotificationSetting.upsert({ user_id: user.id, strategy_mode: mode }, { transaction });
		});
		redirectDone(url, 'saved');
	}
};
