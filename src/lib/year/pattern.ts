/**
 * Charging pattern of a vehicle over a year: how many DC fast-charge events per week, how they
 * spread over months and hours of the day, the state of charge on arrival, the target state of
 * charge, the drive before the charge (a scenario input of the program, by its slug), and
 * optionally an energy price and the value of a driver's hour for the money figures.
 *
 * Weights are relative (any non-negative numbers, at least one above zero): month weights are
 * shares of the year's events per month, hour weights shares per hour of the day, arrival
 * weights shares per arrival state of charge. Exchange format (ours):
 *   { "format": "paretherm-charging-pattern/1", "name": "…", "data": { … } }
 * Pure (zod schema and helpers, no I/O).
 */
import { z } from 'zod';

export const PATTERN_FORMAT = 'paretherm-charging-pattern/1';
export const MAX_EVENTS_PER_WEEK = 100;

const weight = z.number({ invalid_type_error: 'a weight must be a number' }).finite().min(0, 'weights must not be negative');
const positiveSum = (what: string) => (w: number[]) => w.reduce((a, b) => a + b, 0) > 0 || what;

export const patternSchema = z
	.object({
		eventsPerWeek: z
			.number({ invalid_type_error: 'events per week must be a number', required_error: 'give the fast-charge events per week' })
			.finite()
			.min(0, 'events per week must not be negative')
			.max(MAX_EVENTS_PER_WEEK, `more than ${MAX_EVENTS_PER_WEEK} fast charges a week per vehicle is not a plausible pattern; check the number`),
		monthWeights: z
			.array(weight)
			.length(12, 'give twelve month weights, January to December')
			.refine((w) => w.reduce((a, b) => a + b, 0) > 0, 'at least one month weight must be above zero'),
		hourWeights: z
			.array(weight)
			.length(24, 'give 24 hour weights, for 00:00 to 23:00')
			.refine((w) => w.reduce((a, b) => a + b, 0) > 0, 'at least one hour weight must be above zero'),
		arrivalSocs: z
			.array(
				z.object({
					soc: z.number({ invalid_type_error: 'arrival state of charge must be a number' }).min(0.02, 'arrival state of charge must be at least 2 %').max(0.95, 'arrival state of charge must be at most 95 %'),
					weight
				})
			)
			.min(1, 'give at least one arrival state of charge')
			.max(50, 'give at most 50 arrival states of charge')
			.refine((a) => a.reduce((s, x) => s + x.weight, 0) > 0, 'at least one arrival weight must be above zero'),
		targetSoc: z.number({ invalid_type_error: 'target state of charge must be a number' }).min(0.05, 'target state of charge must be at least 5 %').max(1, 'target state of charge must be at most 100 %'),
		/** Slug of the scenario input that describes the drive before the charge. */
		scenarioSlug: z.string().trim().min(1, 'choose the drive scenario').max(80),
		/** Price of grid energy per kWh, in `currency`; optional. */
		energyPrice_per_kWh: z.number().finite().min(0, 'the energy price must not be negative').max(100, 'an energy price above 100 per kWh is not plausible').nullable().default(null),
		/** Value of one hour of a driver's (or vehicle's) time, in `currency`; optional. */
		hourValue: z.number().finite().min(0, "the value of a driver's hour must not be negative").max(100_000).nullable().default(null),
		currency: z.string().trim().max(8).default('EUR'),
		/** 'even': exact counts per month and hour (largest remainders); 'random': seeded draws. */
		sampling: z.enum(['even', 'random'], { errorMap: () => ({ message: "sampling must be 'even' or 'random'" }) }).default('even'),
		seed: z.number().int('the seed must be a whole number').min(0).max(2 ** 31 - 1).default(1)
	})
	.superRefine((p, ctx) => {
		const maxArrival = Math.max(...p.arrivalSocs.map((a) => a.soc));
		if (p.targetSoc <= maxArrival)
			ctx.addIssue({
				code: z.ZodIssueCode.custom,
				path: ['targetSoc'],
				message: `the target state of charge ${Math.round(p.targetSoc * 100)} % is not above the highest arrival state of charge ${Math.round(maxArrival * 100)} %`
			});
	});

export type ChargingPattern = z.output<typeof patternSchema>;
export type ChargingPatternInput = z.input<typeof patternSchema>;

/** Reads our exchange document or bare pattern data; returns the name (if any) and the raw data. */
export function readPatternDocument(doc: unknown): { name: string; data: unknown } {
	if (!doc || typeof doc !== 'object' || Array.isArray(doc)) throw new PatternError('Expected a JSON object: { "format": "' + PATTERN_FORMAT + '", "name": …, "data": { … } }.', 'json');
	const d = doc as Record<string, unknown>;
	if (d.format === undefined) return { name: typeof d.name === 'string' ? d.name : '', data: d };
	if (d.format !== PATTERN_FORMAT) throw new PatternError(`Unknown format “${String(d.format).slice(0, 60)}”; expected "${PATTERN_FORMAT}".`, 'format');
	return { name: typeof d.name === 'string' ? d.name : '', data: d.data };
}

export class PatternError extends Error {
	constructor(
		message: string,
		public field: string
	) {
		super(message);
	}
}

/** Validates pattern data; the first problem as a PatternError naming its field path. */
export function validatePattern(data: unknown): ChargingPattern {
	if (data && typeof data === 'object' && !Array.isArray(data)) {
		const { name: _n, format: _f, ...rest } = data as Record<string, unknown>;
		data = rest;
	}
	const r = patternSchema.safeParse(data);
	if (!r.success) {
		const issue = r.error.issues[0];
		const field = issue.path.join('.') || 'json';
		throw new PatternError(`${field}: ${issue.message}`, field);
	}
	return r.data;
}

export function patternDocument(name: string, p: ChargingPattern) {
	return { format: PATTERN_FORMAT, name, data: p };
}
