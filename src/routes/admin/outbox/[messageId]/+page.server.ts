import { error } from '@sveltejs/kit';
import type { PageServerLoad } from './$types';
import { parseId, requireAdmin } from '$lib/server/auth/guard';
import { MailOutbox } from '$lib/server/db/models/index';

const RAW_LIMIT = 200_000;

export const load: PageServerLoad = async ({ locals, params }) => {
	requireAdmin(locals);
	const m = await MailOutbox.findByPk(parseId(params.messageId, 'message'));
	if (!m) error(404, `No message #${params.messageId} in the outbox.`);
	return {
		message: {
			id: m.id,
			kind: m.kind,
			to: m.to_name ? `${m.to_name} <${m.to_address}>` : m.to_address,
			subject: m.subject,
			status: m.status,
			attempts: m.attempts,
			lastError: m.last_error,
			transport: m.transport,
			messageId: m.message_id,
			createdAt: new Date(m.created_at).toISOString(),
			sentAt: m.sent_at ? new Date(m.sent_at).toISOString() : null,
			nextAttemptAt: m.status === 'pending' ? new Date(m.next_attempt_at).toISOString() : null,
			html: m.html,
			text: m.text,
			raw: m.raw ? (m.raw.length > RAW_LIMIT ? `${m.raw.slice(0, RAW_LIMIT)}\n… (${m.raw.length - RAW_LIMIT} more characters; download the .eml)` : m.raw) : null
		}
	};
};
