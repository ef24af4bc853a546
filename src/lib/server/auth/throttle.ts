/**
 * Sign-in throttling. Failures are counted per account and per client address in a sliding
 * window; past the limit the key is locked for a fixed time and the user is told when to retry.
 * Kept in memory: there is one web process (the single SQLite writer), and a restart forgiving
 * the counters is acceptable. Limits are common practice, no source.
 */
export const THROTTLE = {
	window_ms: 15 * 60_000,
	accountFailures: 5,
	addressFailures: 20,
	lock_ms: 15 * 60_000
};

type Entry = { failures: number[]; lockedUntil: number };
const entries = new Map<string, Entry>();

function entry(key: string): Entry {
	let e = entries.get(key);
	if (!e) {
		e = { failures: [], lockedUntil: 0 };
		entries.set(key, e);
	}
	return e;
}

/** Returns the time (ms epoch) until which sign-in is refused, or null when allowed. */
export function lockedUntil(keys: string[], now = Date.now()): number | null {
	let until = 0;
	for (const key of keys) until = Math.max(until, entries.get(key)?.lockedUntil ?? 0);
	return until > now ? until : null;
}

export function recordFailure(accountKey: string, addressKey: string, now = Date.now()): void {
	for (const [key, limit] of [
		[accountKey, THROTTLE.accountFailures],
		[addressKey, THROTTLE.addressFailures]
	] as const) {
		const e = entry(key);
		e.failures = e.failures.filter((t) => now - t < THROTTLE.window_ms);
		e.failures.push(now);
		if (e.failures.length >= limit) {
			e.lockedUntil = now + THROTTLE.lock_ms;
			e.failures = [];
		}
	}
	if (entries.size > 50_000) prune(now);
}

export function recordSuccess(accountKey: string): void {
	entries.delete(accountKey);
}

function prune(now: number) {
	for (const [key, e] of entries)
		if (e.lockedUntil < now && e.failures.every((t) => now - t >= THROTTLE.window_ms)) entries.delete(key);
}

export function resetThrottle(): void {
	entries.clear();
}
