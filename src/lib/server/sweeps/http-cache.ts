/**
 * Responses about a finished sweep never change: its points, fronts and calibration table are
 * written once, before the sweep becomes 'done', and never again. So each such body is computed
 * once per process and kept in a size-bounded LRU (lru-cache), concurrent requests for the same
 * body share one computation, and responses carry an ETag so a browser that already has the body
 * gets 304 Not Modified (after the same access check as any request).
 *
 * Sweeps that are still queued, running or finalizing are computed on every request and marked
 * `no-store`. The ETag names the sweep, its queue incarnation, when it finished, this process's
 * start (a new app version may format bodies differently) and the request's parameters.
 */
import crypto from 'node:crypto';
import { LRUCache } from 'lru-cache';
import type { Sweep } from '../db/models/index';
import { config } from '../config';

const PROCESS_TAG = crypto.randomBytes(4).toString('hex');

/** Bodies of finished sweeps, bounded by total characters (≈ bytes for this JSON and CSV). */
const bodies = new LRUCache<string, string>({
	maxSize: config().resultCache_MB * 1024 * 1024,
	maxEntrySize: 16 * 1024 * 1024,
	sizeCalculation: (value, key) => value.length + key.length
});
const inFlight = new Map<string, Promise<string>>();

/** A sweep whose stored results are final. */
export function isFinished(sweep: Pick<Sweep, 'status'>): boolean {
	return sweep.status === 'done';
}

function cacheKey(sweep: Pick<Sweep, 'id' | 'queue_token' | 'finished_at'>, key: string): string {
	const finished = sweep.finished_at ? new Date(sweep.finished_at).getTime() : 0;
	return `${sweep.id}:${sweep.queue_token}:${finished}:${key}`;
}

export function etagFor(sweep: Pick<Sweep, 'id' | 'queue_token' | 'finished_at'>, key: string): string {
	const digest = crypto.createHash('sha1').update(cacheKey(sweep, key)).digest('base64url').slice(0, 16);
	return `"s${sweep.id}-${PROCESS_TAG}-${digest}"`;
}

/**
 * The body for `key` (the request's parameters, normalised by the caller): from the cache when the
 * sweep is finished, else freshly produced.
 */
export async function sweepBody(sweep: Sweep, key: string, produce: () => Promise<string>): Promise<string> {
	if (!isFinished(sweep)) return produce();
	const k = cacheKey(sweep, key);
	const hit = bodies.get(k);
	if (hit !== undefined) return hit;
	let pending = inFlight.get(k);
	if (!pending) {
		pending = produce().then(
			(body) => {
				bodies.set(k, body);
				inFlight.delete(k);
				return body;
			},
			(e) => {
				inFlight.delete(k);
				throw e;
			}
		);
		inFlight.set(k, pending);
	}
	return pending;
}

function matches(ifNoneMatch: string | null, etag: string): boolean {
	if (!ifNoneMatch) return false;
	return ifNoneMatch.split(',').some((t) => {
		const tag = t.trim().replace(/^W\//, '');
		return tag === '*' || tag === etag;
	});
}

/**
 * A response for `key`: 304 when the browser's copy is current, otherwise the (cached) body with
 * ETag and Cache-Control. Browsers revalidate every time (`no-cache`), so a member removed from
 * the program stops getting answers at once.
 */
export async function sweepResponse(
	request: Request,
	sweep: Sweep,
	key: string,
	produce: () => Promise<string>,
	headers: Record<string, string> = { 'content-type': 'application/json' }
): Promise<Response> {
	if (!isFinished(sweep)) return new Response(await produce(), { headers: { ...headers, 'cache-control': 'private, no-store' } });
	const etag = etagFor(sweep, key);
	const caching = { etag, 'cache-control': 'private, no-cache' };
	if (matches(request.headers.get('if-none-match'), etag)) return new Response(null, { status: 304, headers: caching });
	return new Response(await sweepBody(sweep, key, produce), { headers: { ...headers, ...caching } });
}

/** For tests and memory checks. */
export function resultCacheStats(): { entries: number; size: number } {
	return { entries: bodies.size, size: bodies.calculatedSize };
}
