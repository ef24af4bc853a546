import type { PageServerLoad } from './$types';
import { requireProgramRole } from '$lib/server/auth/guard';
import { ParameterSet, Strategy } from '$lib/server/db/models/index';
import { listSweeps } from '$lib/server/sweeps/results';
import { recentActivity, STATE_LABEL } from '$lib/server/strategies';

export const load: PageServerLoad = async ({ locals, params }) => {
	const { program } = await requireProgramRole(locals, params.programId, 'read');
	const sweeps = await listSweeps(program.id, 30);
	const strategies = await Strategy.findAll({ where: { program_id: program.id }, order: [['updated_at', 'DESC']], limit: 50 });
	const view = (s: Strategy) => ({ id: s.id, title: s.title, state: s.state, figures: JSON.parse(s.figures), updatedAt: s.updated_at.toISOString() });
	return {
		inputCount: await ParameterSet.count({ where: { program_id: program.id } }),
		activeSweeps: sweeps.filter((s) => ['queued', 'running', 'finalizing'].includes(s.status)),
		recentSweeps: sweeps.filter((s) => !['queued', 'running', 'finalizing'].includes(s.status)).slice(0, 8),
		awaiting: strategies.filter((s) => s.state === 'proposed').map(view),
		decided: strategies.filter((s) => s.state === 'endorsed' || s.state === 'declined').slice(0, 8).map(view),
		activity: await recentActivity(program.id, 8),
		stateLabel: STATE_LABEL
	};
};
