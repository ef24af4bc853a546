/**
 * Model checks: a measured log (an upload) replayed through one exact cell parameter set version,
 * stored with its settings, error statistics and full-resolution series so the team can comment on
 * it and strategies can cite it ("check #12" in a strategy's rationale or thread).
 */
import { gunzipSync, gzipSync } from 'node:zlib';
import { Op } from 'sequelize';
import { ModelCheck, ModelCheckEvent, ParameterSet, Strategy, StrategyEvent, Upload, User } from './db/models/index';
import { uploadColumns } from './uploads';
import { cleanText, MAX_COMMENT_CHARS } from './strategies';
import { cellParamsSchema, type CellParams } from '../engine/schemas';
import { replayCurrent, DEFAULT_SURFACE_CONDUCTANCE_W_per_K } from '../engine/replay';
import { checkStatistics, type CheckStatistics } from '../engine/model-check';
import { cellWindow } from '../engine/cell-window';
import { columnsToCsv } from '../uploads/export';
import { citesCheck } from '../uploads/check-helpers';

export { citesCheck, chartIndices } from '../uploads/check-helpers';

export const CHECK_ENCODING = 'json+gzip';
export { MAX_COMMENT_CHARS };

export class CheckError extends Error {
	constructor(
		message: string,
		public field: string | null = null,
		public status = 400
	) {
		super(message);
	}
}

export interface CheckSettings {
	stateOfHealth: number;
	/** null = estimated from the first measured voltage. */
	initialSoc: number | null;
	thermal: 'auto' | 'prescribed' | 'simulated';
	surfaceConductance_W_per_K: number;
}

/** Full-resolution series of a check; measured columns named as in a measured-log upload. */
export interface CheckSeriesColumns {
	time_s: number[];
	current_A: number[];
	voltage_V: number[];
	temp_K?: number[];
	ambient_K?: number[];
	coolant_K?: number[];
	simulated_voltage_V: number[];
	simulated_temp_K: number[];
	simulated_soc: number[];
}

/** Column order of the check export: a measured log first (re-uploads as one), then the simulation. */
export const CHECK_CSV_COLUMNS = ['time_s', 'current_A', 'voltage_V', 'temp_K', 'ambient_K', 'coolant_K', 'simulated_voltage_V', 'simulated_temp_K', 'simulated_soc'];

function numberField(raw: FormDataEntryValue | null, label: string, field: string, min: number, max: number, unit: string): number | null {
	const s = typeof raw === 'string' ? raw.trim() : '';
	if (s === '') return null;
	const v = Number(s);
	if (!Number.isFinite(v)) throw new CheckError(`${label} “${s.slice(0, 20)}” is not a number.`, field);
	if (v < min || v > max) throw new CheckError(`${label} ${v} ${unit} is outside ${min} … ${max} ${unit}.`, field);
	return v;
}

function idField(raw: FormDataEntryValue | null, what: string, field: string): number {
	const s = typeof raw === 'string' ? raw.trim() : '';
	if (!/^[1-9][0-9]{0,9}$/.test(s)) throw new CheckError(`Choose ${what}.`, field);
	return Number(s);
}

/** Reads and checks the "run a model check" form; throws CheckError naming the field. */
export function checkRequestFromForm(form: FormData) {
	const uploadId = idField(form.get('uploadId'), 'the measured log to replay', 'uploadId');
	const cellInputId = idField(form.get('cellInputId'), 'the cell parameter set version to replay it through', 'cellInputId');
	const soh = numberField(form.get('stateOfHealth_pct'), 'State of health', 'stateOfHealth_pct', 60, 100, '%');
	const soc = numberField(form.get('initialSoc_pct'), 'Initial state of charge', 'initialSoc_pct', 0, 100, '%');
	const ua = numberField(form.get('surfaceConductance_W_per_K'), 'Cell surface conductance', 'surfaceConductance_W_per_K', 0.01, 1000, 'W/K');
	const thermal = String(form.get('thermal') ?? 'auto');
	if (thermal !== 'auto' && thermal !== 'prescribed' && thermal !== 'simulated') throw new CheckError('Choose how the cell temperature is obtained.', 'thermal');
	const title = typeof form.get('title') === 'string' ? String(form.get('title')).replace(/[\u0000-\u001f\u007f]/g, '').trim() : '';
	if (title.length > 120) throw new CheckError('Keep the title under 120 characters.', 'title');
	const settings: CheckSettings = {
		stateOfHealth: (soh ?? 100) / 100,
		initialSoc: soc === null ? null : soc / 100,
		thermal,
		surfaceConductance_W_per_K: ua ?? DEFAULT_SURFACE_CONDUCTANCE_W_per_K
	};
	return { uploadId, cellInputId, settings, title };
}

/** Replays the log through the cell version and stores the check; throws CheckError (nothing stored) when it cannot. */
export async function runModelCheck(
	programId: number,
	userId: string,
	req: { uploadId: number; cellInputId: number; settings: CheckSettings; title: string }
): Promise<ModelCheck> {
	const upload = await Upload.findOne({ where: { id: req.uploadId, program_id: programId } });
	if (!upload) throw new CheckError('That measured log does not exist in this program; reload the page.', 'uploadId');
	if (upload.kind !== 'measured-log') throw new CheckError(`“${upload.name}” is a ${upload.kind.replace('-', ' ')}, not a measured log; choose a measured log.`, 'uploadId');
	const cellRow = await ParameterSet.findOne({ where: { id: req.cellInputId, program_id: programId, kind: 'cell' } });
	if (!cellRow) throw new CheckError('That cell parameter set does not exist in this program; reload the page.', 'cellInputId');
	const cell = cellParamsSchema.parse(JSON.parse(cellRow.data)) as CellParams;
	const cols = uploadColumns(upload);
	const s = req.settings;
	if (s.thermal === 'prescribed' && !cols.temp_K)
		throw new CheckError('The log has no cell temperature to prescribe; choose “simulate the cell temperature”, or upload a log with a temp_C column.', 'thermal');
	const thermal = s.thermal === 'auto' ? (cols.temp_K ? 'prescribed' : 'simulated') : s.thermal;
	let replay;
	try {
		replay = replayCurrent(
			cell,
			s.stateOfHealth,
			{ t_s: cols.time_s, current_A: cols.current_A, temp_K: cols.temp_K ?? null, ambient_K: cols.ambient_K ?? null, coolant_K: cols.coolant_K ?? null },
			s.initialSoc,
			{ thermal, surfaceConductance_W_per_K: s.surfaceConductance_W_per_K, firstVoltage_V: cols.voltage_V[0] }
		);
	} catch (e) {
		throw new CheckError(`The replay failed: ${(e as Error).message}.`, null);
	}
	const capacity_Ah = cellWindow(cell, s.stateOfHealth).capacity_Ah;
	const stats = checkStatistics(
		{
			t_s: cols.time_s,
			current_A: cols.current_A,
			measuredVoltage_V: cols.voltage_V,
			simulatedVoltage_V: replay.voltage_V,
			bandTemp_K: cols.temp_K ?? replay.temp_K,
			measuredTemp_K: thermal === 'simulated' ? (cols.temp_K ?? null) : null,
			simulatedTemp_K: thermal === 'simulated' ? replay.temp_K : null
		},
		capacity_Ah
	);
	if (!Number.isFinite(stats.overall.rmse_V)) throw new CheckError('The replay gave no finite voltages; check the cell parameter set and the log’s current.', null);
	const series: CheckSeriesColumns = {
		time_s: cols.time_s,
		current_A: cols.current_A,
		voltage_V: cols.voltage_V,
		...(cols.temp_K ? { temp_K: cols.temp_K } : {}),
		...(cols.ambient_K ? { ambient_K: cols.ambient_K } : {}),
		...(cols.coolant_K ? { coolant_K: cols.coolant_K } : {}),
		simulated_voltage_V: replay.voltage_V,
		simulated_temp_K: replay.temp_K,
		simulated_soc: replay.soc
	};
	const settings = {
		...s,
		thermal,
		initialSoc: replay.initialSoc,
		initialSocSource: replay.initialSocSource,
		capacity_Ah,
		notes: replay.notes,
		cellName: cellRow.name,
		uploadName: upload.name
	};
	return ModelCheck.create({
		program_id: programId,
		title: req.title || `${upload.name} through ${cellRow.name} v${cellRow.version}`,
		upload_id: upload.id,
		cell_input_id: cellRow.id,
		cell_slug: cellRow.slug,
		cell_version: cellRow.version,
		settings: JSON.stringify(settings),
		stats: JSON.stringify(stats),
		encoding: CHECK_ENCODING,
		series: gzipSync(Buffer.from(JSON.stringify(series))),
		created_by: userId
	});
}

export async function getCheck(programId: number, id: number) {
	return ModelCheck.findOne({ where: { id, program_id: programId } });
}

export function checkSeries(row: ModelCheck): CheckSeriesColumns {
	if (row.encoding !== CHECK_ENCODING) throw new Error(`check ${row.id} has unknown encoding ${row.encoding}`);
	return JSON.parse(gunzipSync(row.series).toString('utf8'));
}

export function checkCsv(row: ModelCheck): string {
	return columnsToCsv(CHECK_CSV_COLUMNS, checkSeries(row) as unknown as Record<string, number[]>);
}

export function checkSummary(row: ModelCheck, author: string) {
	return {
		id: row.id,
		title: row.title,
		uploadId: row.upload_id,
		cellInputId: row.cell_input_id,
		cellSlug: row.cell_slug,
		cellVersion: row.cell_version,
		settings: JSON.parse(row.settings) as CheckSettings & { capacity_Ah: number; notes: string[]; cellName: string; uploadName: string; initialSocSource: string },
		stats: JSON.parse(row.stats) as CheckStatistics,
		author,
		createdAt: row.created_at.toISOString()
	};
}

/** Checks of a program, newest first, without their series. */
export async function listChecks(programId: number) {
	const rows = await ModelCheck.findAll({ where: { program_id: programId }, attributes: { exclude: ['series'] }, order: [['created_at', 'DESC'], ['id', 'DESC']] });
	const users = await User.findAll({ where: { id: [...new Set(rows.map((r) => r.created_by))] } });
	const names = new Map(users.map((u) => [u.id, u.name]));
	return rows.map((r) => checkSummary(r, names.get(r.created_by) ?? 'Former member'));
}

export async function addCheckComment(check: ModelCheck, userId: string, raw: unknown) {
	const body = cleanText(raw, 'comment', MAX_COMMENT_CHARS);
	return ModelCheckEvent.create({ check_id: check.id, user_id: userId, body });
}

export async function checkThread(checkId: number) {
	const events = await ModelCheckEvent.findAll({ where: { check_id: checkId }, order: [['created_at', 'ASC'], ['id', 'ASC']] });
	const users = await User.findAll({ where: { id: [...new Set(events.map((e) => e.user_id).filter(Boolean))] as string[] } });
	const name = new Map(users.map((u) => [u.id, u.name]));
	return events.map((e) => ({ id: e.id, author: e.user_id ? (name.get(e.user_id) ?? 'Former member') : 'Paretherm', body: e.body, at: e.created_at.toISOString() }));
}

/** Strategies of the program whose rationale or thread cites the check. */
export async function strategiesCiting(programId: number, checkId: number) {
	const like = `%#${checkId}%`;
	const strategies = await Strategy.findAll({ where: { program_id: programId }, attributes: ['id', 'title', 'state', 'rationale'], order: [['id', 'ASC']] });
	const ids = strategies.map((s) => s.id);
	const events = ids.length
		? await StrategyEvent.findAll({
				where: { strategy_id: ids, body: { [Op.like]: like } },
				attributes: ['strategy_id', 'body']
			})
		: [];
	const viaThread = new Set(events.filter((e) => citesCheck(e.body, checkId)).map((e) => e.strategy_id));
	return strategies
		.filter((s) => viaThread.has(s.id) || citesCheck(s.rationale, checkId))
		.map((s) => ({ id: s.id, title: s.title, state: s.state }));
}
