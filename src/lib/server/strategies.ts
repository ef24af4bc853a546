/**
 * Strategy review. A thermal engineer promotes a sweep point to a strategy (proposed); a pack
 * architect or a program manager endorses or declines it; endorsing a strategy supersedes the earlier endorsed one
 * for the same scenario of the same program; the proposer may withdraw a proposal. Every change
 * and every comment is an event in the strategy's thread.
 */
import { Op } from 'sequelize';
import { sequelize } from './db/index';
import { Strategy, StrategyEvent, User, type StrategyState } from './db/models/index';
import { notifyStrategyActivity } from './mail/strategy-notifications';

export const STATE_LABEL: Record<StrategyState, string> = {
	proposed: 'Proposed',
	endorsed: 'Endorsed',
	declined: 'Declined',
	superseded: 'Superseded',
	withdrawn: 'Withdrawn'
};

/** Allowed moves and who may make them ('decide' = pack architect or program manager, 'edit' = thermal engineer). */
export const TRANSITIONS: { from: StrategyState; to: StrategyState; need: 'decide' | 'edit'; verb: string }[] = [
	{ from: 'proposed', to: 'endorsed', need: 'decide', verb: 'Endorse' },
	{ from: 'proposed', to: 'declined', need: 'decide', verb: 'Decline' },
	{ from: 'declined', to: 'proposed', need: 'edit', verb: 'Propose again' },
	{ from: 'proposed', to: 'withdrawn', need: 'edit', verb: 'Withdraw' },
	{ from: 'endorsed', to: 'proposed', need: 'decide', verb: 'Reopen' }
];

export class StrategyError extends Error {
	constructor(
		message: string,
		public status = 400,
		public field: string | null = null
	) {
		super(message);
	}
}

export const MAX_COMMENT_CHARS = 4000;

export function cleanText(raw: unknown, what: string, max: number, required = true): string {
	const text = typeof raw === 'string' ? raw.replace(/\r\n/g, '\n').trim() : '';
	if (required && !text) throw new StrategyError(`Write a ${what}.`, 400, what);
	if (text.length > max) throw new StrategyError(`Keep the ${what} under ${max} characters (it has ${text.length}).`, 400, what);
	// Control characters other than newline and tab have no place in review text.
	if (/[\u0000-\u0008\u000b\u000c\u000e-\u001f\u007f]/.test(text))
		throw new StrategyError(`The ${what} contains control characters; paste it as plain text.`, 400, what);
	return text;
}

/**
 * Throws StrategyError (409 impossible move, 403 not this role's move, or a withdrawal by someone
 * other than the proposer); checked before anything else.
 */
export function assertMoveAllowed(strategy: Strategy, to: StrategyState, can: { edit: boolean; decide: boolean }, actorId: string) {
	const move = TRANSITIONS.find((t) => t.from === strategy.state && t.to === to);
	if (!move)
		throw new StrategyError(`A ${STATE_LABEL[strategy.state].toLowerCase()} strategy cannot become ${STATE_LABEL[to].toLowerCase()}.`, 409, 'state');
	if (!can[move.need])
		throw new StrategyError(
			move.need === 'decide' ? 'Only pack architects and program managers may endorse, decline or reopen strategies.' : 'Only thermal engineers may propose or withdraw strategies.',
			403,
			'state'
		);
	if (to === 'withdrawn' && strategy.created_by !== actorId)
		throw new StrategyError('Only the engineer who proposed this strategy may withdraw it; comment or ask a pack architect to decline it instead.', 403, 'state');
}

/** The moves `actorId` may offer on the strategy page (withdrawal only to its proposer). */
export function movesFor(strategy: Strategy, actorId: string) {
	return TRANSITIONS.filter((t) => t.from === strategy.state && (t.to !== 'withdrawn' || strategy.created_by === actorId));
}

export async function changeState(strategy: Strategy, to: StrategyState, userId: string, note: string, can: { edit: boolean; decide: boolean }) {
	assertMoveAllowed(strategy, to, can, userId);
	await sequelize.transaction(async (transaction) => {
		const from = strategy.state;
		if (to === 'endorsed') {
			const older = await Strategy.findAll({
				where: { program_id: strategy.program_id, scenario_key: strategy.scenario_key, state: 'endorsed', id: { [Op.ne]: strategy.id } },
				transaction
			});
			for (const o of older) {
				await o.update({ state: 'superseded' }, { transaction });
				await StrategyEvent.create(
					{ strategy_id: o.id, user_id: userId, kind: 'state', from_state: 'endorsed', to_state: 'superseded', body: `Superseded by strategy #${strategy.id}.` },
					{ transaction }
				);
			}
		}
		await strategy.update({ state: to }, { transaction });
		await StrategyEvent.create({ strategy_id: strategy.id, user_id: userId, kind: 'state', from_state: from, to_state: to, body: note }, { transaction });
	});
	void notifyStrategyActivity(); // mail, off the request's outcome: never throws, catches up on its own
}

export async function addComment(strategy: Strategy, userId: string, body: string) {
	const event = await StrategyEvent.create({ strategy_id: strategy.id, user_id: userId, kind: 'comment', from_state: null, to_state: null, body });
	void notifyStrategyActivity(); // mail, off the request's outcome: never throws, catches up on its own
	return event;
}

export async function thread(strategyId: number) {
	const events = await StrategyEvent.findAll({ where: { strategy_id: strategyId }, order: [['created_at', 'ASC'], ['id', 'ASC']] });
	const users = await User.findAll({ where: { id: [...new Set(events.map((e) => e.user_id).filter(Boolean))] as string[] } });
	const name = new Map(users.map((u) => [u.id, u.name]));
	return events.map((e) => ({
		id: e.id,
		kind: e.kind,
		author: e.user_id ? name.get(e.user_id) ?? 'Former member' : 'Paretherm',
		from: e.from_state,
		to: e.to_state,
		body: e.body,
		at: e.created_at.toISOString()
	}));
}

/** Latest activity across a program's strategies, newest first (dashboard). */
export async function recentActivity(programId: number, limit = 8) {
	const rows = await sequelize.query(
		`SELECT e.id, e.kind, e.to_state AS toState, e.body, e.created_at AS at, s.id AS strategyId, s.title, u.name AS author
		 FROM strategy_events e JOIN strategies s ON s.id = e.strategy_id LEFT JOIN users u ON u.id = e.user_id
		 WHERE s.program_id = ? ORDER BY e.created_at DESC, e.id DESC LIMIT ?`,
		{ replacements: [programId, limit], type: 'SELECT' as never }
	);
	return rows as unknown as { id: number; kind: string; toState: string | null; body: string; at: string; strategyId: number; title: string; author: string | null }[];
}
