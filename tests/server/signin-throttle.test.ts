/**
 * The sign-in throttle (src/lib/server/auth/throttle.ts) on Redis commands (ioredis-mock: the
 * limiter uses plain commands and a short Lua script the mock runs) and on memory: growing waits
 * per account + address, nobody else slowed, success clears, and a Redis that is away does not
 * stop the counting. Delay schedule: common practice (exponential back-off), no source.
 */
import { describe, expect, it } from 'vitest';
import RedisMock from 'ioredis-mock';
import { Redis } from 'ioredis';
import { createSignInThrottle, delayAfter_s, throttleKey, type ThrottleSettings } from '../../src/lib/server/auth/throttle';
import { freePort } from '../helpers/app';

const settings: ThrottleSettings = { freeFailures: 3, baseDelay_s: 60, maxDelay_s: 600, window_s: 3600 };

describe('delay schedule', () => {
	it('should be free for the first failures, then double from the base delay up to the cap', () => {
		expect([1, 2, 3, 4, 5, 6, 7, 8].map((n) => delayAfter_s(n, settings))).toEqual([0, 0, 60, 120, 240, 480, 600, 600]);
		expect(delayAfter_s(10_000, settings)).toBe(600);
	});
});

for (const store of ['redis', 'memory'] as const) {
	describe(`sign-in throttle on ${store}`, () => {
		const make = () => createSignInThrottle({ store: store === 'redis' ? new RedisMock() : null, settings, prefix: `t${Math.random()}` });
		const account = (email: string, address: string) => throttleKey(email, address);

		it('should make the guesser wait longer after each failure, only for that account from that address', async () => {
			const t = make();
			const guessed = account('architect@example.org', '203.0.113.7');
			const imposed: number[] = [];
			for (let i = 0; i < 6; i++) imposed.push(await t.recordFailure(guessed));
			expect(imposed).toEqual([0, 0, 60_000, 120_000, 240_000, 480_000]);
			const wait = await t.waitMs(guessed);
			expect(wait).toBeGreaterThan(470_000);
			expect(wait).toBeLessThanOrEqual(480_000);
			// The owner from another address, and another account from the same address, go ahead.
			expect(await t.waitMs(account('architect@example.org', '198.51.100.2'))).toBe(0);
			expect(await t.waitMs(account('viewer@example.org', '203.0.113.7'))).toBe(0);
		});

		it('should forget the failures after a right password', async () => {
			const t = make();
			const k = account('engineer@example.org', '192.0.2.1');
			for (let i = 0; i < 3; i++) await t.recordFailure(k);
			expect(await t.waitMs(k)).toBeGreaterThan(0);
			await t.recordSuccess(k);
			expect(await t.waitMs(k)).toBe(0);
			expect(await t.recordFailure(k)).toBe(0); // counting starts again
		});

		it('should not let one address trying many accounts slow anyone', async () => {
			const t = make();
			for (let i = 0; i < 50; i++) expect(await t.recordFailure(account(`nobody-${i}@example.org`, '203.0.113.9'))).toBe(0);
			expect(await t.waitMs(account('manager@example.org', '203.0.113.9'))).toBe(0);
		});
	});
}

describe('error handling', () => {
	it('should keep counting in memory while Redis cannot be reached', async () => {
		const port = await freePort(); // nothing listens here
		const redis = new Redis({ port, host: '127.0.0.1', lazyConnect: true, enableOfflineQueue: false, maxRetriesPerRequest: 0, retryStrategy: () => null });
		redis.on('error', () => {});
		try {
			const t = createSignInThrottle({ store: redis, settings, prefix: 'down' });
			const k = throttleKey('a@example.org', '192.0.2.5');
			expect(await t.recordFailure(k)).toBe(0);
			expect(await t.recordFailure(k)).toBe(0);
			expect(await t.recordFailure(k)).toBe(60_000);
			expect(await t.waitMs(k)).toBeGreaterThan(0);
		} finally {
			redis.disconnect();
		}
	});

	it('should refuse a bad setting with the variable name', async () => {
		const { throttleSettingsFromEnv } = await import('../../src/lib/server/auth/throttle');
		process.env.PARETHERM_SIGNIN_DELAY_S = '-3';
		try {
			expect(() => throttleSettingsFromEnv()).toThrow(/PARETHERM_SIGNIN_DELAY_S must be a whole number of at least 1/);
		} finally {
			delete process.env.PARETHERM_SIGNIN_DELAY_S;
		}
	});
});
