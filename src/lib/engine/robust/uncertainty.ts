/**
 * Uncertainty set of a robust study: which inputs differ from the plan, how (a bounded
 * distribution each), how many samples, the seed that makes the design repeatable, and whether
 * sensitivity indices are wanted.
 *
 * Inputs (all optional; an input left out keeps its nominal value):
 * - arrivalTimeError_s: real arrival minus predicted arrival (> 0 = later). The heater starts the
 *   lead time before the PREDICTED arrival, so the lead actually used is lead + error.
 * - ambientError_K: real minus forecast ambient temperature.
 * - arrivalSocError: real minus planned arrival state of charge (fraction, 0.05 = 5 points).
 * - initialPackTempOffset_K: pack temperature at departure minus the nominal one.
 * - cellCapacitySpread, cellResistanceSpread, cellDiffusivitySpread: relative deviation of this
 *   vehicle's cells from the cell data (0.05 = 5 % more).
 *
 * Units are SI with the unit in the name; messages use what users type (min, °C differences in K, %).
 * Every problem carries its field path ("uncertainty.inputs.ambientError_K.sd").
 */
import { z } from 'zod';
import { EngineInputError, zodIssues } from '../schemas';
import type { Distribution } from './distributions';

/** Inputs in the fixed order of the sample design's columns. */
export const UNCERTAIN_INPUTS = [
	'arrivalTimeError_s',
	'ambientError_K',
	'arrivalSocError',
	'initialPackTempOffset_K',
	'cellCapacitySpread',
	'cellResistanceSpread',
	'cellDiffusivitySpread'
] as const;
export type UncertainInput = (typeof UNCERTAIN_INPUTS)[number];

interface InputSpec {
	label: string;
	/** Largest magnitude a bound may have. */
	limit: number;
	show: (v: number) => string;
}

const trim = (v: number, d = 3) => {
	const s = Number(v.toFixed(d)).toString();
	return s === '-0' ? '0' : s;
};
const minutes = (s: number) => `${trim(s / 60, 2)} min`;
const kelvin = (K: number) => `${trim(K, 2)} K`;
const points = (f: number) => `${trim(f * 100, 2)} %-points`;
const relative = (f: number) => `${trim(f * 100, 2)} %`;

export const INPUT_SPECS: Record<UncertainInput, InputSpec> = {
	arrivalTimeError_s: { label: 'arrival-time error', limit: 7200, show: minutes },
	ambientError_K: { label: 'ambient temperature error', limit: 20, show: kelvin },
	arrivalSocError: { label: 'arrival state-of-charge error', limit: 0.3, show: points },
	initialPackTempOffset_K: { label: 'initial pack temperature offset', limit: 20, show: kelvin },
	cellCapacitySpread: { label: 'cell capacity spread', limit: 0.5, show: relative },
	cellResistanceSpread: { label: 'cell resistance spread', limit: 0.5, show: relative },
	cellDiffusivitySpread: { label: 'cell solid diffusivity spread', limit: 0.5, show: relative }
};

/** Fewest samples for quantiles: with ten, P10 and P90 fall between distinct samples (our rule, no source). */
export const MIN_SAMPLES = 10;
/** Fewest base samples for sensitivity indices with bootstrap intervals (our rule, no source). */
export const MIN_SAMPLES_SENSITIVITY = 16;
export const MAX_SAMPLES = 4096;
/** Most simulations one robust study may ask for (all scenarios, strategies, baselines and samples). */
export const MAX_ROBUST_SIMULATIONS = 250_000;

const finite = (label: string) =>
	z
		.number({ required_error: `${label} is missing`, invalid_type_error: `${label} must be a number` })
		.finite({ message: `${label} must be a finite number` });

function distributionSchema(spec: InputSpec) {
	const L = spec.label;
	const bound = (which: string) =>
		finite(`${which} bound of the ${L}`).superRefine((v, ctx) => {
			if (Math.abs(v) > spec.limit) {
				ctx.addIssue({
					code: z.ZodIssueCode.custom,
					message: `${which} bound of the ${L} ${spec.show(v)} is outside the accepted range ${spec.show(-spec.limit)} … ${spec.show(spec.limit)}`
				});
			}
		});
	const lower = bound('lower');
	const upper = bound('upper');
	return z
		.discriminatedUnion(
			'kind',
			[
				z
					.object({
						kind: z.literal('normal'),
						mean: finite(`mean of the ${L}`).default(0),
						sd: finite(`spread (standard deviation) of the ${L}`).refine((v) => v >= 0, {
							message: `spread (standard deviation) of the ${L} must not be negative`
						}),
						lower,
						upper
					})
					.strict(),
				z.object({ kind: z.literal('uniform'), lower, upper }).strict(),
				z.object({ kind: z.literal('triangular'), lower, mode: finite(`mode of the ${L}`), upper }).strict()
			],
			{ errorMap: () => ({ message: `distribution of the ${L} must be 'normal', 'uniform' or 'triangular'` }) }
		)
		.superRefine((d, ctx) => {
			if (d.lower > d.upper) {
				ctx.addIssue({
					code: z.ZodIssueCode.custom,
					path: ['upper'],
					message: `upper bound of the ${L} ${spec.show(d.upper)} is below its lower bound ${spec.show(d.lower)}`
				});
				return;
			}
			if (d.kind === 'normal' && (d.mean < d.lower || d.mean > d.upper)) {
				ctx.addIssue({
					code: z.ZodIssueCode.custom,
					path: ['mean'],
					message: `the bounds ${spec.show(d.lower)} … ${spec.show(d.upper)} of the ${L} exclude its mean ${spec.show(d.mean)}; widen the bounds or move the mean`
				});
			}
			if (d.kind === 'triangular' && (d.mode < d.lower || d.mode > d.upper)) {
				ctx.addIssue({
					code: z.ZodIssueCode.custom,
					path: ['mode'],
					message: `the bounds ${spec.show(d.lower)} … ${spec.show(d.upper)} of the ${L} exclude its mode ${spec.show(d.mode)}; widen the bounds or move the mode`
				});
			}
		});
}

const inputsSchema = z
	.object(Object.fromEntries(UNCERTAIN_INPUTS.map((k) => [k, distributionSchema(INPUT_SPECS[k]).optional()])) as Record<
		UncertainInput,
		z.ZodOptional<ReturnType<typeof distributionSchema>>
	>)
	.strict();

export const uncertaintySetSchema = z
	.object({
		/** Seed of the sample design: the same seed and set give the same samples. */
		seed: z
			.number({ required_error: 'seed is missing', invalid_type_error: 'seed must be a whole number' })
			.int('seed must be a whole number')
			.min(0, 'seed must not be negative')
			.max(2 ** 31 - 1, 'seed must be below 2³¹'),
		samples: z
			.number({ required_error: 'sample count is missing', invalid_type_error: 'sample count must be a whole number' })
			.int('sample count must be a whole number')
			.max(MAX_SAMPLES, `sample count must be at most ${MAX_SAMPLES}`),
		design: z.enum(['latin-hypercube'], { message: "sample design must be 'latin-hypercube'" }).default('latin-hypercube'),
		/** Also compute first-order and total sensitivity indices (adds samples × (inputs + 1) runs). */
		sensitivity: z.boolean({ invalid_type_error: 'sensitivity must be true or false' }).default(false),
		inputs: inputsSchema
	})
	.strict()
	.superRefine((u, ctx) => {
		const need = u.sensitivity ? MIN_SAMPLES_SENSITIVITY : MIN_SAMPLES;
		if (u.samples < need) {
			ctx.addIssue({
				code: z.ZodIssueCode.custom,
				path: ['samples'],
				message: u.sensitivity
					? `sensitivity indices need at least ${need} samples (got ${u.samples}); raise the sample count or turn sensitivity off`
					: `quantiles P10…P90 need at least ${need} samples (got ${u.samples}); raise the sample count`
			});
		}
		if (u.sensitivity && activeInputs(u).length === 0) {
			ctx.addIssue({
				code: z.ZodIssueCode.custom,
				path: ['inputs'],
				message: 'sensitivity indices need at least one uncertain input; give one or turn sensitivity off'
			});
		}
	});

export type UncertaintySet = z.output<typeof uncertaintySetSchema>;
export type UncertaintySetInput = z.input<typeof uncertaintySetSchema>;

/** Inputs the set gives a distribution for, in design order. */
export function activeInputs(u: Pick<UncertaintySet, 'inputs'>): UncertainInput[] {
	return UNCERTAIN_INPUTS.filter((k) => u.inputs[k] !== undefined);
}

export function distributionOf(u: UncertaintySet, k: UncertainInput): Distribution | undefined {
	return u.inputs[k] as Distribution | undefined;
}

/** Design rows simulated per scenario and strategy: N, or N·(k + 2) with sensitivity (Saltelli 2010 design). */
export function designRowCount(u: Pick<UncertaintySet, 'samples' | 'sensitivity' | 'inputs'>): number {
	return u.sensitivity ? u.samples * (activeInputs(u).length + 2) : u.samples;
}

/** Simulations of a study: every scenario's baseline and strategies under every design row. */
export function robustSimulationCount(u: UncertaintySet, scenarioCount: number, strategyCount: number): number {
	return scenarioCount * (strategyCount + 1) * designRowCount(u);
}

/**
 * Validate an uncertainty set for a study of `scenarioCount` scenarios × `strategyCount`
 * strategies; throws EngineInputError naming the field (prefix "uncertainty").
 */
export function validateUncertaintySet(input: unknown, study?: { scenarioCount: number; strategyCount: number }): UncertaintySet {
	const parsed = uncertaintySetSchema.safeParse(input);
	if (!parsed.success) throw new EngineInputError(zodIssues(parsed.error, 'uncertainty'));
	const u = parsed.data;
	if (study) {
		const n = robustSimulationCount(u, study.scenarioCount, study.strategyCount);
		if (n > MAX_ROBUST_SIMULATIONS) {
			throw new EngineInputError([
				{
					field: 'uncertainty.samples',
					message: `the study needs ${n.toLocaleString('en-GB')} simulations (${study.scenarioCount} scenario(s) × ${study.strategyCount + 1} runs incl. the baseline × ${designRowCount(u)} samples), more than the maximum ${MAX_ROBUST_SIMULATIONS.toLocaleString('en-GB')}; lower the sample count, turn sensitivity off or sweep fewer points`
				}
			]);
		}
	}
	return u;
}
