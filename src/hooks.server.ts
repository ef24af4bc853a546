import { error, isHttpError, redirect, type Handle, type HandleServerError, type ServerInit } from '@sveltejs/kit';
import { ensureDb } from '$lib/server/db/index';
import { lucia } from '$lib/server/auth/lucia';
import { startRuntime } from '$lib/server/runtime';

export const init: ServerInit = async () => {
	await ensureDb();
	await startRuntime();
};

export const handle: Handle = async ({ event, resolve }) => {
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
	if (event.request.method === 'POST') answerUnreadableForms(event.request, event.url);
	const response = await resolve(event);
	response.headers.set('X-Frame-Options', 'DENY');
	response.headers.set('X-Content-Type-Options', 'nosniff');
	response.headers.set('Referrer-Policy', 'same-origin');
	response.headers.set('Permissions-Policy', 'camera=(), microphone=(), geolocation=()');
	return response;
};

export const handleError: HandleServerError = ({ error, status }) => {
	// Unexpected errors are logged server-side; the browser gets no internals.
	if (status >= 500) console.error('[paretherm] unexpected error', error);
	return { message: status >= 500 ? 'Something went wrong on the server; the error was logged.' : String((error as Error)?.message ?? error) };
};

/**
 * `request.formData()` throws a TypeError on a text/plain body (which SvelteKit lets through to
 * form actions, as browsers can send it) or a malformed multipart body, and every action would
 * turn that into a 500. Reading the form here instead answers the client's mistake as a 4xx that
 * says what to send.
 */
function answerUnreadableForms(request: Request, url: URL): void {
	const read = request.formData.bind(request);
	request.formData = async () => {
		try {
			const form = await read();
			// A file part read as text would be stored as "[object File]"; only upload forms take files.
			if (!takesFiles(url) && [...form.values()].some((v) => typeof v !== 'string'))
				error(400, 'This form takes no files; send its fields as text.');
			return form;
		} catch (e) {
			if (isHttpError(e)) throw e;
			if (!(e instanceof TypeError)) throw e;
			const type = (request.headers.get('content-type') ?? '').split(';')[0].trim().toLowerCase();
			if (type !== 'multipart/form-data' && type !== 'application/x-www-form-urlencoded')
				error(415, `Forms must be sent as multipart/form-data or application/x-www-form-urlencoded (got ${type.slice(0, 60) || 'no content type'}).`);
			error(400, 'The form data could not be read (malformed body); send the form again.');
		}
	};
}

/** The form actions that accept file parts: parameter import and CSV uploads. */
function takesFiles(url: URL): boolean {
	return (/\/inputs$/.test(url.pathname) && url.search.startsWith('?/import')) || (/\/checks$/.test(url.pathname) && url.search.startsWith('?/upload'));
}

/** Pages (not JSON routes, which answer 401 themselves) send anonymous visitors to sign in. */
function needsSignIn(pathname: string): boolean {
	return pathname.startsWith('/programs') || pathname.startsWith('/admin');
}
