/**
 * Post/redirect/get: a form action that succeeded answers 303 to its page with a short code in
 * `?done=`, so the address bar never holds `?/action` and a reload cannot post again. The page
 * turns the code into its message from a fixed list (nothing from the URL is shown as is).
 */
import { redirect } from '@sveltejs/kit';

export function redirectDone(url: URL, code: string): never {
	redirect(303, `${url.pathname}?done=${encodeURIComponent(code)}`);
}

/** The message for `?done=<code>`, or null when there is none or the code is not one of `messages`. */
export function doneMessage(url: URL, messages: Record<string, string>): string | null {
	const code = url.searchParams.get('done');
	return code !== null && Object.hasOwn(messages, code) ? messages[code] : null;
}
