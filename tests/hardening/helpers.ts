/**
 * Shared set-up of the hardening suites: a data folder seeded by fixtures/seed.ts (demo program,
 * a finished sweep, a second program with its own engineer and sweep), the built app on it, and
 * the ids every route parameter needs, looked up in the database.
 */
import { Client, DEMO, DEMO_PASSWORD, seed, startApp, tempDataDir, type RunningApp } from '../helpers/app';
import { queryDb } from '../helpers/db-checksum';

export const OUTSIDER = 'outsider@paretherm.test';
export const OTHER_PROGRAM = 'Other program (hardening)';
export { DEMO, DEMO_PASSWORD };

export interface Ids {
	programId: number;
	sweepId: number;
	pointId: number;
	baselinePointId: number;
	inputId: number;
	strategyId: number;
	messageId: number;
	otherProgramId: number;
	otherSweepId: number;
	otherPointId: number;
	otherInputId: number;
	otherStrategyId: number;
}

export async function seedHardening(dataDir = tempDataDir('paretherm-hardening-'), opts: { sweeps?: boolean } = {}): Promise<string> {
	await seed(dataDir, 'tests/hardening/fixtures/seed.ts', { HARDENING_SEED_SWEEPS: opts.sweeps === false ? '0' : '1' });
	return dataDir;
}

export async function startHardenedApp(opts: { env?: Record<string, string>; dataDir?: string } = {}): Promise<RunningApp> {
	const dataDir = opts.dataDir ?? (await seedHardening());
	return startApp({ dataDir, seed: false, env: opts.env });
}

export async function signedIn(app: RunningApp, email: string | null): Promise<Client> {
	const c = new Client(app.url);
	if (email) {
		const res = await c.signIn(email, DEMO_PASSWORD);
		if (res.status !== 303) throw new Error(`sign-in of ${email} answered ${res.status}`);
	}
	return c;
}

/** Every id kind on both sides of the program boundary; promotes one point per program to a strategy. */
export async function lookUpIds(app: RunningApp): Promise<Ids> {
	const one = async (sql: string, params: unknown[] = []) => {
		const rows = await queryDb<{ id: number }>(app.dataDir, sql, params);
		if (!rows.length) throw new Error(`nothing found for ${sql}`);
		return rows[0].id;
	};
	const programId = await one("SELECT id FROM programs WHERE name LIKE '%(demo)' ORDER BY id");
	const otherProgramId = await one('SELECT id FROM programs WHERE name = ?', [OTHER_PROGRAM]);
	const sweepId = await one("SELECT id FROM sweeps WHERE program_id = ? AND status = 'done' ORDER BY id", [programId]);
	const otherSweepId = await one("SELECT id FROM sweeps WHERE program_id = ? AND status = 'done' ORDER BY id", [otherProgramId]);
	const pointId = await one('SELECT id FROM sweep_points WHERE sweep_id = ? AND strategy_index IS NOT NULL ORDER BY on_front DESC, id', [sweepId]);
	const baselinePointId = await one('SELECT id FROM sweep_points WHERE sweep_id = ? AND strategy_index IS NULL ORDER BY id', [sweepId]);
	const otherPointId = await one('SELECT id FROM sweep_points WHERE sweep_id = ? AND strategy_index IS NOT NULL ORDER BY on_front DESC, id', [otherSweepId]);
	const inputId = await one("SELECT id FROM parameter_sets WHERE program_id = ? AND kind = 'scenario' ORDER BY id", [programId]);
	const otherInputId = await one("SELECT id FROM parameter_sets WHERE program_id = ? AND kind = 'scenario' ORDER BY id", [otherProgramId]);
	const promote = async (email: string, pid: number, sid: number, ptid: number) => {
		const existing = await queryDb<{ id: number }>(app.dataDir, 'SELECT id FROM strategies WHERE point_id = ? ORDER BY id', [ptid]);
		if (existing.length) return existing[0].id;
		const c = await signedIn(app, email);
		const res = await c.form(`/programs/${pid}/sweeps/${sid}/points/${ptid}?/promote`, { title: 'Hardening strategy', rationale: 'for the hardening suites' });
		const m = /strategies\/(\d+)/.exec(res.headers.get('location') ?? '');
		if (!m) throw new Error(`promote answered ${res.status}`);
		return Number(m[1]);
	};
	const strategyId = await promote(DEMO.engineer, programId, sweepId, pointId);
	const otherStrategyId = await promote(OUTSIDER, otherProgramId, otherSweepId, otherPointId);
	const messages = await queryDb<{ id: number }>(app.dataDir, 'SELECT id FROM mail_outbox ORDER BY id LIMIT 1');
	return { programId, sweepId, pointId, baselinePointId, inputId, strategyId, messageId: messages[0]?.id ?? 1, otherProgramId, otherSweepId, otherPointId, otherInputId, otherStrategyId };
}

/** A route id with its parameters filled from `ids` (unknown parameters: `fallback`). */
export function fillRoute(id: string, ids: Ids, fallback = '1'): string {
	const value: Record<string, number | string> = {
		programId: ids.programId,
		sweepId: ids.sweepId,
		pointId: ids.pointId,
		strategyId: ids.strategyId,
		inputId: ids.inputId,
		messageId: ids.messageId,
		token: 'abcdefghijklmnopqrstuvwxyz234567'
	};
	return id.replace(/\[(\w+)\]/g, (_, name: string) => String(value[name] ?? fallback));
}
