/**
 * Resolving a sweep's references (cell, pack and scenario parameter sets of the program) into a
 * snapshot of engine inputs stored on the sweep row. The snapshot — not the parameter sets — is
 * what jobs are built from, so a sweep re-enqueued after a restart, or read a year later, uses
 * exactly the inputs it was created with even if the parameter sets gained new versions.
 */
import { Op } from 'sequelize';
import { ParameterSet, type ParameterKind } from '../db/models/index';
import {
	cellParamsSchema,
	packDesignSchema,
	scenarioSchema,
	simulationInputSchema,
	type CellParams,
	type PackDesign,
	type Scenario
} from '../../engine/schemas';
import { expandScenarios, expandStrategies, type SweepDefinition } from '../../engine/sweep-grid';
import type { ScenarioInputs, StrategyInput } from '../queue/jobs';
import { SweepInputError, fieldPath, type SweepRequest } from './request';

export const INPUTS_FORMAT = 'paretherm-sweep-inputs/1';

export interface ParameterRef<T> {
	parameterSetId: number;
	slug: string;
	version: number;
	name: string;
	data: T;
}

export interface SweepInputs {
	format: typeof INPUTS_FORMAT;
	/** Drive, dwell, charger, target; ambient, state of health and arrival SOC come from the axes. */
	baseScenario: ParameterRef<Scenario>;
	/** Keyed by the id as written in the definition (slug or slug@version). */
	cells: Record<string, ParameterRef<CellParams>>;
	packs: Record<string, ParameterRef<PackDesign>>;
}

const KIND_WORDS: Record<ParameterKind, string> = { cell: 'cell', pack: 'pack', scenario: 'scenario' };

/** `slug` (latest version) or `slug@version`. */
async function findParameterSet(programId: number, kind: ParameterKind, ref: string, field: string): Promise<ParameterSet> {
	const m = /^(.+)@([1-9][0-9]*)$/.exec(ref);
	const slug = m ? m[1] : ref;
	const where = { program_id: programId, kind, slug, ...(m ? { version: Number(m[2]) } : {}) };
	const row = await ParameterSet.findOne({ where, order: [['version', 'DESC']] });
	if (row) return row;
	const available = await ParameterSet.findAll({
		where: { program_id: programId, kind, version: { [Op.gte]: 1 } },
		attributes: ['slug'],
		group: ['slug'],
		order: [['slug', 'ASC']]
	});
	const list = available.map((r) => r.slug);
	const versionWords = m ? ` version ${m[2]}` : '';
	throw new SweepInputError(
		`No ${KIND_WORDS[kind]} “${slug}”${versionWords} in this program. ` +
			(list.length ? `Available: ${list.slice(0, 20).join(', ')}${list.length > 20 ? ', …' : ''}.` : `Create a ${KIND_WORDS[kind]} first.`),
		field
	);
}

function parseStored<T>(row: ParameterSet, schema: { safeParse(v: unknown): { success: true; data: T } | { success: false; error: { issues: { path: (string | number)[]; message: string }[] } } }, field: string): T {
	let raw: unknown;
	try {
		raw = JSON.parse(row.data);
	} catch {
		throw new SweepInputError(`The stored ${row.kind} “${row.slug}” version ${row.version} is not valid JSON; save it again.`, field);
	}
	const parsed = schema.safeParse(raw);
	if (!parsed.success) {
		const issue = parsed.error.issues[0];
		throw new SweepInputError(
			`The ${row.kind} “${row.slug}” version ${row.version} is not usable: ${fieldPath(issue.path)}: ${issue.message}. Fix it and save a new version.`,
			field
		);
	}
	return parsed.data;
}

function ref<T>(row: ParameterSet, data: T): ParameterRef<T> {
	return { parameterSetId: row.id, slug: row.slug, version: row.version, name: row.name, data };
}

/** Look up every referenced parameter set of the program and snapshot it. */
export async function resolveSweepInputs(programId: number, req: SweepRequest): Promise<SweepInputs> {
	const def = req.definition;
	const scenarioRow = await findParameterSet(programId, 'scenario', req.scenarioId, 'scenarioId');
	const baseScenario = ref(scenarioRow, parseStored<Scenario>(scenarioRow, scenarioSchema, 'scenarioId'));
	const cells: SweepInputs['cells'] = {};
	for (const [i, id] of def.cellIds.entries()) {
		const field = `definition.cellIds[${i}]`;
		const row = await findParameterSet(programId, 'cell', id, field);
		cells[id] = ref(row, parseStored<CellParams>(row, cellParamsSchema, field));
	}
	const packs: SweepInputs['packs'] = {};
	for (const [i, id] of def.packIds.entries()) {
		const field = `definition.packIds[${i}]`;
		const row = await findParameterSet(programId, 'pack', id, field);
		packs[id] = ref(row, parseStored<PackDesign>(row, packDesignSchema, field));
	}
	const inputs: SweepInputs = { format: INPUTS_FORMAT, baseScenario, cells, packs };
	checkCombinations(def, inputs);
	return inputs;
}

/**
 * The engine input of one scenario of the grid: the base scenario with the axis values put in.
 * A sweep over ambient temperature means "soaked at that ambient", so a fixed initial pack
 * temperature in the base scenario is dropped (the engine then starts the pack at ambient).
 */
export function scenarioInputs(inputs: SweepInputs, def: SweepDefinition, scenarioIndex: number): ScenarioInputs {
	const s = expandScenarios(def)[scenarioIndex];
	if (!s) throw new RangeError(`Sweep has no scenario ${scenarioIndex}.`);
	return scenarioInputsFor(inputs, s);
}

export function scenarioInputsFor(
	inputs: SweepInputs,
	s: { cellId: string; packId: string; ambient_K: number; stateOfHealth: number; arrivalSoc: number }
): ScenarioInputs {
	const { initialPackTemp_K: _dropped, ...base } = inputs.baseScenario.data;
	const cell = inputs.cells[s.cellId];
	const pack = inputs.packs[s.packId];
	if (!cell || !pack) throw new RangeError(`The sweep's input snapshot lacks cell “${s.cellId}” or pack “${s.packId}”.`);
	return {
		cell: cell.data,
		pack: pack.data,
		scenario: { ...base, ambient_K: s.ambient_K, stateOfHealth: s.stateOfHealth, arrivalSoc: s.arrivalSoc } as Scenario
	};
}

export function strategyInput(def: SweepDefinition, strategyIndex: number): StrategyInput {
	const st = expandStrategies(def)[strategyIndex];
	if (!st) throw new RangeError(`Sweep has no strategy ${strategyIndex}.`);
	return {
		leadTime_s: st.leadTime_s,
		coolantSetpoint_K: st.coolantSetpoint_K,
		...(st.heaterPowerCap_W !== undefined ? { heaterPowerCap_W: st.heaterPowerCap_W } : {})
	};
}

/** Which request field an engine cross-check issue points at. */
function requestFieldFor(enginePath: string): string {
	if (enginePath.startsWith('strategy.coolantSetpoint_K')) return 'definition.setpoints_K';
	if (enginePath.startsWith('strategy.heaterPowerCap_W')) return 'definition.heaterPowerCaps_W';
	if (enginePath.startsWith('strategy.leadTime_s')) return 'definition.leadTimes_s';
	if (enginePath.startsWith('scenario.ambient_K')) return 'definition.ambients_K';
	if (enginePath.startsWith('scenario.stateOfHealth')) return 'definition.statesOfHealth';
	if (enginePath.startsWith('scenario.arrivalSoc') || enginePath.startsWith('scenario.target.soc')) return 'definition.arrivalSocs';
	if (enginePath.startsWith('scenario')) return 'scenarioId';
	if (enginePath.startsWith('cell')) return 'definition.cellIds';
	if (enginePath.startsWith('pack')) return 'definition.packIds';
	return 'definition';
}

/**
 * Run the engine's cross-object checks (set-point vs the cell's temperature limit, heater cap vs
 * the pack's heater, target SOC above arrival SOC, ambient below the cell's limit…) before any job
 * is queued. The checks are monotone in each axis, so the extreme values cover the whole grid:
 * every scenario is checked with the most demanding strategy (highest set-point and cap).
 */
function checkCombinations(def: SweepDefinition, inputs: SweepInputs): void {
	const strongest: StrategyInput = {
		leadTime_s: Math.max(...def.leadTimes_s),
		coolantSetpoint_K: Math.max(...def.setpoints_K),
		...(def.heaterPowerCaps_W ? { heaterPowerCap_W: Math.max(...def.heaterPowerCaps_W) } : {})
	};
	const checked = new Set<string>();
	for (const s of expandScenarios(def)) {
		// State of health enters no cross-check, so one check per other axis combination suffices.
		const key = JSON.stringify([s.cellId, s.packId, s.ambient_K, s.arrivalSoc]);
		if (checked.has(key)) continue;
		checked.add(key);
		const si = scenarioInputsFor(inputs, s);
		const parsed = simulationInputSchema.safeParse({ ...si, strategy: strongest });
		if (!parsed.success) {
			const issue = parsed.error.issues[0];
			const where = `cell “${s.cellId}”, pack “${s.packId}”`;
			throw new SweepInputError(`${issue.message} (${where}).`, requestFieldFor(fieldPath(issue.path)));
		}
	}
}
