/**
 * Sweep grid: the cross product of scenario axes (cell variant, pack variant,
 * ambient temperature, state of health, arrival state of charge) and strategy
 * axes (pre-conditioning lead time, coolant set-point, optional heater power
 * cap), its validation, and its split into worker-sized chunks.
 *
 * Units inside the engine are SI (K, s, W) and fractions (state of health and
 * state of charge in 0…1). Validation messages are written in the units users
 * type in the product (°C, min, %), and every issue carries its zod path
 * (e.g. ["ambients_K", 2]); `sweepIssueMessages` prefixes the path.
 *
 * Order is stable and follows the definition as given (no sorting), so an
 * index is reproducible from the definition alone:
 *   scenarios:  cellIds → packIds → ambients_K → statesOfHealth → arrivalSocs
 *               (first axis outermost, last axis fastest-varying)
 *   strategies: leadTimes_s → setpoints_K → heaterPowerCaps_W
 * Each scenario needs one baseline run (strategyIndex null) besides its
 * strategies; tasks list the baseline first, then the strategies in order.
 */
import { z } from 'zod';

export const MAX_GRID_POINTS = 20000;

const ZERO_CELSIUS_K = 273.15;
/** Tolerance on range bounds, so 55 °C typed and converted to K is accepted. */
const BOUND_TOL = 1e-9;

export const LIMITS = {
	ambient_K: { min: ZERO_CELSIUS_K - 40, max: ZERO_CELSIUS_K + 55 },
	stateOfHealth: { min: 0.6, max: 1 },
	arrivalSoc: { min: 0.02, max: 0.95 },
	leadTime_s: { min: 0, max: 7200 },
	setpoint_K: { min: 243.15, max: 333.15 }
} as const;

export interface SweepDefinition {
	cellIds: string[];
	packIds: string[];
	ambients_K: number[];
	statesOfHealth: number[];
	arrivalSocs: number[];
	leadTimes_s: number[];
	setpoints_K: number[];
	heaterPowerCaps_W?: number[];
}

/** Scenario axes; identifies one baseline and one Pareto front. */
export interface ScenarioKey {
	ambient_K: number;
	stateOfHealth: number;
	arrivalSoc: number;
	cellId: string;
	packId: string;
}

export interface Scenario extends ScenarioKey {
	index: number;
	/** Stable, unambiguous string key built from the axis values (see `scenarioKey`). */
	scenarioKey: string;
}

export interface Strategy {
	index: number;
	leadTime_s: number;
	coolantSetpoint_K: number;
	heaterPowerCap_W?: number;
}

/** One simulation: a strategy in a scenario, or the scenario's baseline (strategyIndex null). */
export interface SweepTask {
	scenarioIndex: number;
	strategyIndex: number | null;
}

export interface TaskChunk {
	chunkIndex: number;
	tasks: SweepTask[];
}

// ---------------------------------------------------------------------------
// Display helpers for messages (units as the user types them).

function trimNumber(v: number, decimals = 2): string {
	const s = Number(v.toFixed(decimals)).toString();
	return s === '-0' ? '0' : s;
}
const celsius = (K: number) => `${trimNumber(K - ZERO_CELSIUS_K)} °C`;
const minutes = (s: number) => `${trimNumber(s / 60)} min`;
const percent = (f: number) => `${trimNumber(f * 100)} %`;
const watts = (W: number) => (Math.abs(W) >= 1000 ? `${trimNumber(W / 1000, 3)} kW` : `${trimNumber(W)} W`);

interface AxisSpec {
	label: string;
	plural: string;
	show: (v: number) => string;
	min?: number;
	max?: number;
}

const AXES = {
	ambients_K: { label: 'Ambient temperature', plural: 'ambient temperatures', show: celsius, ...LIMITS.ambient_K },
	statesOfHealth: { label: 'State of health', plural: 'states of health', show: percent, ...LIMITS.stateOfHealth },
	arrivalSocs: { label: 'Arrival state of charge', plural: 'arrival states of charge', show: percent, ...LIMITS.arrivalSoc },
	leadTimes_s: { label: 'Lead time', plural: 'lead times', show: minutes, ...LIMITS.leadTime_s },
	setpoints_K: { label: 'Coolant set-point', plural: 'set-points', show: celsius, ...LIMITS.setpoint_K },
	heaterPowerCaps_W: { label: 'Heater power cap', plural: 'heater power caps', show: watts, min: 0 }
} satisfies Record<string, AxisSpec>;

function numberAxis(spec: AxisSpec) {
	return z
		.array(
			z
				.number({ invalid_type_error: `${spec.label} must be a number.` })
				.superRefine((v, ctx) => {
					if (!Number.isFinite(v)) {
						ctx.addIssue({ code: z.ZodIssueCode.custom, message: `${spec.label} must be a finite number.` });
						return;
					}
					const lo = spec.min ?? -Infinity;
					const hi = spec.max ?? Infinity;
					if (v < lo - BOUND_TOL || v > hi + BOUND_TOL) {
						const range =
							spec.max === undefined
								? `at least ${spec.show(lo)}`
								: `within ${spec.show(lo)} to ${spec.show(hi)}`;
						ctx.addIssue({
							code: z.ZodIssueCode.custom,
							message: `${spec.label} ${spec.show(v)} is out of range; it must be ${range}.`
						});
					}
				})
		)
		.min(1, { message: `Add at least one ${spec.label.toLowerCase()}.` })
		.superRefine((values, ctx) => distinct(values, spec.label, spec.show, ctx));
}

function idAxis(label: string) {
	return z
		.array(z.string().trim().min(1, { message: `${label} id must not be empty.` }))
		.min(1, { message: `Add at least one ${label.toLowerCase()}.` })
		.superRefine((values, ctx) => distinct(values, label, (v) => `"${v}"`, ctx));
}

function distinct<V>(values: V[], label: string, show: (v: V) => string, ctx: z.RefinementCtx) {
	const seen = new Map<V, number>();
	values.forEach((v, i) => {
		const first = seen.get(v);
		if (first !== undefined) {
			ctx.addIssue({
				code: z.ZodIssueCode.custom,
				path: [i],
				message: `${label} ${show(v)} appears twice (positions ${first + 1} and ${i + 1}); remove the repeat.`
			});
		} else {
			seen.set(v, i);
		}
	});
}

const AXIS_ORDER = [
	['cellIds', 'cells'],
	['packIds', 'packs'],
	['ambients_K', AXES.ambients_K.plural],
	['statesOfHealth', AXES.statesOfHealth.plural],
	['arrivalSocs', AXES.arrivalSocs.plural],
	['leadTimes_s', AXES.leadTimes_s.plural],
	['setpoints_K', AXES.setpoints_K.plural],
	['heaterPowerCaps_W', AXES.heaterPowerCaps_W.plural]
] as const;

/** zod schema for a sweep definition (values in SI units and fractions). */
export const sweepDefinitionSchema = z
	.object({
		cellIds: idAxis('Cell'),
		packIds: idAxis('Pack'),
		ambients_K: numberAxis(AXES.ambients_K),
		statesOfHealth: numberAxis(AXES.statesOfHealth),
		arrivalSocs: numberAxis(AXES.arrivalSocs),
		leadTimes_s: numberAxis(AXES.leadTimes_s),
		setpoints_K: numberAxis(AXES.setpoints_K),
		heaterPowerCaps_W: numberAxis(AXES.heaterPowerCaps_W).optional()
	})
	.superRefine((def, ctx) => {
		const size = gridSize(def);
		if (size > MAX_GRID_POINTS) {
			ctx.addIssue({
				code: z.ZodIssueCode.custom,
				path: [],
				message: gridTooLargeMessage(def)
			});
		}
	});

function axisFactors(def: SweepDefinition): string[] {
	const parts: string[] = [];
	for (const [key, plural] of AXIS_ORDER) {
		const values = def[key];
		if (values === undefined) continue;
		parts.push(`${values.length} ${plural}`);
	}
	return parts;
}

function gridTooLargeMessage(def: SweepDefinition): string {
	return (
		`This sweep has ${gridSize(def)} grid points (${axisFactors(def).join(' × ')}); ` +
		`the limit is ${MAX_GRID_POINTS} — remove values from an axis.`
	);
}

export type SweepParseResult =
	| { ok: true; value: SweepDefinition }
	| { ok: false; errors: string[] };

/** Validate unknown input; on failure, messages are prefixed with their path. */
export function parseSweepDefinition(input: unknown): SweepParseResult {
	const result = sweepDefinitionSchema.safeParse(input);
	if (result.success) return { ok: true, value: result.data };
	return { ok: false, errors: sweepIssueMessages(result.error) };
}

/** "ambients_K[2]: Ambient temperature 60 °C is out of range; …" (no prefix for whole-sweep issues). */
export function sweepIssueMessages(error: z.ZodError): string[] {
	return error.issues.map((issue) => {
		const path = issue.path
			.map((p, i) => (typeof p === 'number' ? `[${p}]` : i === 0 ? p : `.${p}`))
			.join('');
		return path ? `${path}: ${issue.message}` : issue.message;
	});
}

// ---------------------------------------------------------------------------
// Grid arithmetic and expansion.

function scenarioCount(def: SweepDefinition): number {
	return (
		def.cellIds.length *
		def.packIds.length *
		def.ambients_K.length *
		def.statesOfHealth.length *
		def.arrivalSocs.length
	);
}

function strategyCount(def: SweepDefinition): number {
	return def.leadTimes_s.length * def.setpoints_K.length * (def.heaterPowerCaps_W?.length ?? 1);
}

/** Number of grid points: product of all axis lengths (baselines not included). */
export function gridSize(def: SweepDefinition): number {
	return scenarioCount(def) * strategyCount(def);
}

/** Number of simulations to run: every grid point plus one baseline per scenario. */
export function simulationCount(def: SweepDefinition): number {
	return scenarioCount(def) * (strategyCount(def) + 1);
}

/**
 * Stable string key of a scenario. A JSON array of the axis values, so ids
 * containing any character stay unambiguous and equal scenarios always give
 * equal keys (numbers use JavaScript's shortest round-trip formatting).
 */
export function scenarioKey(s: ScenarioKey): string {
	return JSON.stringify([s.cellId, s.packId, s.ambient_K, s.stateOfHealth, s.arrivalSoc]);
}

/** All scenarios, cellIds outermost and arrivalSocs fastest-varying. */
export function expandScenarios(def: SweepDefinition): Scenario[] {
	const out: Scenario[] = [];
	for (const cellId of def.cellIds)
		for (const packId of def.packIds)
			for (const ambient_K of def.ambients_K)
				for (const stateOfHealth of def.statesOfHealth)
					for (const arrivalSoc of def.arrivalSocs) {
						const key: ScenarioKey = { ambient_K, stateOfHealth, arrivalSoc, cellId, packId };
						out.push({ index: out.length, scenarioKey: scenarioKey(key), ...key });
					}
	return out;
}

/** All strategies, leadTimes_s outermost and heaterPowerCaps_W fastest-varying. */
export function expandStrategies(def: SweepDefinition): Strategy[] {
	const out: Strategy[] = [];
	for (const leadTime_s of def.leadTimes_s)
		for (const coolantSetpoint_K of def.setpoints_K) {
			if (def.heaterPowerCaps_W === undefined) {
				out.push({ index: out.length, leadTime_s, coolantSetpoint_K });
			} else {
				for (const heaterPowerCap_W of def.heaterPowerCaps_W)
					out.push({ index: out.length, leadTime_s, coolantSetpoint_K, heaterPowerCap_W });
			}
		}
	return out;
}

/**
 * Split all simulations into consecutive chunks of at most `chunkSize` tasks
 * (the last may be shorter), so one worker job can carry one chunk. Per
 * scenario the baseline comes first, then every strategy in order; each
 * (scenario, strategy) pair and each baseline appears exactly once.
 *
 * @throws RangeError if chunkSize is not a positive integer.
 */
export function chunkTasks(def: SweepDefinition, chunkSize: number): TaskChunk[] {
	if (!Number.isInteger(chunkSize) || chunkSize < 1) {
		throw new RangeError(`Chunk size must be a positive whole number (got ${chunkSize}).`);
	}
	const scenarios = scenarioCount(def);
	const strategies = strategyCount(def);
	const chunks: TaskChunk[] = [];
	let current: SweepTask[] = [];
	const push = (task: SweepTask) => {
		current.push(task);
		if (current.length === chunkSize) {
			chunks.push({ chunkIndex: chunks.length, tasks: current });
			current = [];
		}
	};
	for (let s = 0; s < scenarios; s++) {
		push({ scenarioIndex: s, strategyIndex: null });
		for (let k = 0; k < strategies; k++) push({ scenarioIndex: s, strategyIndex: k });
	}
	if (current.length > 0) chunks.push({ chunkIndex: chunks.length, tasks: current });
	return chunks;
}

/**
 * Wall-clock estimate for the whole sweep (strategies and baselines) at a
 * measured throughput of `simsPerSecond` simulations per second.
 *
 * @throws RangeError if simsPerSecond is not a positive finite number.
 */
export function estimateRunTime_s(def: SweepDefinition, simsPerSecond: number): number {
	if (!Number.isFinite(simsPerSecond) || simsPerSecond <= 0) {
		throw new RangeError(`Simulations per second must be a positive number (got ${simsPerSecond}).`);
	}
	return simulationCount(def) / simsPerSecond;
}
