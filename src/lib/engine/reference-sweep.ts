/**
 * The reference sweep used by the benchmark (npm run bench) and for
 * throughput estimates: 10 lead times × 8 coolant set-points × 3 ambients ×
 * 2 states of health = 480 strategy runs of the example drive-and-charge
 * (30-minute drive, charge to 80 %) on the demo NMC cell and demo pack.
 */
import { demoCells, demoPack, exampleScenario } from './demo';
import type { SimulationInput, SimulationOptions } from './schemas';
import { celsiusToKelvin } from './units';

/** Cartesian product of named axes; the first axis varies slowest. Generic over the value types. */
export function expandGrid<A extends Record<string, readonly unknown[]>>(axes: A): { [K in keyof A]: A[K][number] }[] {
	const keys = Object.keys(axes) as (keyof A)[];
	let out: Record<keyof A, unknown>[] = [{} as Record<keyof A, unknown>];
	for (const key of keys) {
		const next: Record<keyof A, unknown>[] = [];
		for (const partial of out) for (const v of axes[key]) next.push({ ...partial, [key]: v });
		out = next;
	}
	return out as { [K in keyof A]: A[K][number] }[];
}

export const REFERENCE_SWEEP_AXES = {
	leadTime_s: [0, 200, 400, 600, 800, 1000, 1200, 1400, 1600, 1800],
	coolantSetpoint_K: [10, 15, 20, 25, 30, 35, 40, 45].map(celsiusToKelvin),
	ambient_K: [-20, 0, 25].map(celsiusToKelvin),
	stateOfHealth: [1, 0.8]
} as const;

/** The 480 reference inputs (series off, as a sweep would run them). */
export function referenceSweepInputs(options: SimulationOptions = { keepSeries: false }): SimulationInput[] {
	return expandGrid(REFERENCE_SWEEP_AXES).map((p) => ({
		cell: demoCells[0],
		pack: demoPack,
		scenario: { ...exampleScenario, ambient_K: p.ambient_K, stateOfHealth: p.stateOfHealth },
		strategy: { leadTime_s: p.leadTime_s, coolantSetpoint_K: p.coolantSetpoint_K },
		options
	}));
}
