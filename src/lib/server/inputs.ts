/**
 * Engine inputs stored per program: cell parameter sets, pack designs and scenarios.
 *
 * Every save writes a new immutable version under the same slug, so a sweep that used version n
 * keeps pointing at exactly what produced its results, and nobody's edit can change a stored
 * result after the fact. The newest version is what new sweeps pick up.
 *
 * Exchange format (our own, documented in docs/parameter-format.md):
 *   { "format": "paretherm-parameters/1", "kind": "cell" | "pack" | "scenario", "name": "…", "data": { … } }
 */
import { Op } from 'sequelize';
import type { ZodError, ZodTypeAny } from 'zod';
import { cellParamsSchema, packDesignSchema, scenarioSchema } from '../engine/schemas';
import { ParameterSet, type ParameterKind } from './db/models/index';
import { unknownKeys, unknownKeysMessage } from '../unknown-keys';
import { sequelize } from './db/index';

export const PARAMETER_FORMAT = 'paretherm-parameters/1';
export const KINDS: ParameterKind[] = ['cell', 'pack', 'scenario'];
export const KIND_LABEL: Record<ParameterKind, string> = {
	cell: 'Cell parameter set',
	pack: 'Pack design',
	scenario: 'Scenario'
};
const SCHEMA: Record<ParameterKind, ZodTypeAny> = {
	cell: cellParamsSchema,
	pack: packDesignSchema,
	scenario: scenarioSchema
};
/** Largest JSON document accepted for one input; the demo cell is about 3 kB. */
export const MAX_INPUT_BYTES = 512 * 1024;

export class InputError extends Error {
	constructor(
		message: string,
		public field: string | null = null
	) {
		super(message);
	}
}

export function isKind(v: unknown): v is ParameterKind {
	return typeof v === 'string' && (KINDS as string[]).includes(v);
}

export function firstIssue(err: ZodError): { message: string; field: string } {
	const issue = err.issues[0];
	const field = issue.path.join('.');
	return { message: field ? `${field}: ${issue.message}` : issue.message, field };
}

/**
 * Validates engine data for a kind; returns the parsed (defaults filled) object or throws InputError.
 * Keys the schema does not know are refused, named, with the likely intended key (a typo would
 * otherwise be dropped silently and save a version that differs from what was meant).
 */
export function validateInput(kind: ParameterKind, data: unknown): Record<string, unknown> {
	const unknown = unknownKeys(SCHEMA[kind], data);
	if (unknown.length > 0) throw new InputError(unknownKeysMessage(unknown), unknown[0].path);
	const parsed = SCHEMA[kind].safeParse(data);
	if (!parsed.success) {
		const { message, field } = firstIssue(parsed.error);
		throw new InputError(message, field);
	}
	return parsed.data;
}

export function parseJsonText(text: string): unknown {
	if (Buffer.byteLength(text, 'utf8') > MAX_INPUT_BYTES)
		throw new InputError(`The JSON is larger than ${MAX_INPUT_BYTES / 1024} kB; is this the right file?`, 'json');
	try {
		return JSON.parse(text);
	} catch (e) {
		throw new InputError(`This is not valid JSON (${(e as Error).message}); check brackets, quotes and commas.`, 'json');
	}
}

/** Reads our exchange format (or bare engine data of the expected kind). */
export function readExchange(doc: unknown, expectKind?: ParameterKind): { kind: ParameterKind; name: string; data: unknown } {
	if (!doc || typeof doc !== 'object' || Array.isArray(doc))
		throw new InputError('Expected a JSON object with "format", "kind", "name" and "data".', 'json');
	const d = doc as Record<string, unknown>;
	if (d.format === undefined && expectKind) {
		return { kind: expectKind, name: String(d.name ?? ''), data: d };
	}
	if (d.format !== PARAMETER_FORMAT)
		throw new InputError(`Unknown format “${String(d.format).slice(0, 60)}”; expected "${PARAMETER_FORMAT}".`, 'format');
	if (!isKind(d.kind)) throw new InputError('kind must be "cell", "pack" or "scenario".', 'kind');
	if (expectKind && d.kind !== expectKind)
		throw new InputError(`This file holds a ${d.kind}, not a ${expectKind}.`, 'kind');
	return { kind: d.kind, name: typeof d.name === 'string' ? d.name : '', data: d.data };
}

export function toExchange(row: ParameterSet) {
	return {
		format: PARAMETER_FORMAT,
		kind: row.kind,
		name: row.name,
		slug: row.slug,
		version: row.version,
		exportedAt: new Date().toISOString(),
		data: JSON.parse(row.data)
	};
}

function slugify(name: string): string {
	const s = name
		.toLowerCase()
		.normalize('NFKD')
		.replace(/[^a-z0-9]+/g, '-')
		.replace(/^-+|-+$/g, '')
		.slice(0, 48);
	return s || 'input';
}

function cleanName(name: string): string {
	const n = name.trim();
	if (!n) throw new InputError('Give it a name.', 'name');
	if (n.includes('\u0000')) throw new InputError('The name contains a NUL character (U+0000); remove it.', 'name');
	if (n.length > 120) throw new InputError('Keep the name under 120 characters.', 'name');
	return n;
}

/** Creates a new input (version 1 under a fresh slug). */
export async function createInput(programId: number, kind: ParameterKind, name: string, data: unknown, userId: string | null) {
	const clean = cleanName(name);
	const valid = validateInput(kind, data);
	return sequelize.transaction(async (transaction) => {
		const base = slugify(clean);
		let slug = base;
		for (let i = 2; await ParameterSet.findOne({ where: { program_id: programId, kind, slug }, transaction }); i++) slug = `${base}-${i}`;
		return ParameterSet.create(
			{ program_id: programId, kind, slug, version: 1, name: clean, data: JSON.stringify(valid), created_by: userId },
			{ transaction }
		);
	});
}

/** Saves an edit as the next version of the same slug; earlier versions stay untouched. */
export async function saveVersion(base: ParameterSet, name: string, data: unknown, userId: string | null) {
	const clean = cleanName(name);
	const valid = validateInput(base.kind, data);
	return sequelize.transaction(async (transaction) => {
		const latest = (await ParameterSet.max('version', {
			where: { program_id: base.program_id, kind: base.kind, slug: base.slug },
			transaction
		})) as number;
		return ParameterSet.create(
			{
				program_id: base.program_id,
				kind: base.kind,
				slug: base.slug,
				version: latest + 1,
				name: clean,
				data: JSON.stringify(valid),
				created_by: userId
			},
			{ transaction }
		);
	});
}

export interface InputVersionSummary {
	id: number;
	version: number;
	name: string;
	createdAt: string;
}

/**
 * The newest version of each slug, per kind, with how many versions it has and all of them
 * (newest first). Grouped by slug, never by name: an edit may rename an input, and the newest
 * version's name and number are what lists show. Sorted by kind, then by the newest name.
 */
export async function latestInputs(programId: number, kind?: ParameterKind) {
	const rows = await ParameterSet.findAll({
		where: { program_id: programId, ...(kind ? { kind } : {}) },
		order: [['kind', 'ASC'], ['slug', 'ASC'], ['version', 'DESC']]
	});
	const groups = new Map<string, ParameterSet[]>();
	for (const r of rows) {
		const key = `${r.kind}/${r.slug}`;
		const list = groups.get(key) ?? [];
		list.push(r);
		groups.set(key, list);
	}
	return [...groups.values()]
		.map((list) => ({
			row: list[0],
			versions: list.length,
			all: list.map((r): InputVersionSummary => ({ id: r.id, version: r.version, name: r.name, createdAt: r.created_at.toISOString() }))
		}))
		.sort((a, b) => a.row.kind.localeCompare(b.row.kind) || a.row.name.localeCompare(b.row.name) || a.row.slug.localeCompare(b.row.slug));
}

export async function getInput(programId: number, id: number) {
	return ParameterSet.findOne({ where: { id, program_id: programId } });
}

export async function versionsOf(row: ParameterSet) {
	return ParameterSet.findAll({
		where: { program_id: row.program_id, kind: row.kind, slug: row.slug, version: { [Op.gte]: 1 } },
		order: [['version', 'DESC']]
	});
}
