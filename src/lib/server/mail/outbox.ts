/**
 * The outbox: every message is first a row in `mail_outbox` (written in the same step as the
 * event's "handled" mark), then the dispatcher sends due rows through the transport, off the
 * request path. A failed attempt is logged and retried with exponential backoff; after the last
 * attempt the row is marked failed and stays (an administrator can retry it), so no event is lost.
 * Delivery is at least once: if the process dies between the server's acceptance and the status
 * update, the message is sent again with the same Message-ID.
 */
import { Op, Transaction } from 'sequelize';
import { sequelize } from '../db/index';
import { serialized } from '../db/write-queue';
import { MailOutbox, type MailKind } from '../db/models/index';
import { mailConfig, type MailConfig } from './config';
import type { Rendered } from './render';
import { compose, messageIdFor, type MailTransport } from './transport';

export const log = (m: string) => console.log(`[paretherm mail] ${m}`);

/**
 * A mail write: one transaction in the process's one write queue (shared with the sweep service),
 * so marks are checked and written without interleaving with any other write.
 */
export function mailWrite<T>(fn: (t: Transaction) => Promise<T>): Promise<T> {
	// IMMEDIATE takes SQLite's write lock at BEGIN, so a read inside cannot be invalidated by
	// another connection's write before this transaction writes (no SQLITE_BUSY_SNAPSHOT).
	return serialized(() => sequelize.transaction({ type: Transaction.TYPES.IMMEDIATE }, fn));
}

export interface NewMessage {
	dedupeKey: string;
	kind: MailKind;
	to: { address: string; name?: string; userId?: string | null };
	programId?: number | null;
	rendered: Rendered;
}

/** Insert messages; a message whose dedupe key exists already is skipped (not replaced). */
export async function enqueue(messages: NewMessage[], transaction: Transaction, now = new Date()): Promise<void> {
	if (!messages.length) return;
	await MailOutbox.bulkCreate(
		messages.map((m) => ({
			dedupe_key: m.dedupeKey,
			kind: m.kind,
			to_address: m.to.address,
			to_name: m.to.name ?? '',
			user_id: m.to.userId ?? null,
			program_id: m.programId ?? null,
			subject: m.rendered.subject,
			html: m.rendered.html,
			text: m.rendered.text,
			status: 'pending',
			attempts: 0,
			next_attempt_at: now
		})),
		{ transaction, ignoreDuplicates: true }
	);
	transaction.afterCommit(() => kickDispatcher());
}

/** Delay before attempt n+1 after n failed attempts: base · 2^(n−1), at most an hour (or base). */
export function backoffMs(failedAttempts: number, cfg: Pick<MailConfig, 'backoff_ms'> = mailConfig()): number {
	const cap = Math.max(cfg.backoff_ms, 3_600_000);
	return Math.min(cap, cfg.backoff_ms * 2 ** Math.max(0, failedAttempts - 1));
}

/** 5xx answers about the message or recipient will not change on retry; everything else may. */
function isPermanent(e: unknown): boolean {
	const code = (e as { responseCode?: number }).responseCode;
	const kind = (e as { code?: string }).code;
	return typeof code === 'number' && code >= 500 && code < 600 && kind !== 'EAUTH';
}

function describeError(e: unknown): string {
	const err = e as { message?: string; code?: string; responseCode?: number };
	const parts = [err.code, err.responseCode ? `SMTP ${err.responseCode}` : null].filter(Boolean).join(', ');
	return `${parts ? `${parts}: ` : ''}${String(err.message ?? e).slice(0, 500)}`;
}

export interface DispatchReport {
	sent: number;
	retrying: number;
	failed: number;
}

/** Send every pending message due at `now` (oldest first, at most `limit`). */
export async function dispatchDue(opts: { transport: MailTransport; now?: Date; limit?: number; config?: MailConfig }): Promise<DispatchReport> {
	const now = opts.now ?? new Date();
	const cfg = opts.config ?? mailConfig();
	const report: DispatchReport = { sent: 0, retrying: 0, failed: 0 };
	const due = await MailOutbox.findAll({
		where: { status: 'pending', next_attempt_at: { [Op.lte]: now } },
		order: [['next_attempt_at', 'ASC'], ['id', 'ASC']],
		limit: opts.limit ?? 50
	});
	for (const row of due) {
		const attempt = row.attempts + 1;
		const messageId = messageIdFor(row.id, row.dedupe_key, cfg.from);
		let raw: Buffer | null = null;
		try {
			raw = await compose({
				from: cfg.from,
				to: { name: row.to_name, address: row.to_address },
				subject: row.subject,
				text: row.text,
				html: row.html,
				messageId,
				date: now,
				kind: row.kind
			});
			const from = /<([^>]+)>/.exec(cfg.from)?.[1] ?? cfg.from;
			const info = await opts.transport.send({ from, to: [row.to_address] }, raw);
			await mailWrite((transaction) =>
				row.update(
					{ status: 'sent', attempts: attempt, sent_at: now, raw: raw!.toString('utf8'), message_id: messageId, transport: opts.transport.name, last_error: null },
					{ transaction }
				)
			);
			report.sent++;
			log(`#${row.id} (${row.kind}) to ${row.to_address} sent via ${opts.transport.name} on attempt ${attempt}: ${info.response.slice(0, 120)}`);
		} catch (e) {
			const permanent = isPermanent(e);
			const giveUp = permanent || attempt >= cfg.maxAttempts;
			const wait = backoffMs(attempt, cfg);
			const why = describeError(e);
			await mailWrite((transaction) =>
				row.update(
					{
						status: giveUp ? 'failed' : 'pending',
						attempts: attempt,
						last_error: why,
						transport: opts.transport.name,
						message_id: messageId,
						raw: raw ? raw.toString('utf8') : row.raw,
						next_attempt_at: giveUp ? row.next_attempt_at : new Date(now.getTime() + wait)
					},
					{ transaction }
				)
			);
			if (giveUp) {
				report.failed++;
				log(
					`#${row.id} (${row.kind}) to ${row.to_address} failed ${permanent ? 'permanently' : `after ${attempt} attempts`} via ${opts.transport.name}: ${why}. ` +
						'It stays in the outbox; fix the address or SMTP_URL and press Retry on /admin/outbox.'
				);
			} else {
				report.retrying++;
				log(`#${row.id} (${row.kind}) to ${row.to_address}: attempt ${attempt} via ${opts.transport.name} failed (${why}); next attempt in ${Math.round(wait / 1000)} s`);
			}
		}
	}
	return report;
}

/** Put failed (or pending) messages back in line for an immediate attempt. */
export async function retryMessages(ids: number[] | 'all-failed', now = new Date()): Promise<number> {
	const where = ids === 'all-failed' ? { status: 'failed' } : { id: ids, status: { [Op.in]: ['failed', 'pending'] } };
	const [n] = await mailWrite((transaction) => MailOutbox.update({ status: 'pending', next_attempt_at: now }, { where, transaction }));
	if (n) kickDispatcher();
	return n;
}

// ---------------------------------------------------------------------------------------------
// The dispatcher loop (started from runtime.ts)

let kick: (() => void) | null = null;

/** Ask a running dispatcher to look at the outbox now rather than at its next tick. */
export function kickDispatcher(): void {
	kick?.();
}

export function setKick(fn: (() => void) | null): void {
	kick = fn;
}
