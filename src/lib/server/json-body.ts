/**
 * Reading JSON API bodies safely. They have their own small size limit (PARETHERM_JSON_BODY_LIMIT,
 * default 256 kB; uploads keep the larger BODY_SIZE_LIMIT), checked while the body streams in,
 * and their nesting depth is measured in one pass before JSON.parse sees them, so a body of a few
 * million "[" is refused in milliseconds instead of blocking the server.
 */

import { config, parseByteSize, parseConfig, type Env } from './config';

export const DEFAULT_JSON_BODY_LIMIT = 256 * 1024;
/** Deeper than any request the API takes (a sweep nests 3 levels). */
export const MAX_JSON_DEPTH = 32;

/** A refused body: 413 over the size limit, 400 malformed or too deeply nested. */
export class JsonBodyError extends Error {
	constructor(
		message: string,
		readonly status: 400 | 413,
		/** The offending field's path (`definition.name`), or "body" for the body as a whole. */
		readonly field = 'body'
	) {
		super(message);
		this.name = 'JsonBodyError';
	}
}

export { parseByteSize };

export function jsonBodyLimit(env?: Env): number {
	return (env ? parseConfig(env) : config()).jsonBodyLimit_bytes;
}

export function formatBytes(n: number): string {
	if (n >= 1024 * 1024) return `${(n / (1024 * 1024)).toFixed(1)} MB`;
	if (n >= 1024) return `${Math.round(n / 1024)} kB`;
	return `${n} bytes`;
}

export function tooLargeMessage(size: number | null, limit: number): string {
	return `${size === null ? 'The request body is' : `The request body is ${formatBytes(size)};`} over the limit of ${formatBytes(limit)} for JSON requests. Send a smaller request (a sweep request is a few kilobytes).`;
}

/** Deepest nesting of arrays and objects in JSON text, stopping as soon as it passes `stopAt`. */
export function jsonDepth(text: string, stopAt = Infinity): number {
	let depth = 0;
	let deepest = 0;
	let inString = false;
	for (let i = 0; i < text.length; i++) {
		const c = text.charCodeAt(i);
		if (inString) {
			if (c === 92 /* \ */) i++;
			else if (c === 34 /* " */) inString = false;
		} else if (c === 34) inString = true;
		else if (c === 91 /* [ */ || c === 123 /* { */) {
			if (++depth > deepest) {
				deepest = depth;
				if (deepest > stopAt) return deepest;
			}
		} else if (c === 93 /* ] */ || c === 125 /* } */) depth--;
	}
	return deepest;
}

/**
 * The body as parsed JSON. Throws JsonBodyError: 413 when it is over `limit` bytes (checked on the
 * content-length and again while reading, for chunked bodies), 400 when it nests deeper than
 * `maxDepth` or is not JSON. The rest of an oversized body is left unread; the server discards it
 * after answering (scripts/start.js) rather than cutting the connection.
 */
export async function readJsonBody(request: Request, opts: { limit?: number; maxDepth?: number; expected?: string } = {}): Promise<unknown> {
	const send = `; send ${opts.expected ?? 'a JSON object'}.`;
	const limit = opts.limit ?? jsonBodyLimit();
	const maxDepth = opts.maxDepth ?? MAX_JSON_DEPTH;
	const declared = Number(request.headers.get('content-length'));
	if (Number.isFinite(declared) && declared > limit) throw new JsonBodyError(tooLargeMessage(declared, limit), 413);
	if (!request.body) throw new JsonBodyError(`The request has no body${send}`, 400);
	const reader = request.body.getReader();
	const chunks: Uint8Array[] = [];
	let size = 0;
	try {
		for (;;) {
			const { done, value } = await reader.read();
			if (done) break;
			size += value.byteLength;
			if (size > limit) throw new JsonBodyError(tooLargeMessage(null, limit), 413);
			chunks.push(value);
		}
	} catch (e) {
		if (e instanceof JsonBodyError) throw e;
		const status = (e as { status?: number })?.status;
		if (status === 413) throw new JsonBodyError(tooLargeMessage(null, limit), 413);
		throw new JsonBodyError(`The request body could not be read completely${send}`, 400);
	} finally {
		reader.releaseLock();
	}
	const text = new TextDecoder('utf-8', { fatal: false }).decode(Buffer.concat(chunks));
	if (jsonDepth(text, maxDepth) > maxDepth)
		throw new JsonBodyError(`The JSON body nests arrays or objects deeper than ${maxDepth} levels; no request of this API needs more than a few.`, 400);
	let value: unknown;
	try {
		value = JSON.parse(text);
	} catch {
		throw new JsonBodyError(`The request body is not valid JSON${send}`, 400);
	}
	const nul = pathWithNul(value);
	if (nul !== null) throw new JsonBodyError(`The field “${nul.slice(0, 80)}” contains a NUL character (U+0000), which no field accepts; remove it.`, 400, nul);
	return value;
}

/**
 * The path (`a.b[2]`) of the first string or key holding a NUL character (U+0000), or null.
 * Stored text never holds one (SQLite ends a statement's text at it), so such a body is refused.
 */
export function pathWithNul(value: unknown, at = ''): string | null {
	if (typeof value === 'string') return value.includes('\u0000') ? at || 'body' : null;
	if (Array.isArray(value)) {
		for (let i = 0; i < value.length; i++) {
			const found = pathWithNul(value[i], `${at}[${i}]`);
			if (found !== null) return found;
		}
		return null;
	}
	if (value && typeof value === 'object') {
		for (const [key, v] of Object.entries(value)) {
			const here = at ? `${at}.${key}` : key;
			if (key.includes('\u0000')) return here.replace(/\u0000/g, '\\u0000');
			const found = pathWithNul(v, here);
			if (found !== null) return found;
		}
	}
	return null;
}
