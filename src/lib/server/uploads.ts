/**
 * Uploads stored per program: parse (pure, src/lib/uploads) → store the SI columns gzip-compressed
 * with the original file's name, size and SHA-256. A refused file stores nothing: the parser runs
 * before any write, and the one write is a single INSERT.
 *
 * Uploaded tables feed inputs as new versions: a drive profile becomes a scenario's
 * `drive.profile = {kind:'table', time_s, power_W}`, an OCP table a cell's electrode `ocp`.
 */
import crypto from 'node:crypto';
import { gunzipSync, gzipSync } from 'node:zlib';
import { ParameterSet, Upload, User } from './db/models/index';
import { InputError, saveVersion } from './inputs';
import { parseUpload, uploadToCsv, UploadError, UPLOAD_KIND_LABEL, type ParsedUpload, type UploadKind, type UploadOptions } from '../uploads/index';
import { cleanFileName } from '../uploads/upload-form';

export const UPLOAD_ENCODING = 'json+gzip';
/** Largest table a scenario takes as its drive profile (sweeps carry the scenario in every job). */
export const MAX_DRIVE_TABLE_POINTS = 20_000;
/** Largest OCP table a cell takes (the model tabulates it on 4097 points anyway). */
export const MAX_OCP_TABLE_POINTS = 5_000;

export function cleanUploadName(raw: unknown, fallback: string): string {
	const name = (typeof raw === 'string' ? raw : '').replace(/[\u0000-\u001f\u007f]/g, '').trim() || fallback.replace(/\.(csv|txt)$/i, '');
	if (name.length > 120) throw new UploadError('Keep the name under 120 characters.', 'name');
	return name;
}

/** Parses and stores an upload; throws UploadError (nothing stored) when the file is refused. */
export async function storeUpload(
	programId: number,
	userId: string,
	file: { bytes: Uint8Array; fileName: string },
	name: unknown,
	options: UploadOptions
): Promise<{ row: Upload; parsed: ParsedUpload }> {
	const original = cleanFileName(file.fileName);
	const label = cleanUploadName(name, original);
	const parsed = parseUpload(file.bytes, options);
	const sha256 = crypto.createHash('sha256').update(file.bytes).digest('hex');
	const meta = {
		sources: parsed.sources,
		notes: parsed.notes,
		ignoredColumns: parsed.ignoredColumns,
		headerFound: parsed.headerFound,
		columns: Object.keys(parsed.columns),
		...parsed.meta
	};
	const row = await Upload.create({
		program_id: programId,
		kind: parsed.kind,
		name: label,
		original_name: original,
		size_bytes: file.bytes.length,
		sha256,
		row_count: parsed.rowCount,
		meta: JSON.stringify(meta),
		encoding: UPLOAD_ENCODING,
		data: gzipSync(Buffer.from(JSON.stringify(parsed.columns))),
		created_by: userId
	});
	return { row, parsed };
}

/** Uploads of a program, newest first, without their data. */
export async function listUploads(programId: number, kind?: UploadKind) {
	const rows = await Upload.findAll({
		where: { program_id: programId, ...(kind ? { kind } : {}) },
		attributes: { exclude: ['data'] },
		order: [['created_at', 'DESC'], ['id', 'DESC']]
	});
	const users = await User.findAll({ where: { id: [...new Set(rows.map((r) => r.created_by))] } });
	const names = new Map(users.map((u) => [u.id, u.name]));
	return rows.map((r) => summary(r, names.get(r.created_by) ?? 'Former member'));
}

export function summary(r: Upload, uploader: string) {
	return {
		id: r.id,
		kind: r.kind,
		kindLabel: UPLOAD_KIND_LABEL[r.kind],
		name: r.name,
		originalName: r.original_name,
		sizeBytes: r.size_bytes,
		sha256: r.sha256,
		rowCount: r.row_count,
		uploader,
		createdAt: r.created_at.toISOString(),
		meta: JSON.parse(r.meta) as Record<string, unknown>
	};
}

export async function getUpload(programId: number, id: number) {
	return Upload.findOne({ where: { id, program_id: programId } });
}

export function uploadColumns(row: Upload): Record<string, number[]> {
	if (row.encoding !== UPLOAD_ENCODING) throw new Error(`upload ${row.id} has unknown encoding ${row.encoding}`);
	return JSON.parse(gunzipSync(row.data).toString('utf8'));
}

export function uploadCsv(row: Upload): string {
	return uploadToCsv(row.kind, uploadColumns(row));
}

/** A safe download file name: the upload's name in letters, digits, dashes. */
export function downloadName(base: string, id: number, suffix: string): string {
	const slug = base
		.toLowerCase()
		.normalize('NFKD')
		.replace(/[^a-z0-9]+/g, '-')
		.replace(/^-+|-+$/g, '')
		.slice(0, 60);
	return `${slug || 'upload'}-${id}${suffix}`;
}

async function inputOf(programId: number, rawId: unknown, kind: 'cell' | 'scenario'): Promise<ParameterSet> {
	const raw = typeof rawId === 'string' ? rawId : '';
	if (!/^[1-9][0-9]{0,9}$/.test(raw)) throw new InputError(`Choose the ${kind === 'cell' ? 'cell parameter set' : 'scenario'} to update.`, 'inputId');
	const row = await ParameterSet.findOne({ where: { id: Number(raw), program_id: programId, kind } });
	if (!row) throw new InputError(`That ${kind === 'cell' ? 'cell parameter set' : 'scenario'} does not exist in this program; reload the page.`, 'inputId');
	return row;
}

/** A new version of a scenario whose drive follows the uploaded profile (the drive lasts as long as the table). */
export async function useDriveProfile(upload: Upload, programId: number, inputId: unknown, userId: string): Promise<ParameterSet> {
	if (upload.kind !== 'drive-profile') throw new InputError('Only a drive profile can become a scenario’s drive.', 'uploadId');
	const scenario = await inputOf(programId, inputId, 'scenario');
	const { time_s, power_W } = uploadColumns(upload);
	if (time_s.length > MAX_DRIVE_TABLE_POINTS)
		throw new InputError(
			`The profile has ${time_s.length} points; a scenario takes at most ${MAX_DRIVE_TABLE_POINTS}. Upload it resampled to a coarser interval (every ${Math.ceil(time_s.length / MAX_DRIVE_TABLE_POINTS)} s or so).`,
			'uploadId'
		);
	const data = JSON.parse(scenario.data);
	data.drive = { duration_s: time_s[time_s.length - 1], profile: { kind: 'table', time_s, power_W } };
	return saveVersion(scenario, scenario.name, data, userId);
}

/** A new version of a cell parameter set whose negative or positive electrode uses the uploaded OCP table. */
export async function useOcpTable(upload: Upload, programId: number, inputId: unknown, electrode: unknown, userId: string): Promise<ParameterSet> {
	if (upload.kind !== 'ocp-table') throw new InputError('Only an OCP table can become an electrode’s open-circuit potential.', 'uploadId');
	if (electrode !== 'negative' && electrode !== 'positive') throw new InputError('Choose the electrode: negative or positive.', 'electrode');
	const cell = await inputOf(programId, inputId, 'cell');
	const { stoichiometry, potential_V } = uploadColumns(upload);
	if (stoichiometry.length > MAX_OCP_TABLE_POINTS)
		throw new InputError(`The table has ${stoichiometry.length} points; a cell takes at most ${MAX_OCP_TABLE_POINTS}. Thin it out and upload it again.`, 'uploadId');
	const data = JSON.parse(cell.data);
	data[electrode] = { ...data[electrode], ocp: { kind: 'table', stoichiometry, potential_V } };
	try {
		return await saveVersion(cell, cell.name, data, userId);
	} catch (e) {
		// The cell's own checks (open-circuit voltage against its limits) speak for the whole cell; say it is the new table.
		if (e instanceof InputError) throw new InputError(`With this OCP table the cell is not valid: ${e.message}`, e.field);
		throw e;
	}
}
