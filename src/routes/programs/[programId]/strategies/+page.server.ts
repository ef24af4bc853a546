import type { PageServerLoad } from './$types';
import { requireProgramRole } from '$lib/server/auth/guard';
import { Strategy, User } from '$lib/server/db/models/index';
import { STATE_LABEL } from '$lib/server/strategies';

export const load: PageServerLoad = async ({ locals, params, url }) => {
	const { program } = await requireProgramRole(locals, params.programId, 'read');
	const state = url.searchParams.get('state');
	const rows = await Strategy.findAll({
		where: { program_id: program.id, ...(state && state in STATE_LABEL ? { state } : {}) },
		order: [['updated_at', 'DESC']]
	});
	const users = await User.findAll({ where: { id: [...new Set(rows.map((r) => r.created_by))] } });
	const name = new Map(users.map((u) => [u.id, u.name]));
	return {
		filter: state,
		stateLabel: STATE_LABEL,
		strategies: rows.map((r) => ({
			id: r.id,
			title: r.title,
			state: r.state,
			sweepId: r.sweep_id,
			figures: JSON.parse(r.figures),
			proposer: name.get(r.created_by) ?? '?',
			updatedAt: r.updated_at.toISOString()
		}))
	};
};
