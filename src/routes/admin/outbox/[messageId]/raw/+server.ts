/** The stored RFC 5322 source, as an .eml download (exactly what was handed to the transport). */
import { error } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { parseId, requireAdmin } from '$lib/server/auth/guard';
import { MailOutbox } from '$lib/server/db/models/index';

export const GET: RequestHandler = async ({ locals, params }) => {
	requireAdmin(locals);
	const m = await MailOutbox.findByPk(parseId(params.messageId, 'message'), { attributes: ['id', 'raw'] });
	if (!m) error(404, `No message #${params.messageId} in the outbox.`);
	if (!m.raw) error(404, `Message #${m.id} has not been composed yet; it is composed at its first send attempt.`);
	return new Response(m.raw, {
		headers: {
			'content-type': 'message/rfc822',
			'content-disposition': `attachment; filename="paretherm-message-${m.id}.eml"`,
			'cache-control': 'no-store'
		}
	});
};
