/**
 * The message's HTML on its own, for a new tab. Its own CSP: `sandbox` gives the document an
 * opaque origin with no scripts, forms or popups; nothing is loaded except inline styles and
 * data: images, so remote content (tracking pixels) cannot load either.
 */
import { error } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { parseId, requireAdmin } from '$lib/server/auth/guard';
import { MailOutbox } from '$lib/server/db/models/index';

export const GET: RequestHandler = async ({ locals, params }) => {
	requireAdmin(locals);
	const m = await MailOutbox.findByPk(parseId(params.messageId, 'message'), { attributes: ['id', 'html'] });
	if (!m) error(404, `No message #${params.messageId} in the outbox.`);
	return new Response(m.html, {
		headers: {
			'content-type': 'text/html; charset=utf-8',
			'content-security-policy': "sandbox; default-src 'none'; style-src 'unsafe-inline'; img-src data:; base-uri 'none'; form-action 'none'; frame-ancestors 'none'",
			'cache-control': 'no-store'
		}
	});
};
