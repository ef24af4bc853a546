/**
 * Cross-program guessing of every id kind, for every route of the route tree that addresses an
 * object inside a program (sweep, point, strategy, input, and any kind added later). Two programs
 * each hold one object of every kind. Requests that pair a program with another program's object
 * must answer 404 — from the outsider (a member of the other program only) and from an
 * administrator (who may read both programs, so only the object's program binding can stop it) —
 * and requests that would be valid if the binding were missing (a comment, a move, a promotion, a
 * save, a cancel) must store nothing.
 *
 * Id kinds are found by name: [fooId] is looked up in the table `foos` or `*_foos` that has a
 * program_id column (or in a known table for the kinds that predate this suite). A kind with no
 * object in the seeded data is reported, not silently passed.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Client, type RunningApp } from '../helpers/app';
import { databaseChecksum, queryDb } from '../helpers/db-checksum';
import { listRoutes } from '../helpers/routes';
import { DEMO, OUTSIDER, lookUpIds, signedIn, startHardenedApp, type Ids } from './helpers';

let app: RunningApp;
let ids: Ids;
let admin: Client;
let outsider: Client;
/** Per id kind: [object in the demo program, object in the other program]. */
const pairs = new Map<string, [number, number]>();
const unseeded: string[] = [];

async function findPair(param: string): Promise<[number, number] | null> {
	const known: Record<string, [number, number]> = {
		sweepId: [ids.sweepId, ids.otherSweepId],
		pointId: [ids.pointId, ids.otherPointId],
		strategyId: [ids.strategyId, ids.otherStrategyId],
		inputId: [ids.inputId, ids.otherInputId]
	};
	if (known[param]) return known[param];
	const base = param.replace(/Id$/, '').replace(/[A-Z]/g, (ch) => `_${ch.toLowerCase()}`);
	const tables = (await queryDb<{ name: string }>(app.dataDir, "SELECT name FROM sqlite_master WHERE type = 'table'")).map((t) => t.name);
	for (const t of tables.filter((n) => n === `${base}s` || n.endsWith(`_${base}s`))) {
		const cols = (await queryDb<{ name: string }>(app.dataDir, `PRAGMA table_info("${t}")`)).map((c) => c.name);
		if (!cols.includes('program_id') || !cols.includes('id')) continue;
		const a = await queryDb<{ id: number }>(app.dataDir, `SELECT id FROM "${t}" WHERE program_id = ? ORDER BY id LIMIT 1`, [ids.programId]);
		const b = await queryDb<{ id: number }>(app.dataDir, `SELECT id FROM "${t}" WHERE program_id = ? ORDER BY id LIMIT 1`, [ids.otherProgramId]);
		if (a.length && b.length) return [a[0].id, b[0].id];
	}
	return null;
}

/** A body that the action would accept if the object belonged to the program in the URL. */
async function plausibleBody(action: string | null): Promise<Record<string, string>> {
	switch (action) {
		case 'comment':
			return { body: 'cross-program comment' };
		case 'move':
			return { to: 'endorsed', note: '' };
		case 'promote':
			return { title: 'cross-program strategy', rationale: '' };
		case 'save': {
			const [row] = await queryDb<{ data: string }>(app.dataDir, 'SELECT data FROM parameter_sets WHERE id = ?', [ids.otherInputId]);
			return { name: 'cross-program save', json: row.data };
		}
		default:
			return {};
	}
}

beforeAll(async () => {
	app = await startHardenedApp({ env: { PARETHERM_NO_RUNTIME: '1' } });
	ids = await lookUpIds(app);
	admin = await signedIn(app, DEMO.admin);
	outsider = await signedIn(app, OUTSIDER);
	const params = new Set<string>();
	for (const r of listRoutes()) for (const m of r.id.matchAll(/\[(\w+)\]/g)) if (!['programId', 'token', 'messageId'].includes(m[1])) params.add(m[1]);
	for (const p of params) {
		const pair = await findPair(p);
		if (pair) pairs.set(p, pair);
		else unseeded.push(p);
	}
}, 240_000);

afterAll(async () => {
	await app?.stop();
});

describe('cross-program ids', () => {
	it('should find objects on both sides for the id kinds this suite seeds', () => {
		for (const p of ['sweepId', 'pointId', 'strategyId', 'inputId']) expect(pairs.has(p), p).toBe(true);
		if (unseeded.length) console.warn(`[cross-program] no seeded object on both sides for: ${unseeded.join(', ')} (routes using them are checked with the other kinds only)`);
	});

	it('should answer 404 to every program/object pairing across programs, and store nothing', async () => {
		const before = await databaseChecksum(app.dataDir, ['sessions']);
		const problems: string[] = [];
		let tried = 0;
		for (const r of listRoutes()) {
			if (!r.id.includes('[programId]')) continue;
			const objectParams = [...r.id.matchAll(/\[(\w+)\]/g)].map((m) => m[1]).filter((p) => p !== 'programId');
			if (!objectParams.length || objectParams.some((p) => !pairs.has(p))) continue;
			const calls: { method: string; action: string | null }[] =
				r.kind === 'page' ? [{ method: 'GET', action: null }, ...r.actions.map((a) => ({ method: 'POST', action: a }))] : r.methods.map((m) => ({ method: m, action: null }));
			// Which object comes from the other program: each one alone, and all of them.
			const variants: Record<string, 0 | 1>[] = [...objectParams.map((p) => Object.fromEntries(objectParams.map((q) => [q, q === p ? 1 : 0])) as Record<string, 0 | 1>), Object.fromEntries(objectParams.map((q) => [q, 1])) as Record<string, 0 | 1>];
			for (const variant of variants) {
				for (const [who, client, programId] of [
					['admin', admin, ids.programId],
					['outsider', outsider, ids.otherProgramId]
				] as const) {
					// The outsider addresses its own program with the demo program's objects.
					const side = (p: string) => (who === 'outsider' ? 1 - variant[p] : variant[p]) as 0 | 1;
					if (who === 'outsider' && objectParams.every((p) => side(p) === 1)) continue; // all its own: legitimately allowed
					const url = r.id.replace('[programId]', String(programId)).replace(/\[(\w+)\]/g, (_, p: string) => String(pairs.get(p)![side(p)]));
					for (const { method, action } of calls) {
						const target = action && action !== 'default' ? `${url}?/${action}` : url;
						const res = method === 'GET' ? await client.get(target) : action !== null ? await client.form(target, await plausibleBody(action)) : await client.json(target, method, {});
						tried++;
						if (res.status !== 404) problems.push(`${who} ${method} ${target}: ${res.status}`);
					}
				}
			}
		}
		expect(tried).toBeGreaterThan(50);
		expect(problems).toEqual([]);
		expect(await databaseChecksum(app.dataDir, ['sessions'])).toBe(before);
	}, 300_000);

	it('should refuse another program’s input named in a form field', async () => {
		const res = await admin.form(`/programs/${ids.programId}/inputs?/duplicate`, { inputId: String(ids.otherInputId) });
		expect(res.status).toBe(404);
		const mine = await outsider.form(`/programs/${ids.otherProgramId}/inputs?/duplicate`, { inputId: String(ids.inputId) });
		expect(mine.status).toBe(404);
	});
});
