/**
 * The private redis-server child (REDIS_URL unset): a clear message when the binary is missing,
 * a unix socket and append-only file in the data folder, restart after a crash with its data,
 * and a clean stop.
 */
import { afterEach, describe, expect, it } from 'vitest';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { Redis } from 'ioredis';
import { PrivateRedis, RedisServerMissingError, findRedisServerBinary } from '../../src/lib/server/queue/redis-server';
import { resolveRedis, targetFromEnv } from '../../src/lib/server/queue/connection';

const dirs: string[] = [];
const servers: PrivateRedis[] = [];

function tempDir(): string {
	const d = fs.mkdtempSync(path.join(os.tmpdir(), 'paretherm-redis-sup-'));
	dirs.push(d);
	return d;
}

function alive(pid: number | undefined): boolean {
	if (!pid) return false;
	try {
		process.kill(pid, 0);
		return true;
	} catch {
		return false;
	}
}

afterEach(async () => {
	for (const s of servers.splice(0)) await s.stop();
	for (const d of dirs.splice(0)) fs.rmSync(d, { recursive: true, force: true });
});

describe('private redis-server', () => {
	it('should find the installed redis-server', () => {
		expect(findRedisServerBinary()).toMatch(/redis-server$/);
	});

	it('should serve on a unix socket with an append-only file, and restart after a crash keeping its data', async () => {
		const dir = tempDir();
		const logs: string[] = [];
		const server = new PrivateRedis({ dir, log: (m) => logs.push(m) });
		servers.push(server);
		const target = await server.start();
		expect(target).toEqual({ kind: 'socket', path: path.join(dir, 'redis.sock') });
		const client = new Redis({ path: (target as { path: string }).path, maxRetriesPerRequest: null, retryStrategy: () => 100 });
		client.on('error', () => {});
		expect(await client.config('GET', 'appendonly')).toEqual(['appendonly', 'yes']);
		await client.set('sweep-survives', 'yes');
		// appendfsync everysec: the write reaches the append-only file (the OS keeps it across a
		// SIGKILL) within a second or two; wait until it is there rather than a fixed time.
		const aofHolds = (d: string): boolean =>
			fs.readdirSync(d, { withFileTypes: true }).some((e) => (e.isDirectory() ? aofHolds(path.join(d, e.name)) : e.name.endsWith('.aof') && fs.readFileSync(path.join(d, e.name), 'utf8').includes('sweep-survives')));
		for (const deadline = Date.now() + 60_000; !aofHolds(dir); ) {
			if (Date.now() > deadline) throw new Error('the write did not reach the append-only file within 60 s');
			await new Promise((r) => setTimeout(r, 50));
		}

		const firstPid = server.pid;
		process.kill(firstPid!, 'SIGKILL');
		// ioredis reconnects by itself once the supervisor has brought the server back.
		expect(await client.get('sweep-survives')).toBe('yes');
		expect(server.pid).not.toBe(firstPid);
		expect(logs.some((l) => /stopped unexpectedly \(exit code -, signal SIGKILL\); restarting/.test(l))).toBe(true);
		client.disconnect();

		const secondPid = server.pid;
		await server.stop();
		expect(alive(secondPid)).toBe(false);
	}, 120_000);

	it('should stop a server left running by a killed predecessor before starting its own', async () => {
		const dir = tempDir();
		const first = new PrivateRedis({ dir, log: () => {} });
		await first.start();
		const orphanPid = first.pid!;
		// Simulate the predecessor dying without cleanup: forget the child without stopping it.
		(first as unknown as { stopping: boolean }).stopping = true;
		const logs: string[] = [];
		const second = new PrivateRedis({ dir, log: (m) => logs.push(m) });
		servers.push(second);
		await second.start();
		expect(alive(orphanPid)).toBe(false);
		expect(logs[0]).toBe(`stopping redis-server pid ${orphanPid} left running by an earlier Paretherm process`);
		expect(second.pid).not.toBe(orphanPid);
	}, 120_000);

	it('should share the server of a live owner process instead of starting a second one', async () => {
		const dir = tempDir();
		const owner = new PrivateRedis({ dir, log: () => {} });
		servers.push(owner);
		const target = await owner.start();
		// Pretend another live process (our parent) owns it, as when two web processes share a folder.
		const ownerFile = path.join(dir, 'owner.json');
		fs.writeFileSync(ownerFile, JSON.stringify({ ...JSON.parse(fs.readFileSync(ownerFile, 'utf8')), pid: process.ppid }));
		const logs: string[] = [];
		const second = new PrivateRedis({ dir, log: (m) => logs.push(m) });
		expect(await second.start()).toEqual(target);
		expect(second.shared).toBe(true);
		expect(second.pid).toBeUndefined();
		expect(logs).toEqual([`using the private redis-server of Paretherm process ${process.ppid} at unix:${path.join(dir, 'redis.sock')}`]);
		await second.stop();
		expect(alive(owner.pid)).toBe(true); // not the second one's to stop
	}, 120_000);

	describe('error handling', () => {
		it('should say what to install when redis-server is missing', () => {
			const saved = process.env.REDIS_SERVER_BIN;
			process.env.REDIS_SERVER_BIN = '/nonexistent/redis-server';
			try {
				expect(() => new PrivateRedis({ dir: tempDir() })).toThrow(RedisServerMissingError);
				expect(() => new PrivateRedis({ dir: tempDir() })).toThrow(/apt-get install -y redis-server.*REDIS_URL=redis:\/\/host:6379/s);
			} finally {
				if (saved === undefined) delete process.env.REDIS_SERVER_BIN;
				else process.env.REDIS_SERVER_BIN = saved;
			}
		});

		it('should show the server log when redis-server refuses to start', async () => {
			const dir = tempDir();
			const fake = path.join(dir, 'redis-server');
			fs.writeFileSync(fake, '#!/bin/sh\necho "*** FATAL CONFIG FILE ERROR (test): bad directive"\nexit 1\n', { mode: 0o755 });
			const server = new PrivateRedis({ dir: path.join(dir, 'data'), binary: fake, log: () => {}, startTimeout_ms: 5000 });
			const err = await server.start().then(() => null, (e: Error) => e);
			expect(err?.message).toMatch(/^The private redis-server did not start \(exit code 1\)/);
			expect(err?.message).toMatch(/FATAL CONFIG FILE ERROR \(test\)/);
			expect(err?.message).toMatch(/set REDIS_URL to use another Redis server/);
		});

		it('should refuse a REDIS_URL that is not a Redis URL', async () => {
			const saved = process.env.REDIS_URL;
			process.env.REDIS_URL = 'localhost:6379';
			try {
				await expect(resolveRedis({ dataDir: tempDir() })).rejects.toThrow(/REDIS_URL must look like redis:\/\/host:6379/);
				process.env.REDIS_URL = 'unix:///run/redis/redis.sock';
				expect(targetFromEnv()).toEqual({ kind: 'socket', path: '/run/redis/redis.sock' });
			} finally {
				if (saved === undefined) delete process.env.REDIS_URL;
				else process.env.REDIS_URL = saved;
			}
		});
	});
});
