import { fail } from '@sveltejs/kit';
import { readForm } from '$lib/server/read-form';
import { doneMessage, redirectDone } from '$lib/server/after-post';
import type { Actions, PageServerLoad } from './$types';
import { requireAdmin } from '$lib/server/auth/guard';
import { MailOutbox, MAIL_STATUSES, type MailStatus } from '$lib/server/db/models/index';
import { describeSmtp, mailConfig } from '$lib/server/mail/config';
import { retryMessages } from '$lib/server/mail/outbox';

const PAGE = 100;

/** Messages after a successful post (post/redirect/get), by `?done=` code. */
const DONE = {
	retried: 'The message will be sent again in a moment.',
	'retried-failed': 'The failed messages will be sent again in a moment.',
	'none-failed': 'No failed messages to retry.'
};

export const load: PageServerLoad = async ({ locals, url }) => {
	requireAdmin(locals);
	const raw = url.searchParams.get('status');
	const status = (MAIL_STATUSES as readonly string[]).includes(raw ?? '') ? (raw as MailStatus) : null;
	const rows = await MailOutbox.findAll({
		where: status ? { status } : {},
		attributes: ['id', 'kind', 'to_address', 'to_name', 'subject', 'status', 'attempts', 'next_attempt_at', 'last_error', 'sent_at', 'created_at'],
		order: [['id', 'DESC']],
		limit: PAGE
	});
	const counts = Object.fromEntries(await Promise.all(MAIL_STATUSES.map(async (s) => [s, await MailOutbox.count({ where: { status: s } })])));
	let transport: string;
	try {
		const cfg = mailConfig();
		transport = cfg.smtpUrl ? `SMTP: ${describeSmtp(cfg.smtpUrl)}, from ${cfg.from}` : `Local outbox (SMTP_URL unset), from ${cfg.from}`;
	} catch (e) {
		transport = (e as Error).message;
	}
	return {
		done: doneMessage(url, DONE),
		status,
		counts: counts as Record<MailStatus, number>,
		transport,
		limit: PAGE,
		messages: rows.map((m) => ({
			id: m.id,
			kind: m.kind,
			to: m.to_name ? `${m.to_name} <${m.to_address}>` : m.to_address,
			subject: m.subject,
			status: m.status,
			attempts: m.attempts,
			nextAttemptAt: m.status === 'pending' ? new Date(m.next_attempt_at).toISOString() : null,
			lastError: m.last_error,
			sentAt: m.sent_at ? new Date(m.sent_at).toISOString() : null,
			createdAt: new Date(m.created_at).toISOString()
		}))
	};
};

export const actions: Actions = {
	retry: async ({ locals, request, url }) => {
		requireAdmin(locals);
		const id = Number((await readForm(request)).get('messageId'));
		if (!Number.isInteger(id) || id < 1) return fail(400, { message: 'Choose a message to retry.' });
		const n = await retryMessages([id]);
		if (!n) return fail(404, { message: `Message #${id} is not waiting or failed (already sent, or gone); reload the page.` });
		redirectDone(url, 'retried');
	},
	retryFailed: async ({ locals, url }) => {
		requireAdmin(locals);
		const n = await retryMessages('all-failed');
		redirectDone(url, n ? 'retried-failed' : 'none-failed');
	}
};
