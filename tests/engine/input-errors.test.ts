import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync, existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import {
	simulate,
	parseScenarioFile,
	exampleScenarioFile,
	EngineInputError,
	ScenarioFileError,
	cellParamsSchema,
	packDesignSchema,
	scenarioSchema,
	strategySchema,
	demoCells,
	demoPack,
	exampleScenario
} from '../../src/lib/engine/index';
import { input, C } from './helpers';

/** Message of the error thrown by fn (fails the test if nothing is thrown). */
function errorOf(fn: () => unknown): Error {
	try {
		fn();
	} catch (e) {
		return e as Error;
	}
	throw new Error('expected an error');
}

describe('input validation', () => {
	it('should accept the demo data', () => {
		// Common practice: shipped demo data must pass its own schemas.
		for (const c of demoCells) expect(cellParamsSchema.safeParse(c).success).toBe(true);
		expect(packDesignSchema.safeParse(demoPack).success).toBe(true);
		expect(scenarioSchema.safeParse(exampleScenario).success).toBe(true);
		expect(strategySchema.safeParse({ leadTime_s: 600, coolantSetpoint_K: C(30) }).success).toBe(true);
	});

	it('should say a set-point above the cell maximum is the problem and what the maximum is', () => {
		// Issue 3 §6 wording example.
		const e = errorOf(() => simulate(input({}, { leadTime_s: 600, coolantSetpoint_K: C(95) })));
		expect(e).toBeInstanceOf(EngineInputError);
		expect((e as EngineInputError).field).toBe('strategy.coolantSetpoint_K');
		expect(e.message).toContain('coolant set-point 95 °C is above the cell\'s maximum temperature 55 °C');
	});

	it('should name the field and the accepted range for out-of-range values', () => {
		// Issue 3 §6: errors say what to change.
		const e = errorOf(() => simulate(input({ charger: { maxCurrent_A: -5, maxPower_W: 150_000 } }))) as EngineInputError;
		expect(e.field).toBe('scenario.charger.maxCurrent_A');
		expect(e.message).toMatch(/charger maximum current -5 A .*positive/);
		const t = errorOf(() => simulate(input({ ambient_K: 20 }))) as EngineInputError;
		expect(t.field).toBe('scenario.ambient_K');
		expect(t.message).toContain('kelvin');
	});

	it('should reject a target below the arrival state of charge', () => {
		const e = errorOf(() => simulate(input({ arrivalSoc: 0.6, target: { soc: 0.5 } }))) as EngineInputError;
		expect(e.field).toBe('scenario.target.soc');
		expect(e.message).toContain('not above the arrival state of charge 60 %');
	});

	it('should reject a drive that needs more energy than the pack holds', () => {
		const e = errorOf(() => simulate(input({ arrivalSoc: 0.5, drive: { duration_s: 7200, profile: { kind: 'constant', power_W: 60_000 } } }))) as EngineInputError;
		expect(e.field).toBe('scenario.drive');
		expect(e.message).toMatch(/needs 120 kWh/);
	});

	it('should reject an OCP table that rises with lithiation, naming the entry', () => {
		const bad = structuredClone(demoCells[1]);
		if (bad.positive.ocp.kind !== 'table') throw new Error('demo LFP uses a table');
		bad.positive.ocp.potential_V[4] = 3.9;
		const r = cellParamsSchema.safeParse(bad);
		expect(r.success).toBe(false);
		if (!r.success) expect(r.error.issues[0].path.join('.')).toBe('positive.ocp.potential_V.4');
	});
});

describe('scenario files', () => {
	it('should parse the example file', () => {
		const inp = parseScenarioFile(JSON.parse(JSON.stringify(exampleScenarioFile())));
		expect(inp.cell.id).toBe('demo-nmc-pouch');
		expect(inp.pack.id).toBe('demo-van-pack');
		const full = parseScenarioFile(JSON.parse(JSON.stringify(exampleScenarioFile(true))));
		expect(full.cell).toEqual(inp.cell);
	});

	it('should name the field of a bad file', () => {
		const file = exampleScenarioFile() as { scenario: Record<string, unknown> };
		const cases: [unknown, string][] = [
			[{ ...file, cell: 'no-such-cell' }, 'cell'],
			[{ ...file, scenario: { ...file.scenario, stateOfHealth: undefined } }, 'scenario.stateOfHealth'],
			[{ ...file, scenario: { ...file.scenario, drive: { duration_s: 600, profile: { kind: 'wavy' } } } }, 'scenario.drive.profile.kind'],
			[{ ...file, strategy: { leadTime_s: 'ten', coolantSetpoint_K: 300 } }, 'strategy.leadTime_s'],
			[{ ...file, scenaro: {} }, 'scenaro'],
			[[1, 2], '']
		];
		for (const [json, field] of cases) {
			const e = errorOf(() => parseScenarioFile(json)) as ScenarioFileError;
			expect(e, JSON.stringify(json).slice(0, 80)).toBeInstanceOf(ScenarioFileError);
			expect(e.field).toBe(field);
		}
	});
});

describe('command line', () => {
	const dir = mkdtempSync(join(tmpdir(), 'paretherm-cli-'));
	const run = (...args: string[]) =>
		spawnSync(process.execPath, ['--import', 'tsx', 'scripts/simulate.ts', ...args], { encoding: 'utf8', cwd: process.cwd(), timeout: 60_000 });

	it('should exit 1 with one line naming the field and no stack trace for a bad file', () => {
		const bad = join(dir, 'bad.json');
		writeFileSync(bad, JSON.stringify({ ...exampleScenarioFile(), strategy: { leadTime_s: 600, coolantSetpoint_K: C(95) } }));
		const r = run(bad);
		expect(r.status).toBe(1);
		expect(r.stdout).toBe('');
		const lines = r.stderr.trim().split('\n');
		expect(lines).toHaveLength(1);
		expect(lines[0]).toContain('strategy.coolantSetpoint_K');
		expect(r.stderr).not.toMatch(/\bat .*\.ts:\d+/);
		const broken = join(dir, 'broken.json');
		writeFileSync(broken, '{ "scenario": ');
		const r2 = run(broken);
		expect(r2.status).toBe(1);
		expect(r2.stderr).toContain('not valid JSON');
	});

	it('should print the summary and write summary.json and series.csv with --out', () => {
		const file = join(dir, 'ok.json');
		writeFileSync(file, JSON.stringify(exampleScenarioFile()));
		const out = join(dir, 'out');
		const r = run(file, '--out', out);
		expect(r.status).toBe(0);
		expect(JSON.parse(r.stdout).reachedTarget).toBe(true);
		expect(existsSync(join(out, 'summary.json'))).toBe(true);
		const csv = readFileSync(join(out, 'series.csv'), 'utf8').trim().split('\n');
		expect(csv[0].split(',')).toContain('anodePotential_V');
		expect(csv.length).toBeGreaterThan(100);
	});
});
