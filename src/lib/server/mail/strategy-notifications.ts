/**
 * Strategy review notifications. Every state change and comment is a row in `strategy_events`
 * (written in the same transaction as the change), so this module reads the events after a
 * cursor instead of trusting a call to arrive: `processStrategyEvents` is called right after a
 * change (strategies.ts) and on every dispatcher tick, and turns each new event into
 * - an immediate message, or
 * - a line in the recipient's daily summary (`runDailySummaries`), or
 * - nothing, per the recipient's setting.
 * Default setting: immediately for the strategy's proposer and for pack architects of the
 * program, daily summary for everyone else. The author of an event is never notified of it.
 */
import { Op } from 'sequelize';
import { MailMark, MailOutbox, Membership, NotificationItem, NotificationSetting, Program, Strategy, StrategyEvent, User, type StrategyMode, type StrategyState } from '../db/models/index';
import type { ProgramRole } from '../auth/roles';
import { mailConfig } from './config';
import { enqueue, log, mailWrite, type NewMessage } from './outbox';
import { S, esc, fmt, frame } from './render';

export const MODE_LABEL: Record<StrategyMode, string> = {
	immediately: 'Immediately, one message per change or comment',
	daily: 'Daily summary',
	off: 'Off'
};

const STATE_WORD: Record<StrategyState, string> = {
	proposed: 'proposed',
	endorsed: 'endorsed',
	declined: 'declined',
	superseded: 'superseded',
	withdrawn: 'withdrawn'
};

export function defaultStrategyMode(userId: string, role: ProgramRole, strategy: Pick<Strategy, 'created_by'>): StrategyMode {
	return userId === strategy.created_by || role === 'architect' ? 'immediately' : 'daily';
}

const CURSOR = 'strategy-events-cursor';

function eventLine(e: StrategyEvent, s: Strategy, actor: string): string {
	const title = `strategy #${s.id} “${s.title}”`;
	if (e.kind === 'comment') return `${actor} commented on ${title}`;
	if (e.from_state === null && e.to_state === 'proposed') return `${actor} proposed ${title}`;
	if (e.to_state === 'superseded') return `${title} was superseded (${e.body || 'another strategy was endorsed for the same scenario'})`;
	if (e.from_state === 'declined' && e.to_state === 'proposed') return `${actor} proposed ${title} again`;
	if (e.from_state === 'endorsed' && e.to_state === 'proposed') return `${actor} reopened ${title}`;
	return `${actor} ${e.to_state ? STATE_WORD[e.to_state] : 'changed'} ${title}`;
}

function clip(text: string, max = 600): string {
	return text.length > max ? `${text.slice(0, max - 1)}…` : text;
}

function figuresOf(s: Strategy): { label: string; value: string }[] {
	let f: Record<string, number | string | null | undefined> = {};
	try {
		f = JSON.parse(s.figures);
	} catch {
		return [];
	}
	const n = (k: string) => (typeof f[k] === 'number' ? (f[k] as number) : null);
	return [
		{ label: 'Scenario', value: String(f.scenarioLabel ?? s.scenario_key) },
		{ label: 'Lead time', value: `${fmt.min(n('leadTime_s'))} min` },
		{ label: 'Coolant set-point', value: `${fmt.degC(n('setpoint_K'))} °C` },
		{ label: 'Time saved', value: `${fmt.min(n('timeSaved_s'))} min` },
		{ label: 'Energy spent', value: `${fmt.kWh(n('energy_Wh'))} kWh` }
	];
}

function renderImmediate(e: StrategyEvent, s: Strategy, programName: string, actor: string, recipient: string, why: string) {
	const origin = mailConfig().origin;
	const link = `${origin}/programs/${s.program_id}/strategies/${s.id}`;
	const line = eventLine(e, s, actor);
	const subject =
		e.kind === 'comment'
			? `[${programName}] New comment on strategy #${s.id} “${s.title}”`
			: `[${programName}] Strategy #${s.id} “${s.title}” ${e.to_state ? STATE_WORD[e.to_state] : 'changed'}`;
	const body = e.body ? clip(e.body, 4000) : '';
	const figures = figuresOf(s);
	const text = [
		`Hello ${recipient},`,
		'',
		`${line}.`,
		...(body ? ['', ...body.split('\n').map((l) => `> ${l}`)] : []),
		'',
		...figures.map((f) => `${f.label}: ${f.value}`),
		'',
		`Open the strategy: ${link}`
	].join('\n');
	const html = `<h1 style="${S.h1}">${esc(subject.replace(/^\[[^\]]*\] /, ''))}</h1>
<p style="${S.p}">Hello ${esc(recipient)},</p>
<p style="${S.p}">${esc(line)}.</p>
${body ? `<blockquote style="margin:0 0 12px;padding:6px 12px;border-left:3px solid #c9d1d9;white-space:pre-wrap">${esc(body)}</blockquote>` : ''}
<table role="presentation" width="100%" style="${S.table};width:100%">${figures.map((f) => `<tr><td style="${S.pairLabel}">${esc(f.label)}</td><td style="${S.pairValue}">${esc(f.value)}</td></tr>`).join('')}</table>
<p style="${S.p}"><a style="${S.button}" href="${esc(link)}">Open the strategy</a></p>`;
	return frame({
		subject,
		htmlBody: html,
		textBody: text,
		footer: {
			text: `${why} Change this under Settings: ${origin}/settings`,
			html: `${esc(why)} <a href="${esc(origin)}/settings">Change this under Settings</a>.`
		}
	});
}

/**
 * Turn strategy events after the cursor into messages and summary items, in batches, and move
 * the cursor in the same transaction. Returns the number of events handled.
 */
export async function processStrategyEvents(batch = 100): Promise<number> {
	let handled = 0;
	for (;;) {
		const n = await mailWrite(async (transaction) => {
			const mark = await MailMark.findByPk(CURSOR, { transaction });
			const cursor = Number(mark?.value ?? 0);
			const events = await StrategyEvent.findAll({ where: { id: { [Op.gt]: cursor } }, order: [['id', 'ASC']], limit: batch, transaction });
			if (!events.length) return 0;
			const strategies = new Map((await Strategy.findAll({ where: { id: [...new Set(events.map((e) => e.strategy_id))] }, transaction })).map((s) => [s.id, s]));
			const programIds = [...new Set([...strategies.values()].map((s) => s.program_id))];
			const programs = new Map((await Program.findAll({ where: { id: programIds }, transaction })).map((p) => [p.id, p]));
			const members = await Membership.findAll({ where: { program_id: programIds }, transaction });
			const userIds = [...new Set([...members.map((m) => m.user_id), ...events.map((e) => e.user_id).filter((x): x is string => !!x)])];
			const users = new Map((await User.findAll({ where: { id: userIds }, transaction })).map((u) => [u.id, u]));
			const settings = new Map((await NotificationSetting.findAll({ where: { user_id: userIds }, transaction })).map((s) => [s.user_id, s.strategy_mode]));

			const messages: NewMessage[] = [];
			const items: { user_id: string; program_id: number; strategy_id: number; event_id: number; line: string }[] = [];
			for (const e of events) {
				const s = strategies.get(e.strategy_id);
				if (!s) continue;
				const programName = programs.get(s.program_id)?.name ?? `Program ${s.program_id}`;
				const actor = e.user_id ? users.get(e.user_id)?.name ?? 'A former member' : 'Paretherm';
				for (const m of members) {
					if (m.program_id !== s.program_id || m.user_id === e.user_id) continue;
					const u = users.get(m.user_id);
					if (!u || !u.active) continue;
					const explicit = settings.get(u.id);
					const mode = explicit ?? defaultStrategyMode(u.id, m.role, s);
					if (mode === 'off') continue;
					if (mode === 'daily') {
						const excerpt = e.body ? `: “${clip(e.body.replace(/\s+/g, ' '), 200)}”` : '';
						items.push({ user_id: u.id, program_id: s.program_id, strategy_id: s.id, event_id: e.id, line: `${eventLine(e, s, actor)}${excerpt}` });
						continue;
					}
					const why = explicit
						? 'You chose immediate strategy notifications.'
						: u.id === s.created_by
							? 'You get these immediately because you proposed this strategy.'
							: 'You get these immediately as a pack architect of this program.';
					messages.push({
						dedupeKey: `strategy-event:${e.id}:${u.id}`,
						kind: 'strategy-event',
						to: { address: u.email, name: u.name, userId: u.id },
						programId: s.program_id,
						rendered: renderImmediate(e, s, programName, actor, u.name, why)
					});
				}
			}
			await enqueue(messages, transaction);
			if (items.length) await NotificationItem.bulkCreate(items, { transaction, ignoreDuplicates: true });
			const last = events[events.length - 1].id;
			if (mark) await mark.update({ value: String(last) }, { transaction });
			else await MailMark.create({ key: CURSOR, value: String(last) }, { transaction });
			return events.length;
		});
		handled += n;
		if (n < batch) return handled;
	}
}

/** Called from strategies.ts after a change or comment. Never throws. */
export async function notifyStrategyActivity(): Promise<void> {
	try {
		await processStrategyEvents();
	} catch (e) {
		log(`strategy notifications are behind (${(e as Error).message}); the dispatcher will catch up`);
	}
}

// ---------------------------------------------------------------------------------------------
// Daily summary

const dayKey = (now: Date) => now.toISOString().slice(0, 10);

/** True when today's (UTC) summary hour has passed and today's summaries have not run yet. */
export async function dailySummaryDue(now = new Date()): Promise<boolean> {
	if (now.getUTCHours() < mailConfig().summaryHourUtc) return false;
	return !(await MailMark.findByPk(`daily-summary:${dayKey(now)}`));
}

/**
 * One message per user with summary items created up to `now`, titled by the UTC date of `now`.
 * Running it twice the same day sends nothing twice: the second run leaves newer items for the
 * next day. Items of users who have since turned notifications off are dropped.
 */
export async function runDailySummaries(now = new Date()): Promise<number> {
	const day = dayKey(now);
	const origin = mailConfig().origin;
	const items = await NotificationItem.findAll({ where: { summary_key: null, created_at: { [Op.lte]: now } }, order: [['program_id', 'ASC'], ['strategy_id', 'ASC'], ['event_id', 'ASC']] });
	const byUser = new Map<string, NotificationItem[]>();
	for (const it of items) byUser.set(it.user_id, [...(byUser.get(it.user_id) ?? []), it]);
	const users = new Map((await User.findAll({ where: { id: [...byUser.keys()] } })).map((u) => [u.id, u]));
	const settings = new Map((await NotificationSetting.findAll({ where: { user_id: [...byUser.keys()] } })).map((s) => [s.user_id, s.strategy_mode]));
	const programs = new Map((await Program.findAll({ where: { id: [...new Set(items.map((i) => i.program_id))] } })).map((p) => [p.id, p.name]));
	let sent = 0;
	for (const [userId, list] of byUser) {
		const u = users.get(userId);
		const key = `strategy-summary:${userId}:${day}`;
		const drop = !u || !u.active || settings.get(userId) === 'off';
		if (!drop && (await MailOutbox.count({ where: { dedupe_key: key } }))) continue; // already summarised today
		let message: NewMessage | null = null;
		if (!drop) {
			const groups = new Map<number, NotificationItem[]>();
			for (const it of list) groups.set(it.program_id, [...(groups.get(it.program_id) ?? []), it]);
			const single = groups.size === 1 ? programs.get([...groups.keys()][0]) : null;
			const subject = `${single ? `[${single}] ` : ''}Strategy review summary for ${day}: ${list.length} update${list.length === 1 ? '' : 's'}`;
			const textParts: string[] = [`Hello ${u!.name},`, '', `What happened in strategy review since your last summary:`];
			const htmlParts: string[] = [`<h1 style="${S.h1}">Strategy review, ${esc(day)}</h1>`, `<p style="${S.p}">Hello ${esc(u!.name)}, here is what happened in strategy review since your last summary.</p>`];
			for (const [pid, its] of groups) {
				const name = programs.get(pid) ?? `Program ${pid}`;
				textParts.push('', name);
				htmlParts.push(`<h2 style="${S.h2}">${esc(name)}</h2><ul>`);
				for (const it of its) {
					const link = `${origin}/programs/${pid}/strategies/${it.strategy_id}`;
					textParts.push(`  - ${it.line} (${link})`);
					htmlParts.push(`<li style="margin-bottom:4px">${esc(it.line)} — <a href="${esc(link)}">open</a></li>`);
				}
				htmlParts.push('</ul>');
			}
			message = {
				dedupeKey: key,
				kind: 'strategy-summary',
				to: { address: u!.email, name: u!.name, userId },
				programId: groups.size === 1 ? [...groups.keys()][0] : null,
				rendered: frame({
					subject,
					htmlBody: htmlParts.join('\n'),
					textBody: textParts.join('\n'),
					caution: false,
					footer: {
						text: `You get a daily summary of strategy review. Change this under Settings: ${origin}/settings`,
						html: `You get a daily summary of strategy review. <a href="${esc(origin)}/settings">Change this under Settings</a>.`
					}
				})
			};
		}
		await mailWrite(async (transaction) => {
			if (message) await enqueue([message], transaction);
			await NotificationItem.update({ summary_key: drop ? `dropped:${day}` : key }, { where: { id: list.map((i) => i.id), summary_key: null }, transaction });
		});
		if (message) sent++;
	}
	await mailWrite((transaction) => MailMark.upsert({ key: `daily-summary:${day}`, value: String(sent) }, { transaction }));
	if (sent) log(`daily strategy summaries for ${day}: ${sent} message${sent === 1 ? '' : 's'} queued`);
	return sent;
}
