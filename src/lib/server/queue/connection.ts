/**
 * Where the sweep queue's Redis is: `REDIS_URL` when set (a shared server, workers anywhere),
 * otherwise a private redis-server child under `<PARETHERM_DATA_DIR>/redis`.
 */
import path from 'node:path';
import { Redis, type RedisOptions } from 'ioredis';
import { PrivateRedis, describeTarget, type RedisTarget } from './redis-server';
import { config, parseConfig, type Env } from '../config';

export { describeTarget, type RedisTarget };

export interface ResolvedRedis {
	target: RedisTarget;
	/** Present when this process started (and supervises) its own redis-server. */
	privateServer: PrivateRedis | null;
}

export function redisUrlFromEnv(env?: Env): string | null {
	return (env ? parseConfig(env) : config()).redis.url;
}

/** REDIS_URL if set; otherwise start a private redis-server in the data folder. */
export async function resolveRedis(opts: { dataDir: string; log?: (m: string) => void }): Promise<ResolvedRedis> {
	const fromEnv = targetFromEnv();
	if (fromEnv) {
		if (fromEnv.kind === 'url' && !/^rediss?:\/\//.test(fromEnv.url))
			throw new Error(
				`REDIS_URL must look like redis://host:6379, rediss://host:6380 or unix:///path/redis.sock (got “${fromEnv.url.slice(0, 40)}”).`
			);
		return { target: fromEnv, privateServer: null };
	}
	const server = new PrivateRedis({ dir: path.join(opts.dataDir, 'redis'), log: opts.log });
	const target = await server.start();
	return { target, privateServer: server };
}

/**
 * A new ioredis client for BullMQ. `maxRetriesPerRequest: null` is required by BullMQ workers
 * (blocking commands must wait through reconnects instead of failing), and it also lets the
 * producer ride out a private redis-server restart.
 */
export function createRedisClient(target: RedisTarget, extra: RedisOptions = {}): Redis {
	const common: RedisOptions = {
		maxRetriesPerRequest: null,
		enableReadyCheck: true,
		// Reconnect quickly at first, then every 2 s, forever: Redis outages are waited out.
		retryStrategy: (times) => Math.min(times * 100, 2_000),
		...extra
	};
	if (target.kind === 'url') return new Redis(target.url, common);
	if (target.kind === 'socket') return new Redis({ ...common, path: target.path });
	return new Redis({ ...common, host: target.host, port: target.port });
}

/** The URL form of a target, for handing to child worker processes as REDIS_URL. */
export function targetToUrl(target: RedisTarget): string {
	if (target.kind === 'url') return target.url;
	if (target.kind === 'tcp') return `redis://${target.host}:${target.port}`;
	// ioredis does not parse unix-socket URLs, so worker/index.ts also accepts REDIS_SOCKET.
	return `unix://${target.path}`;
}

/** Parse what `targetToUrl` produced (or any redis:// URL). */
export function targetFromEnv(env?: Env): RedisTarget | null {
	const { socket, url } = (env ? parseConfig(env) : config()).redis;
	if (socket) return { kind: 'socket', path: socket };
	if (!url) return null;
	if (url.startsWith('unix://')) return { kind: 'socket', path: url.slice('unix://'.length) };
	return { kind: 'url', url };
}
