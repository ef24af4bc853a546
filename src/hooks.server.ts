import { json, redirect, type Handle, type HandleServerError, type ServerInit } from '@sveltejs/kit';
import { ensureDb } from '$lib/server/db/index';
import { SECURITY_HEADERS } from '$lib/security-headers.js';
import { env } from '$env/dynamic/private';
import { jsonBodyLimit, tooLargeMessage } from '$lib/server/json-body';
import { lucia } from '$lib/server/auth/lucia';
import { useConfigSource } from '$lib/server/config';
import { startRuntime } from '$lib/server/runtime';

export const init: ServerInit = async () => {
	// Every setting is checked here, before anything starts: a bad value stops the start with its name.
	useConfigSource(env);
	await ensureDb();
	await startRuntime();
};

const STATE_CHANGING = new Set(['POST', 'PUT', 'PATCH', 'DELETE']);

function withSecurityHeaders(response: Response): Response {
	for (const [name, value] of Object.entries(SECURITY_HEADERS)) response.headers.set(name, value);
	return response;
}

export const handle: Handle = async ({ event, resolve }) => {
	// Before the session is looked at: a refused request changes nothing, not even a session's expiry.
	if (STATE_CHANGING.has(event.request.method)) {
		const refused = crossSiteRefusal(event.request, event.url) ?? oversizedJsonRefusal(event.request, event.url);
		if (refused) return withSecurityHeaders(refused);
	}
	await ensureDb();
	const sessionId = event.cookies.get(lucia.sessionCookieName);
	event.locals.user = null;
	event.locals.session = null;
	if (sessionId) {
		const { session, user } = await lucia.validateSession(sessionId);
		if (session && session.fresh) {
			const cookie = lucia.createSessionCookie(session.id);
			event.cookies.set(cookie.name, cookie.value, { path: '.', ...cookie.attributes });
		}
		if (!session) {
			const blank = lucia.createBlankSessionCookie();
			event.cookies.set(blank.name, blank.value, { path: '.', ...blank.attributes });
		}
		event.locals.user = user;
		event.locals.session = session;
	}
	if (!event.locals.user && event.request.method === 'GET' && needsSignIn(event.url.pathname)) {
		const next = event.url.pathname + event.url.search;
		redirect(303, `/login?next=${encodeURIComponent(next)}`);
	}
	return withSecurityHeaders(await resolve(event));
};

const FORM_TYPES = new Set(['application/x-www-form-urlencoded', 'multipart/form-data', 'text/plain']);

/**
 * Every state-changing request must come from our own pages, whatever its method and content type
 * (SvelteKit's check, which covered form content types only, is off in svelte.config.js in favour
 * of this one). Refused: an Origin naming another site or the opaque origin "null"; a form content
 * type (which any site can post without asking) with no Origin at all; and, with no Origin, a
 * request the browser marks as not same-origin (Sec-Fetch-Site). Other requests without Origin
 * come from clients that are not browsers, which no other site's page can drive.
 */
function crossSiteRefusal(request: Request, url: URL): Response | null {
	const origin = request.headers.get('origin');
	const site = request.headers.get('sec-fetch-site');
	const type = (request.headers.get('content-type') ?? '').split(';')[0].trim().toLowerCase();
	const sameOrigin = origin !== null ? origin === url.origin : !FORM_TYPES.has(type) && (site === null || site === 'same-origin' || site === 'none');
	if (sameOrigin) return null;
	const from = origin ?? (site && site !== 'same-origin' && site !== 'none' ? `another site (Sec-Fetch-Site: ${site})` : 'a form with no Origin header');
	const message = `Cross-site ${request.method} requests are refused: this one comes from ${from}, not ${url.origin}. Use Paretherm's own pages, or a client that sends Origin: ${url.origin}.`;
	return url.pathname.startsWith('/api/') || /json/.test(request.headers.get('accept') ?? '')
		? json({ error: message, field: 'origin' }, { status: 403 })
		: new Response(message, { status: 403, headers: { 'content-type': 'text/plain; charset=utf-8' } });
}

/** JSON API bodies have their own small limit; a declared length over it is refused before reading. */
function oversizedJsonRefusal(request: Request, url: URL): Response | null {
	if (!url.pathname.startsWith('/api/')) return null;
	const declared = Number(request.headers.get('content-length'));
	const limit = jsonBodyLimit();
	if (!Number.isFinite(declared) || declared <= limit) return null;
	return json({ error: tooLargeMessage(declared, limit), field: 'body' }, { status: 413 });
}

export const handleError: HandleServerError = ({ error, status }) => {
	// Unexpected errors are logged server-side; the browser gets no internals.
	if (status >= 500) console.error('[paretherm] unexpected error', error);
	return { message: status >= 500 ? 'Something went wrong on the server; the error was logged.' : String((error as Error)?.message ?? error) };
};

/** Pages (not JSON routes, which answer 401 themselves) send anonymous visitors to sign in. */
function needsSignIn(pathname: string): boolean {
	return pathname.startsWith('/programs') || pathname.startsWith('/admin');
}
