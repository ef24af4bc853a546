/**
 * Post/redirect/get: a form action that succeeded answers 303 to its page with a short code in
 * `?done=`, so the address bar never holds `?/action` and a reload cannot post again. The page
 * turns the code into its message from a fixed list (nothing from the URL is shown as is).
 */
import { redirect, type Cookies } from '@sveltejs/kit';

export function redirectDone(url: URL, code: string): never {
	redirect(303, `${url.pathname}?done=${encodeURIComponent(code)}`);
}

/** The message for `?done=<code>`, or null when there is none or the code is not one of `messages`. */
export function doneMessage(url: URL, messages: Record<string, string>): string | null {
	const code = url.searchParams.get('done');
	return code !== null && Object.hasOwn(messages, code) ? messages[code] : null;
}

/**
 * What a page shows once after a successful post whose outcome cannot be a fixed message (a name,
 * or a one-time password or invitation link shown only once): kept in a short-lived cookie limited
 * to the page's path, read and deleted by the page's next load. The redirect address stays clean.
 */
export interface Flash {
	done?: string;
	created?: { email: string; password: string | null; link: string | null };
}

const FLASH_COOKIE = 'paretherm_flash';

export function redirectWithFlash(cookies: Cookies, url: URL, flash: Flash): never {
	cookies.set(FLASH_COOKIE, Buffer.from(JSON.stringify(flash), 'utf8').toString('base64url'), {
		path: url.pathname,
		httpOnly: true,
		sameSite: 'strict',
		secure: url.protocol === 'https:',
		maxAge: 120
	});
	redirect(303, url.pathname);
}

/** The flash left by the post that redirected here (then gone), or null. Only known fields are kept. */
export function takeFlash(cookies: Cookies, url: URL): Flash | null {
	const raw = cookies.get(FLASH_COOKIE);
	if (!raw) return null;
	cookies.delete(FLASH_COOKIE, { path: url.pathname });
	try {
		const v = JSON.parse(Buffer.from(raw, 'base64url').toString('utf8')) as Flash;
		const text = (s: unknown) => (typeof s === 'string' ? s.slice(0, 500) : null);
		const flash: Flash = {};
		if (text(v?.done)) flash.done = text(v.done)!;
		if (v?.created && text(v.created.email)) flash.created = { email: text(v.created.email)!, password: text(v.created.password), link: text(v.created.link) };
		return flash;
	} catch {
		return null;
	}
}
