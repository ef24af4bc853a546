/**
 * What a client sends to create a sweep, and its validation. The grid itself is the engine's
 * `sweepDefinitionSchema` (src/lib/engine/sweep-grid.ts); around it come the base scenario (drive,
 * dwell, charger, target — the parts the scenario axes do not vary), a name, and the optional
 * "fastest within X Wh" rule.
 *
 * Body (JSON, SI units as everywhere in the API):
 *   {
 *     "name": "Winter fast-charge study",            // optional
 *     "scenarioId": "commute-dc-fast",               // scenario parameter set: slug or slug@version
 *     "definition": {
 *       "cellIds": ["nmc811-5ah"], "packIds": ["pack-400v"],   // slugs, or slug@version
 *       "ambients_K": [263.15, 273.15], "statesOfHealth": [1, 0.85], "arrivalSocs": [0.2],
 *       "leadTimes_s": [0, 600, 1200], "setpoints_K": [288.15, 298.15, 308.15],
 *       "heaterPowerCaps_W": [3000, 6000]            // optional axis
 *     },
 *     "fastestWithinEnergy_Wh": 500,                 // optional user rule
 *     "chunkSize": 8                                 // optional; simulations per queue job
 *   }
 */
import { z } from 'zod';
import { sweepDefinitionSchema, type SweepDefinition } from '../../engine/sweep-grid';

export const MAX_CHUNK_SIZE = 64;

export const sweepRequestSchema = z
	.object({
		name: z
			.string({ invalid_type_error: 'Name must be text.' })
			.trim()
			.min(1, 'Name must not be empty (or leave it out for a generated one).')
			.max(120, 'Name must be at most 120 characters.')
			.optional(),
		scenarioId: z
			.string({
				required_error: 'Choose the base scenario (drive, dwell, charger and target) that the sweep varies: give its id as scenarioId.',
				invalid_type_error: 'scenarioId must be the id (slug) of a scenario.'
			})
			.trim()
			.min(1, 'Choose the base scenario (drive, dwell, charger and target) that the sweep varies.'),
		definition: sweepDefinitionSchema,
		fastestWithinEnergy_Wh: z
			.number({ invalid_type_error: 'The "fastest within" energy budget must be a number of watt-hours.' })
			.finite('The "fastest within" energy budget must be a finite number of watt-hours.')
			.min(0, 'The "fastest within" energy budget must be zero or more watt-hours.')
			.optional(),
		chunkSize: z
			.number({ invalid_type_error: 'Chunk size must be a whole number.' })
			.int('Chunk size must be a whole number.')
			.min(1, 'Chunk size must be at least 1 simulation.')
			.max(MAX_CHUNK_SIZE, `Chunk size must be at most ${MAX_CHUNK_SIZE} simulations.`)
			.optional()
	})
	.strict('Unknown field in the sweep request; allowed: name, scenarioId, definition, fastestWithinEnergy_Wh, chunkSize.');

export interface SweepRequest {
	name?: string;
	scenarioId: string;
	definition: SweepDefinition;
	fastestWithinEnergy_Wh?: number;
	chunkSize?: number;
}

/** A 4xx problem with the request, naming the field at fault ("definition.ambients_K[2]"). */
export class SweepInputError extends Error {
	readonly field: string | undefined;
	readonly status: number;
	constructor(message: string, field?: string, status = 400) {
		super(message);
		this.name = 'SweepInputError';
		this.field = field;
		this.status = status;
	}
}

export function fieldPath(path: (string | number)[]): string {
	let out = '';
	for (const p of path) out += typeof p === 'number' ? `[${p}]` : out ? `.${p}` : p;
	return out;
}

/** Parse or throw SweepInputError naming the first problem's field, with every problem in the message. */
export function parseSweepRequest(body: unknown): SweepRequest {
	if (body === null || typeof body !== 'object' || Array.isArray(body))
		throw new SweepInputError('Send the sweep as a JSON object with scenarioId and definition.');
	const parsed = sweepRequestSchema.safeParse(body);
	if (parsed.success) return parsed.data as SweepRequest;
	const issues = parsed.error.issues;
	const first = issues[0];
	let field = fieldPath(first.path);
	if (first.code === z.ZodIssueCode.unrecognized_keys) field = first.keys[0] ?? field;
	let message = first.message;
	if (first.code === z.ZodIssueCode.invalid_type && first.received === 'undefined' && !/Choose/.test(message))
		message = `${field} is missing.`;
	for (const other of issues.slice(1)) {
		const where = fieldPath(other.path);
		message += ` · ${where && !other.message.includes(where) ? `${where}: ` : ''}${other.message}`;
	}
	throw new SweepInputError(message, field || undefined);
}
