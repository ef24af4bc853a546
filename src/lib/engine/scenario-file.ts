/**
 * The scenario file (Paretherm's own JSON format, documented in
 * docs/scenario-format.md):
 *
 *   { "cell": "demo-nmc-pouch" | {…cell parameters…},      optional, default demo-nmc-pouch
 *     "pack": "demo-van-pack"  | {…pack design…},          optional, default demo-van-pack
 *     "scenario": {…},                                     required
 *     "strategy": { leadTime_s, coolantSetpoint_K, heaterPowerCap_W? } | null,  optional, null = baseline
 *     "options": { protocol?, seriesInterval_s?, … } }     optional
 *
 * Pure: takes already-parsed JSON, returns a validated SimulationInput or
 * throws ScenarioFileError naming the field.
 */
import { demoCells, demoPacks, exampleScenario, findDemoCell, findDemoPack } from './demo';
import { simulationInputSchema, zodIssues, type SimulationInput, type CellParams, type PackDesign } from './schemas';

export interface ScenarioFile {
	cell?: string | CellParams;
	pack?: string | PackDesign;
	scenario: unknown;
	strategy?: unknown;
	options?: unknown;
}

export class ScenarioFileError extends Error {
	readonly field: string;
	readonly issues: string[];
	constructor(field: string, message: string, issues?: string[]) {
		super(field ? `${field}: ${message}` : message);
		this.name = 'ScenarioFileError';
		this.field = field;
		this.issues = issues ?? [this.message];
	}
}

const TOP_LEVEL = ['cell', 'pack', 'scenario', 'strategy', 'options', '$schema', 'description'];

export function parseScenarioFile(json: unknown): SimulationInput {
	if (json === null || typeof json !== 'object' || Array.isArray(json)) {
		throw new ScenarioFileError('', 'the scenario file must be a JSON object with at least a "scenario" field');
	}
	const file = json as Record<string, unknown>;
	for (const key of Object.keys(file)) {
		if (!TOP_LEVEL.includes(key)) {
			throw new ScenarioFileError(key, `unknown top-level field; expected cell, pack, scenario, strategy or options`);
		}
	}
	if (file.scenario === undefined) throw new ScenarioFileError('scenario', 'is missing; add a "scenario" object (see --example)');
	let cell: unknown = file.cell ?? 'demo-nmc-pouch';
	if (typeof cell === 'string') {
		const found = findDemoCell(cell);
		if (!found) {
			throw new ScenarioFileError('cell', `unknown cell id "${cell}"; use one of ${demoCells.map((c) => c.id).join(', ')} or give the cell parameters as an object`);
		}
		cell = found;
	}
	let pack: unknown = file.pack ?? 'demo-van-pack';
	if (typeof pack === 'string') {
		const found = findDemoPack(pack);
		if (!found) {
			throw new ScenarioFileError('pack', `unknown pack id "${pack}"; use one of ${demoPacks.map((p) => p.id).join(', ')} or give the pack design as an object`);
		}
		pack = found;
	}
	const candidate = { cell, pack, scenario: file.scenario, strategy: file.strategy ?? null, options: file.options };
	const parsed = simulationInputSchema.safeParse(candidate);
	if (!parsed.success) {
		const issues = zodIssues(parsed.error);
		const first = issues[0];
		throw new ScenarioFileError(first.field, first.message, issues.map((i) => (i.field ? `${i.field}: ${i.message}` : i.message)));
	}
	return parsed.data as SimulationInput;
}

/** A complete example file. `embed` puts the full cell and pack objects in instead of their ids. */
export function exampleScenarioFile(embed = false): ScenarioFile {
	return {
		cell: embed ? demoCells[0] : demoCells[0].id,
		pack: embed ? demoPacks[0] : demoPacks[0].id,
		scenario: exampleScenario,
		strategy: { leadTime_s: 900, coolantSetpoint_K: 303.15 },
		options: { protocol: 'plating-limited', seriesInterval_s: 10 }
	};
}
