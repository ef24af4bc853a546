/**
 * Helpers for the sweep suites: a throw-away real redis-server (BullMQ needs real Redis), a
 * program seeded with the demo cell/pack and a short, fast scenario, and small sweep requests.
 * Import this only after PARETHERM_DATA_DIR is set: it loads the database modules.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { Redis } from 'ioredis';

import { ROOT, freePort } from './app';

export { ROOT, freePort };
export const TSX = path.join(ROOT, 'node_modules/.bin/tsx');
export const C = (celsius: number) => celsius + 273.15;

export interface TestRedis {
	url: string;
	proc: ChildProcess;
	stop(): Promise<void>;
}

/** A real redis-server on a random loopback port, data in a temp folder, no persistence. */
export async function startTestRedis(): Promise<TestRedis> {
	const bin = ['/usr/bin/redis-server', '/usr/local/bin/redis-server'].find((p) => fs.existsSync(p)) ?? 'redis-server';
	const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'paretherm-redis-'));
	const port = await freePort();
	const proc = spawn(bin, ['--port', String(port), '--bind', '127.0.0.1', '--dir', dir, '--save', '', '--appendonly', 'no', '--maxmemory-policy', 'noeviction'], {
		stdio: 'ignore'
	});
	const url = `redis://127.0.0.1:${port}`;
	const deadline = Date.now() + 10_000;
	for (;;) {
		const c = new Redis(url, { lazyConnect: true, maxRetriesPerRequest: 0, retryStrategy: () => null });
		c.on('error', () => {});
		try {
			await c.connect();
			if ((await c.ping()) === 'PONG') break;
		} catch {
			/* not up yet */
		} finally {
			c.disconnect();
		}
		if (Date.now() > deadline || proc.exitCode !== null)
			throw new Error(`redis-server did not start (is it installed? apt-get install -y redis-server)`);
		await new Promise((r) => setTimeout(r, 50));
	}
	return {
		url,
		proc,
		async stop() {
			if (proc.exitCode !== null || proc.signalCode !== null) return;
			const exited = new Promise((r) => proc.once('exit', r));
			proc.kill('SIGTERM');
			await exited;
			fs.rmSync(dir, { recursive: true, force: true });
		}
	};
}

/**
 * A short stop so one simulation takes tens of milliseconds: 5 min drive at a constant 20 kW,
 * 1 min to plug in, charge from 20 % to 50 %.
 */
export async function fastScenario() {
	const { exampleScenario } = await import('../../src/lib/engine/index');
	return {
		...exampleScenario,
		name: 'Short test stop',
		drive: { duration_s: 300, profile: { kind: 'constant' as const, power_W: 20_000 } },
		dwell_s: 60,
		target: { soc: 0.5 }
	};
}

/** A program with cell "nmc", pack "pack" and scenario "short-stop" (data dir must be set). */
export async function seedSweepProgram(name = `Sweep test ${Date.now()}`): Promise<number> {
	const { ensureDb } = await import('../../src/lib/server/db/index');
	const { Program, ParameterSet } = await import('../../src/lib/server/db/models/index');
	const { demoCells, demoPack } = await import('../../src/lib/engine/index');
	await ensureDb();
	const program = await Program.create({ name, description: 'created by a sweep test' });
	const scenario = await fastScenario();
	const rows: [string, string, unknown][] = [
		['cell', 'nmc', demoCells[0]],
		['pack', 'pack', demoPack],
		['scenario', 'short-stop', scenario]
	];
	for (const [kind, slug, data] of rows)
		await ParameterSet.create({ program_id: program.id, kind, slug, version: 1, name: slug, data: JSON.stringify(data), created_by: null });
	return program.id;
}

/** A sweep request over the seeded program: scenarios × strategies as asked. */
export function smallSweepRequest(opts: { ambients_C?: number[]; leadTimes_s?: number[]; setpoints_C?: number[]; chunkSize?: number; fastestWithinEnergy_Wh?: number } = {}) {
	return {
		name: 'small test sweep',
		scenarioId: 'short-stop',
		definition: {
			cellIds: ['nmc'],
			packIds: ['pack'],
			ambients_K: (opts.ambients_C ?? [-10, 0]).map(C),
			statesOfHealth: [1],
			arrivalSocs: [0.2],
			leadTimes_s: opts.leadTimes_s ?? [0, 300, 600],
			setpoints_K: (opts.setpoints_C ?? [15, 25, 35]).map(C)
		},
		...(opts.chunkSize ? { chunkSize: opts.chunkSize } : {}),
		...(opts.fastestWithinEnergy_Wh !== undefined ? { fastestWithinEnergy_Wh: opts.fastestWithinEnergy_Wh } : {})
	};
}

export function sleep(ms: number): Promise<void> {
	return new Promise((r) => setTimeout(r, ms));
}

export async function waitFor<T>(what: string, fn: () => Promise<T | null | undefined | false>, timeout_ms = 180_000, every_ms = 50): Promise<T> {
	const deadline = Date.now() + timeout_ms;
	for (;;) {
		const v = await fn();
		if (v) return v;
		if (Date.now() > deadline) throw new Error(`Timed out after ${timeout_ms} ms waiting for ${what}`);
		await sleep(every_ms);
	}
}
