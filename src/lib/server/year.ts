/**
 * Year of use, stored: climates and charging patterns as versioned program inputs (a save under
 * an existing slug writes version n+1; older versions stay for the evaluations that used them),
 * and evaluations in lookup mode, computed from a finished sweep's stored points at creation and
 * stored with the exact input versions they used.
 *
 * Nothing is stored from a refused request: every check (file, pattern, sweep, settings, the
 * lookup itself) runs before the one INSERT.
 */
import crypto from 'node:crypto';
import { gunzipSync, gzipSync } from 'node:zlib';
import { Op } from 'sequelize';
import { ChargingPatternRow, Climate, ParameterSet, Program, SweepPoint, SweepScenario, User, YearEvaluation, type Sweep } from './db/models/index';
import { enqueue, mailWrite } from './mail/outbox';
import { yearDigestMessages } from './mail/year-digest';
import { sequelize } from './db/index';
import { parseClimate, summariseClimate } from '../year/climate';
import { validatePattern, PatternError, type ChargingPattern } from '../year/pattern';
import { sampleEvents } from '../year/sampler';
import { evaluateYear, LookupError, type FixedRule, type SweepNode, type YearResult } from '../year/evaluate';
import { UploadError } from '../uploads/csv-reader';
import { cleanFileName } from '../uploads/upload-form';
import { getProgramSweep } from './sweeps/results';
import { planFor } from './sweeps/service';
import { SweepInputError } from './sweeps/request';
import type { ScenarioKey } from '../engine/sweep-grid';

const ZERO_C_K = 273.15;
export const CLIMATE_ENCODING = 'json+gzip';
export const MAX_FLEET_SIZE = 1_000_000;

export class YearError extends Error {
	constructor(
		message: string,
		public field: string,
		public status = 400
	) {
		super(message);
	}
}

function slugify(name: string): string {
	return (
		name
			.toLowerCase()
			.normalize('NFKD')
			.replace(/[^a-z0-9]+/g, '-')
			.replace(/^-+|-+$/g, '')
			.slice(0, 48) || 'input'
	);
}

export function cleanName(raw: unknown, fallback = ''): string {
	const n = (typeof raw === 'string' ? raw : '').replace(/[\u0000-\u001f\u007f]/g, '').trim() || fallback;
	if (!n) throw new YearError('Give it a name.', 'name');
	if (n.length > 120) throw new YearError('Keep the name under 120 characters.', 'name');
	return n;
}

type Versioned = typeof Climate | typeof ChargingPatternRow;

async function nextSlugVersion(model: Versioned, programId: number, name: string, baseSlug: string | null, transaction: import('sequelize').Transaction) {
	if (baseSlug) {
		const latest = (await (model as typeof Climate).max('version', { where: { program_id: programId, slug: baseSlug }, transaction })) as number | null;
		if (!latest) throw new YearError(`No input “${baseSlug.slice(0, 60)}” to add a version to.`, 'slug', 404);
		return { slug: baseSlug, version: latest + 1 };
	}
	const base = slugify(name);
	let slug = base;
	for (let i = 2; await (model as typeof Climate).findOne({ where: { program_id: programId, slug }, transaction }); i++) slug = `${base}-${i}`;
	return { slug, version: 1 };
}

// ---------------------------------------------------------------------------------------------
// Climates

export async function storeClimate(
	programId: number,
	userId: string | null,
	file: { bytes: Uint8Array; fileName: string },
	nameRaw: unknown,
	opts: { invented?: boolean; slug?: string | null } = {}
): Promise<Climate> {
	const original = cleanFileName(file.fileName);
	const name = cleanName(nameRaw, original.replace(/\.(csv|txt)$/i, ''));
	const parsed = parseClimate(file.bytes); // throws UploadError; nothing stored
	const meta = { ...summariseClimate(parsed.ambient_K), notes: parsed.notes, layout: parsed.layout, unit: parsed.unit, year: parsed.year };
	return sequelize.transaction(async (transaction) => {
		const { slug, version } = await nextSlugVersion(Climate, programId, name, opts.slug ?? null, transaction);
		return Climate.create(
			{
				program_id: programId,
				slug,
				version,
				name,
				invented: Boolean(opts.invented),
				original_name: original,
				sha256: crypto.createHash('sha256').update(file.bytes).digest('hex'),
				hours: parsed.ambient_K.length,
				meta: JSON.stringify(meta),
				encoding: CLIMATE_ENCODING,
				data: gzipSync(Buffer.from(JSON.stringify(parsed.ambient_K))),
				created_by: userId
			},
			{ transaction }
		);
	});
}

export function climateAmbient_K(row: Climate): number[] {
	return JSON.parse(gunzipSync(row.data).toString('utf8')) as number[];
}

export interface ClimateView {
	id: number;
	slug: string;
	version: number;
	versions: number;
	name: string;
	invented: boolean;
	hours: number;
	min_C: number;
	mean_C: number;
	max_C: number;
	months: { mean_C: number; min_C: number; max_C: number }[];
	createdAt: string;
}

function climateView(r: Climate, versions = 1): ClimateView {
	const m = JSON.parse(r.meta);
	return {
		id: r.id,
		slug: r.slug,
		version: r.version,
		versions,
		name: r.name,
		invented: Boolean(r.invented),
		hours: r.hours,
		min_C: m.min_C,
		mean_C: m.mean_C,
		max_C: m.max_C,
		months: m.months,
		createdAt: new Date(r.created_at).toISOString()
	};
}

function latestOf<T extends { slug: string; version: number }>(rows: T[]): { row: T; versions: number }[] {
	const counts = new Map<string, number>();
	for (const r of rows) counts.set(r.slug, (counts.get(r.slug) ?? 0) + 1);
	const seen = new Set<string>();
	const out: { row: T; versions: number }[] = [];
	for (const r of [...rows].sort((a, b) => a.slug.localeCompare(b.slug) || b.version - a.version)) {
		if (seen.has(r.slug)) continue;
		seen.add(r.slug);
		out.push({ row: r, versions: counts.get(r.slug)! });
	}
	return out;
}

export async function listClimates(programId: number): Promise<ClimateView[]> {
	const rows = await Climate.findAll({ where: { program_id: programId }, attributes: { exclude: ['data'] } });
	return latestOf(rows).map(({ row, versions }) => climateView(row, versions));
}

// ---------------------------------------------------------------------------------------------
// Charging patterns

/** Validates and stores a pattern (new slug, or the next version of `slug`); the drive scenario must exist. */
export async function savePattern(programId: number, userId: string | null, nameRaw: unknown, data: unknown, slugRaw: string | null = null): Promise<ChargingPatternRow> {
	const name = cleanName(nameRaw);
	let pattern: ChargingPattern;
	try {
		pattern = validatePattern(data);
	} catch (e) {
		if (e instanceof PatternError) throw new YearError(e.message, e.field);
		throw e;
	}
	const scenario = await ParameterSet.findOne({ where: { program_id: programId, kind: 'scenario', slug: pattern.scenarioSlug } });
	if (!scenario) throw new YearError(`scenarioSlug: no scenario “${pattern.scenarioSlug.slice(0, 60)}” in this program; pick one from Inputs.`, 'scenarioSlug');
	return sequelize.transaction(async (transaction) => {
		const { slug, version } = await nextSlugVersion(ChargingPatternRow, programId, name, slugRaw, transaction);
		return ChargingPatternRow.create({ program_id: programId, slug, version, name, data: JSON.stringify(pattern), created_by: userId }, { transaction });
	});
}

export interface PatternView {
	id: number;
	slug: string;
	version: number;
	versions: number;
	name: string;
	pattern: ChargingPattern;
}

export async function listPatterns(programId: number): Promise<PatternView[]> {
	const rows = await ChargingPatternRow.findAll({ where: { program_id: programId } });
	return latestOf(rows).map(({ row, versions }) => ({ id: row.id, slug: row.slug, version: row.version, versions, name: row.name, pattern: JSON.parse(row.data) }));
}

// ---------------------------------------------------------------------------------------------
// Sweep nodes for the lookup

/** The sweep's stored scenarios for one cell and pack, with every strategy's figures and the table's pick. */
export async function sweepNodes(sweep: Sweep, cellId: string, packId: string): Promise<SweepNode[]> {
	const scenarios = await SweepScenario.findAll({ where: { sweep_id: sweep.id }, order: [['scenario_index', 'ASC']] });
	const mine = scenarios.filter((s) => {
		const a = JSON.parse(s.axes) as ScenarioKey;
		return a.cellId === cellId && a.packId === packId;
	});
	const points = await SweepPoint.findAll({
		where: { sweep_id: sweep.id, scenario_index: { [Op.in]: mine.map((s) => s.scenario_index) }, strategy_index: { [Op.ne]: null } },
		attributes: ['id', 'scenario_index', 'lead_time_s', 'coolant_setpoint_K', 'heater_power_cap_W', 'time_saved_s', 'energy_Wh', 'reached_target'],
		order: [['scenario_index', 'ASC'], ['strategy_index', 'ASC']]
	});
	const byScenario = new Map<number, SweepPoint[]>();
	for (const p of points) {
		const list = byScenario.get(p.scenario_index);
		if (list) list.push(p);
		else byScenario.set(p.scenario_index, [p]);
	}
	return mine.map((s): SweepNode => {
		const a = JSON.parse(s.axes) as ScenarioKey;
		const pts = byScenario.get(s.scenario_index) ?? [];
		const knee = s.knee_point_id !== null ? pts.find((p) => p.id === s.knee_point_id) : undefined;
		const baselineOk = s.baseline_reached_target && s.baseline_time_to_target_s !== null;
		return {
			ambient_K: a.ambient_K,
			arrivalSoc: a.arrivalSoc,
			stateOfHealth: a.stateOfHealth,
			baselineTime_s: baselineOk ? s.baseline_time_to_target_s : null,
			table: !baselineOk
				? null
				: knee
					? { leadTime_s: knee.lead_time_s, setpoint_K: knee.coolant_setpoint_K, heaterPowerCap_W: knee.heater_power_cap_W, timeSaved_s: knee.time_saved_s ?? NaN, energy_Wh: knee.energy_Wh ?? NaN }
					: { leadTime_s: null, setpoint_K: null, timeSaved_s: 0, energy_Wh: 0 },
			strategies: pts.map((p) => ({
				leadTime_s: p.lead_time_s ?? NaN,
				setpoint_K: p.coolant_setpoint_K ?? NaN,
				heaterPowerCap_W: p.heater_power_cap_W,
				timeSaved_s: p.reached_target && baselineOk ? p.time_saved_s : null,
				energy_Wh: p.reached_target && baselineOk ? p.energy_Wh : null
			}))
		};
	});
}

/** Cells, packs, states of health and strategies of a finished sweep, for the evaluation form. */
export function sweepChoices(sweep: Sweep) {
	const plan = planFor(sweep);
	const d = plan.definition;
	return {
		id: sweep.id,
		name: sweep.name,
		status: sweep.status,
		scenarioSlug: plan.inputs.baseScenario.slug,
		targetSoc: plan.inputs.baseScenario.data.target?.soc ?? null,
		cellIds: d.cellIds,
		packIds: d.packIds,
		statesOfHealth: d.statesOfHealth,
		leadTimes_min: d.leadTimes_s.map((s) => Number((s / 60).toFixed(3))),
		setpoints_C: d.setpoints_K.map((k) => Number((k - ZERO_C_K).toFixed(2)))
	};
}

// ---------------------------------------------------------------------------------------------
// Evaluations

export interface EvaluationSettings {
	cellId: string;
	packId: string;
	stateOfHealth: number;
	fixed: FixedRule;
	fleetSize: number;
}

type Get = (name: string) => string | null;

function numberField(get: Get, name: string, what: string, min: number, max: number, opts: { optional?: boolean; integer?: boolean } = {}): number | null {
	const raw = (get(name) ?? '').trim();
	if (raw === '') {
		if (opts.optional) return null;
		throw new YearError(`Give ${what}.`, name);
	}
	const v = Number(raw);
	if (!Number.isFinite(v) || !/^[+-]?(\d+\.?\d*|\.\d+)$/.test(raw)) throw new YearError(`${what[0].toUpperCase()}${what.slice(1)} must be a number (got “${raw.slice(0, 30)}”).`, name);
	if (opts.integer && !Number.isInteger(v)) throw new YearError(`${what[0].toUpperCase()}${what.slice(1)} must be a whole number.`, name);
	if (v < min || v > max) throw new YearError(`${what[0].toUpperCase()}${what.slice(1)} must be between ${min} and ${max} (got ${raw.slice(0, 30)}).`, name);
	return v;
}

function idField(get: Get, name: string, what: string): number {
	const raw = (get(name) ?? '').trim();
	if (!/^[1-9][0-9]{0,9}$/.test(raw)) throw new YearError(`Choose ${what}.`, name);
	return Number(raw);
}

/**
 * Checks the request, computes the year in lookup mode and stores the evaluation (one INSERT).
 * Form fields: name, climateId, patternId, sweepId, cellId, packId, stateOfHealth_pct,
 * fixedLeadTime_min, fixedSetpoint_C, fixedBelowAmbient_C (blank = always), fleetSize.
 */
export async function createEvaluation(programId: number, userId: string | null, get: Get): Promise<YearEvaluation> {
	const name = cleanName(get('name'));
	const climateId = idField(get, 'climateId', 'a climate');
	const patternId = idField(get, 'patternId', 'a charging pattern');
	const sweepRaw = (get('sweepId') ?? '').trim();
	if (!sweepRaw) throw new YearError('Choose a finished sweep whose calibration table to evaluate.', 'sweepId');
	const climate = await Climate.findOne({ where: { id: climateId, program_id: programId } });
	if (!climate) throw new YearError(`No climate with id ${climateId} in this program.`, 'climateId');
	const patternRow = await ChargingPatternRow.findOne({ where: { id: patternId, program_id: programId } });
	if (!patternRow) throw new YearError(`No charging pattern with id ${patternId} in this program.`, 'patternId');
	let sweep: Sweep;
	try {
		sweep = await getProgramSweep(programId, sweepRaw);
	} catch (e) {
		if (e instanceof SweepInputError) throw new YearError(`${e.message} A calibration table from another program cannot be used here.`, 'sweepId');
		throw e;
	}
	if (sweep.status !== 'done') throw new YearError(`Sweep ${sweep.id} is ${sweep.status}; pick a finished sweep (its calibration table exists once it is done).`, 'sweepId');
	const choices = sweepChoices(sweep);
	const pattern = JSON.parse(patternRow.data) as ChargingPattern;
	if (pattern.scenarioSlug !== choices.scenarioSlug)
		throw new YearError(
			`The pattern's drive is scenario “${pattern.scenarioSlug}”, but sweep ${sweep.id} was run with “${choices.scenarioSlug}”. Lookup mode reads that sweep's stored results, so pick a sweep run with the pattern's drive, or a pattern with this sweep's.`,
			'patternId'
		);
	if (choices.targetSoc !== null && Math.abs(choices.targetSoc - pattern.targetSoc) > 0.0005)
		throw new YearError(
			`The pattern charges to ${Math.round(pattern.targetSoc * 100)} %, but sweep ${sweep.id} charged to ${Math.round(choices.targetSoc * 100)} %; its stored times are to that target. Pick a matching sweep or pattern.`,
			'patternId'
		);
	const cellId = (get('cellId') ?? '').trim() || choices.cellIds[0];
	const packId = (get('packId') ?? '').trim() || choices.packIds[0];
	if (!choices.cellIds.includes(cellId)) throw new YearError(`Sweep ${sweep.id} has no cell “${cellId.slice(0, 60)}”; it has ${choices.cellIds.join(', ')}.`, 'cellId');
	if (!choices.packIds.includes(packId)) throw new YearError(`Sweep ${sweep.id} has no pack “${packId.slice(0, 60)}”; it has ${choices.packIds.join(', ')}.`, 'packId');
	const soh_pct = numberField(get, 'stateOfHealth_pct', 'the state of health (%)', 60, 100, { optional: true });
	const stateOfHealth = soh_pct === null ? Math.max(...choices.statesOfHealth) : soh_pct / 100;
	const lead_min = numberField(get, 'fixedLeadTime_min', 'the fixed rule’s lead time (min)', 0, 120)!;
	const set_C = numberField(get, 'fixedSetpoint_C', 'the fixed rule’s set-point (°C)', -30, 60)!;
	const below_C = numberField(get, 'fixedBelowAmbient_C', 'the fixed rule’s ambient threshold (°C)', -60, 60, { optional: true });
	const fleetSize = numberField(get, 'fleetSize', 'the fleet size', 1, MAX_FLEET_SIZE, { integer: true })!;
	const settings: EvaluationSettings = {
		cellId,
		packId,
		stateOfHealth,
		fixed: { leadTime_s: lead_min * 60, setpoint_K: set_C + ZERO_C_K, belowAmbient_K: below_C === null ? null : below_C + ZERO_C_K },
		fleetSize
	};
	const climate_K = climateAmbient_K(climate);
	const nodes = await sweepNodes(sweep, cellId, packId);
	let result: YearResult;
	try {
		const events = sampleEvents(pattern, climate_K.length === 8784);
		result = evaluateYear({ events, climate_K, stateOfHealth, nodes, fixed: settings.fixed, prices: pattern });
	} catch (e) {
		if (e instanceof LookupError) throw new YearError(e.message, e.field);
		throw e;
	}
	const program = await Program.findByPk(programId);
	// The evaluation and its digest to subscribed members are stored together or not at all.
	return mailWrite(async (transaction) => {
		const row = await YearEvaluation.create(
			{
				program_id: programId,
				name,
				climate_id: climate.id,
				pattern_id: patternRow.id,
				sweep_id: sweep.id,
				mode: 'lookup',
				status: 'done',
				settings: JSON.stringify(settings),
				result: JSON.stringify(result),
				created_by: userId
			},
			{ transaction }
		);
		const messages = await yearDigestMessages({
			evaluationId: row.id,
			programId,
			programName: program?.name ?? '',
			name,
			climate: `${climate.name} v${climate.version}${climate.invented ? ' (invented)' : ''}`,
			pattern: `${patternRow.name} v${patternRow.version}`,
			sweepId: sweep.id,
			fleetSize,
			currency: pattern.currency,
			prices: pattern,
			result
		});
		await enqueue(messages, transaction);
		return row;
	});
}

export async function listEvaluations(programId: number) {
	const rows = await YearEvaluation.findAll({ where: { program_id: programId }, attributes: { exclude: ['result'] }, order: [['id', 'DESC']], limit: 200 });
	return rows.map((r) => ({ id: r.id, name: r.name, mode: r.mode, status: r.status, sweepId: r.sweep_id, createdAt: new Date(r.created_at).toISOString() }));
}

export async function getEvaluation(programId: number, id: number) {
	const r = await YearEvaluation.findOne({ where: { id, program_id: programId } });
	if (!r) return null;
	const [climate, pattern, author] = await Promise.all([
		Climate.findByPk(r.climate_id, { attributes: { exclude: ['data'] } }),
		ChargingPatternRow.findByPk(r.pattern_id),
		r.created_by ? User.findByPk(r.created_by) : null
	]);
	return {
		id: r.id,
		name: r.name,
		mode: r.mode,
		status: r.status,
		sweepId: r.sweep_id,
		createdAt: new Date(r.created_at).toISOString(),
		author: author?.name ?? 'Former member',
		settings: JSON.parse(r.settings) as EvaluationSettings,
		result: JSON.parse(r.result ?? 'null') as YearResult | null,
		climate: climate ? climateView(climate) : null,
		pattern: pattern ? { id: pattern.id, name: pattern.name, slug: pattern.slug, version: pattern.version, data: JSON.parse(pattern.data) as ChargingPattern } : null
	};
}

export { UploadError };
