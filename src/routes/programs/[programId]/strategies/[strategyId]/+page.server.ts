import { error, fail } from '@sveltejs/kit';
import { readForm } from '$lib/server/read-form';
import type { Actions, PageServerLoad } from './$types';
import { parseId, requireProgramRole } from '$lib/server/auth/guard';
import { roleCan } from '$lib/server/auth/roles';
import { Strategy, User, STRATEGY_STATES, type StrategyState } from '$lib/server/db/models/index';
import { doneMessage, redirectDone } from '$lib/server/after-post';
import { addComment, assertMoveAllowed, changeState, cleanText, MAX_COMMENT_CHARS, movesFor, STATE_LABEL, StrategyError, thread } from '$lib/server/strategies';

async function strategyOf(programId: number, raw: string) {
	const s = await Strategy.findOne({ where: { id: parseId(raw, 'strategy'), program_id: programId } });
	if (!s) error(404, 'No such strategy in this program.');
	return s;
}

/** Messages after a successful post (post/redirect/get), by `?done=` code. */
const DONE: Record<string, string> = {
	commented: 'Comment posted.',
	...Object.fromEntries(Object.entries(STATE_LABEL).map(([state, label]) => [`moved-${state}`, `Strategy is now ${label.toLowerCase()}.`]))
};

export const load: PageServerLoad = async ({ locals, params, url }) => {
	const { program, user } = await requireProgramRole(locals, params.programId, 'read');
	const s = await strategyOf(program.id, params.strategyId);
	const proposer = await User.findByPk(s.created_by);
	return {
		strategy: {
			id: s.id,
			title: s.title,
			rationale: s.rationale,
			state: s.state,
			sweepId: s.sweep_id,
			pointId: s.point_id,
			figures: JSON.parse(s.figures),
			proposer: proposer?.name ?? '?',
			createdAt: s.created_at.toISOString()
		},
		stateLabel: STATE_LABEL,
		moves: movesFor(s, user.id).map((t) => ({ to: t.to, verb: t.verb, need: t.need })),
		thread: await thread(s.id),
		maxComment: MAX_COMMENT_CHARS,
		done: doneMessage(url, DONE)
	};
};

function capabilities(role: string) {
	return role === 'admin'
		? { edit: true, decide: true, comment: true }
		: { edit: roleCan(role as never, 'edit'), decide: roleCan(role as never, 'decide'), comment: roleCan(role as never, 'comment') };
}

export const actions: Actions = {
	comment: async ({ locals, params, request, url }) => {
		const { program, user } = await requireProgramRole(locals, params.programId, 'comment');
		const s = await strategyOf(program.id, params.strategyId);
		const form = await readForm(request);
		try {
			const body = cleanText(form.get('body'), 'comment', MAX_COMMENT_CHARS);
			await addComment(s, user.id, body);
		} catch (e) {
			if (e instanceof StrategyError) return fail(e.status, { field: e.field, message: e.message, body: String(form.get('body') ?? '').slice(0, MAX_COMMENT_CHARS) });
			throw e;
		}
		redirectDone(url, 'commented');
	},
	move: async ({ locals, params, request, url }) => {
		const { program, user, role } = await requireProgramRole(locals, params.programId, 'read');
		const s = await strategyOf(program.id, params.strategyId);
		const form = await readForm(request);
		const to = String(form.get('to') ?? '');
		if (!(STRATEGY_STATES as readonly string[]).includes(to)) return fail(400, { field: 'to', message: `Unknown state “${to.slice(0, 30)}”.` });
		try {
			assertMoveAllowed(s, to as StrategyState, capabilities(role), user.id);
			const note = cleanText(form.get('note'), 'note', MAX_COMMENT_CHARS, false);
			await changeState(s, to as StrategyState, user.id, note, capabilities(role));
		} catch (e) {
			if (e instanceof StrategyError) return fail(e.status, { field: e.field, message: e.message });
			throw e;
		}
		redirectDone(url, `moved-${to}`);
	}
};
