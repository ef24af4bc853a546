/**
 * Admission and order of sweep work on a REAL redis-server, with no worker running so every
 * chunk stays queued until the test takes it: caps on queued simulations per person and per
 * program (429 saying how much is queued and the cap, nothing stored), fair order between
 * programs (a small sweep of one program is not stuck behind another program's backlog), and a
 * cancel that answers while Redis is held (CLIENT PAUSE), withdrawing the chunks afterwards.
 * Caps and fair order: common practice, no source.
 */
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { Redis } from 'ioredis';
import { Worker } from 'bullmq';

process.env.PARETHERM_DATA_DIR = fs.mkdtempSync(path.join(os.tmpdir(), 'paretherm-admission-'));
process.env.PARETHERM_IN_PROCESS_WORKER = '0';
process.env.PARETHERM_QUEUE_PREFIX = `padm${process.pid}`;
process.env.PARETHERM_RECONCILE_MS = '600000'; // no periodic pass while the test holds the queue
process.env.PARETHERM_MAX_QUEUED_PER_USER = '300';
process.env.PARETHERM_MAX_QUEUED_PER_PROGRAM = '500';

const { startTestRedis, seedSweepProgram, smallSweepRequest, waitFor } = await import('../helpers/sweeps');
const { createUser } = await import('../../src/lib/server/auth/users');
const { Membership, Sweep } = await import('../../src/lib/server/db/models/index');
const { createSweep, cancelSweep, settleWithdrawals, SweepInputError } = await import('../../src/lib/server/sweeps/service');
const { activeQueue } = await import('../../src/lib/server/sweeps/registry');
const { chunkJobId, QUEUE_PREFIX, SWEEP_QUEUE } = await import('../../src/lib/server/queue/names');
const runtime = await import('../../src/lib/server/sweeps/runtime');
const sweepsRoute = await import('../../src/routes/api/programs/[programId]/sweeps/+server');
const builderPage = await import('../../src/routes/programs/[programId]/sweeps/new/+page.server');

type TestRedis = Awaited<ReturnType<typeof startTestRedis>>;
let redis: TestRedis;
let programA: number;
let users: Record<'one' | 'two' | 'three', string>;

/** 2 scenarios × (100 strategies + baseline) = 202 simulations. */
const big = (chunkSize?: number) => smallSweepRequest({ leadTimes_s: [0, 60, 120, 180, 240, 300, 360, 420, 480, 540], setpoints_C: [10, 13, 16, 19, 22, 25, 28, 31, 34, 37], chunkSize });

async function member(email: string, programs: number[]): Promise<string> {
	const u = await createUser({ email, name: email.split('@')[0], password: 'long-enough-pw' });
	for (const p of programs) await Membership.create({ program_id: p, user_id: u.id, role: 'engineer' });
	return u.id;
}

async function refusal(p: Promise<unknown>): Promise<InstanceType<typeof SweepInputError>> {
	try {
		await p;
	} catch (e) {
		if (e instanceof SweepInputError) return e;
		throw e;
	}
	throw new Error('the sweep was accepted');
}

beforeAll(async () => {
	redis = await startTestRedis();
	process.env.REDIS_URL = redis.url;
	await runtime.startSweepRuntime({ inProcessWorker: false });
	programA = await seedSweepProgram('Program A');
	users = { one: await member('one@example.org', [programA]), two: await member('two@example.org', [programA]), three: await member('three@example.org', [programA]) };
}, 60_000);

afterAll(async () => {
	await runtime.stopSweepRuntime();
	await redis?.stop();
	fs.rmSync(process.env.PARETHERM_DATA_DIR!, { recursive: true, force: true });
});

async function cancelAll() {
	for (const s of await Sweep.findAll({ where: { status: ['queued', 'running'] } })) await cancelSweep(s.id);
	await settleWithdrawals();
}

describe('caps on queued simulations', () => {
	afterAll(cancelAll);

	it('should refuse a person’s sweep past the per-person cap, saying how much is queued, and store nothing', async () => {
		const first = await createSweep(programA, users.one, big());
		expect(first.simulation_count).toBe(202);
		const before = await Sweep.count();
		const e = await refusal(createSweep(programA, users.one, big()));
		expect(e.status).toBe(429);
		expect(e.field).toBe('definition');
		expect(e.message).toMatch(/adds 202 simulations to the 202 your sweeps still have queued or running; the limit per person is 300\./);
		expect(await Sweep.count()).toBe(before);
	});

	it('should refuse past the per-program cap even for a person with room', async () => {
		await createSweep(programA, users.two, big()); // programme: 404 queued
		const e = await refusal(createSweep(programA, users.three, big()));
		expect(e.status).toBe(429);
		expect(e.message).toMatch(/adds 202 simulations to the 404 this program's sweeps still have queued or running; the limit per program is 500\./);
	});

	it('should answer the JSON API with 429 and { error, field }', async () => {
		const res = await sweepsRoute.POST({
			locals: { user: { id: users.one, email: 'one@example.org', name: 'one', isAdmin: false }, session: null },
			params: { programId: String(programA) },
			request: new Request('http://localhost/api', { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(big()) })
		} as never);
		expect(res.status).toBe(429);
		const body = await res.json();
		expect(body.field).toBe('definition');
		expect(body.error).toMatch(/the limit per person is 300/);
	});

	it('should answer the sweep builder form with the same message', async () => {
		const fields: Record<string, string> = { name: 'over the cap', scenarioId: 'short-stop', cells: 'nmc', packs: 'pack', ambients: '-10, 0', soh: '100', socs: '20', leadTimes: '0 1 2 3 4 5 6 7 8 9', setpoints: '10 13 16 19 22 25 28 31 34 37', heaterCaps: '', budget: '' };
		const form = new FormData();
		for (const [k, v] of Object.entries(fields)) form.set(k, v);
		const before = await Sweep.count();
		const result = (await builderPage.actions.default({
			locals: { user: { id: users.one, email: 'one@example.org', name: 'one', isAdmin: false }, session: null },
			params: { programId: String(programA) },
			request: new Request('http://localhost/programs/x/sweeps/new', { method: 'POST', body: form })
		} as never)) as { status: number; data: { message: string } };
		expect(result.status).toBe(429);
		expect(result.data.message).toMatch(/adds 202 simulations to the 202 your sweeps still have queued or running; the limit per person is 300\./);
		expect(await Sweep.count()).toBe(before);
	});

	it('should make room again once a sweep is cancelled', async () => {
		const mine = await Sweep.findOne({ where: { created_by: users.one, status: 'queued' } });
		expect(await cancelSweep(mine!.id)).toBe(true);
		const again = await createSweep(programA, users.one, big());
		expect(again.status).toBe('queued');
	});
});

describe('order between programs', () => {
	let recorder: Worker | null = null;
	afterAll(async () => {
		await recorder?.close();
		await cancelAll();
	});

	it('should let a later small sweep of another program run before the first program’s backlog', async () => {
		const programC = await seedSweepProgram('Program C');
		const programD = await seedSweepProgram('Program D');
		const c = await createSweep(programC, null, smallSweepRequest({ chunkSize: 1 })); // 20 chunks
		const d = await createSweep(programD, null, smallSweepRequest({ chunkSize: 10 })); // 2 chunks
		expect(c.chunk_count).toBe(20);
		expect(d.chunk_count).toBe(2);

		// A worker that only records the order it is given jobs in (its results are discarded).
		const order: string[] = [];
		recorder = new Worker(
			SWEEP_QUEUE,
			async (job) => {
				order.push(String(job.id));
				return { sweepId: job.data.sweepId, chunkIndex: job.data.chunkIndex, cancelled: true, points: [], worker: 'recorder', attempt: 1, elapsed_ms: 0 };
			},
			{ connection: { host: '127.0.0.1', port: Number(new URL(redis.url).port) }, prefix: QUEUE_PREFIX, concurrency: 1 }
		);
		await waitFor('six jobs taken', async () => order.length >= 6 || null, 30_000);
		await recorder.close();
		recorder = null;
		const firstFour = order.slice(0, 4);
		expect(firstFour).toContain(chunkJobId(d.id, d.queue_token, 0));
		expect(firstFour).toContain(chunkJobId(d.id, d.queue_token, 1));
		expect(order[0]).toBe(chunkJobId(c.id, c.queue_token, 0)); // first come, first served within a priority
	}, 60_000);
});

describe('cancel', () => {
	let pauser: Redis | null = null;
	afterEach(async () => {
		await pauser?.call('CLIENT', 'UNPAUSE');
		pauser?.disconnect();
		pauser = null;
	});

	it('should answer at once while the queue is held, and withdraw the queued chunks afterwards', async () => {
		const programE = await seedSweepProgram('Program E');
		const sweep = await createSweep(programE, null, big(1));
		expect(sweep.chunk_count).toBe(202);
		const queue = activeQueue()!;
		expect(await queue.getJob(chunkJobId(sweep.id, sweep.queue_token, 201))).toBeTruthy();

		// Hold every Redis write for a minute: a cancel that waited on the queue would not answer.
		pauser = new Redis(redis.url);
		await pauser.call('CLIENT', 'PAUSE', '60000', 'WRITE');
		expect(await cancelSweep(sweep.id)).toBe(true);
		expect((await Sweep.findByPk(sweep.id))!.status).toBe('cancelled');
		await pauser.call('CLIENT', 'UNPAUSE');

		await settleWithdrawals();
		for (let i = 0; i < sweep.chunk_count; i++) expect(await queue.getJob(chunkJobId(sweep.id, sweep.queue_token, i)), `chunk ${i}`).toBeUndefined();
	}, 15_000);
});
