/**
 * Sign-in throttling with growing delays, keyed on account + client address, so whoever guesses
 * passwords slows down only their own guesses at that account from that address: the owner signing
 * in from elsewhere, and other people behind the same proxy, are not held up.
 *
 * The first `freeFailures` failures cost nothing; from then on each failure makes that
 * account-and-address wait `baseDelay_s`, then twice as long after the next failure, and so on up
 * to `maxDelay_s`. Failures are forgotten `window_s` after the first one, and a successful sign-in
 * clears them. Counters live in the app's Redis (rate-limiter-flexible), shared by every web
 * process; when Redis is not reachable (or not started, as in page-only test runs) an in-memory
 * limiter stands in. Limits are common practice, no source; configure them with
 * PARETHERM_SIGNIN_FREE_FAILURES, PARETHERM_SIGNIN_DELAY_S and PARETHERM_SIGNIN_MAX_DELAY_S.
 */
import { createHash } from 'node:crypto';
import { RateLimiterMemory, RateLimiterRedis, type RateLimiterAbstract } from 'rate-limiter-flexible';
import { config } from '../config';

export interface ThrottleSettings {
	freeFailures: number;
	baseDelay_s: number;
	maxDelay_s: number;
	window_s: number;
}

export function throttleSettingsFromEnv(): ThrottleSettings {
	return { ...config().signIn, window_s: 24 * 3600 };
}

/** The wait imposed after the `failures`-th failure in the window (0 while failures are free). */
export function delayAfter_s(failures: number, s: ThrottleSettings): number {
	if (failures < s.freeFailures) return 0;
	return Math.min(s.maxDelay_s, s.baseDelay_s * 2 ** Math.min(failures - s.freeFailures, 30));
}

/** Account and address in one key; hashed so Redis holds no e-mail addresses. */
export function throttleKey(email: string, address: string): string {
	return createHash('sha256').update(`${email}\n${address}`).digest('base64url');
}

export interface SignInThrottle {
	readonly settings: ThrottleSettings;
	/** Milliseconds this key must still wait before its next attempt (0: go ahead). */
	waitMs(key: string): Promise<number>;
	/** Count a failure; returns the wait it imposes in milliseconds (0 while failures are free). */
	recordFailure(key: string): Promise<number>;
	/** A right password: forget the key's failures and wait. */
	recordSuccess(key: string): Promise<void>;
}

/** Redis-like client as rate-limiter-flexible takes it (ioredis, or ioredis-mock in unit tests). */
export type ThrottleStore = ConstructorParameters<typeof RateLimiterRedis>[0]['storeClient'];

export function createSignInThrottle(opts: { store?: ThrottleStore | null; settings?: ThrottleSettings; prefix?: string } = {}): SignInThrottle {
	const settings = opts.settings ?? throttleSettingsFromEnv();
	const prefix = opts.prefix ?? `${config().queuePrefix}:signin`;
	// Failures: a counter that never refuses by itself; the wait is a separate block below.
	const failureOpts = { keyPrefix: `${prefix}:failures`, points: Number.MAX_SAFE_INTEGER, duration: settings.window_s };
	const waitOpts = { keyPrefix: `${prefix}:wait`, points: 1, duration: 1 };
	const limiter = (o: typeof failureOpts): RateLimiterAbstract =>
		opts.store
			? new RateLimiterRedis({ ...o, storeClient: opts.store, rejectIfRedisNotReady: true, insuranceLimiter: new RateLimiterMemory(o) })
			: new RateLimiterMemory(o);
	const failures = limiter(failureOpts);
	const waits = limiter(waitOpts);

	return {
		settings,
		async waitMs(key) {
			const res = await waits.get(key);
			return res && res.consumedPoints > waitOpts.points ? Math.max(0, res.msBeforeNext) : 0;
		},
		async recordFailure(key) {
			const res = await failures.penalty(key, 1);
			const delay_s = delayAfter_s(res.consumedPoints, settings);
			if (delay_s > 0) await waits.block(key, delay_s);
			return delay_s * 1000;
		},
		async recordSuccess(key) {
			await Promise.all([failures.delete(key), waits.delete(key)]);
		}
	};
}

// One throttle per process, on Redis once the runtime hands over a client (runtime.ts).
const holder = globalThis as typeof globalThis & { __parethermSignInThrottle?: SignInThrottle };

export function signInThrottle(): SignInThrottle {
	return (holder.__parethermSignInThrottle ??= createSignInThrottle());
}

/** Put the process's throttle on this Redis client (null: back to memory). */
export function useThrottleStore(store: ThrottleStore | null): void {
	holder.__parethermSignInThrottle = createSignInThrottle({ store });
}
