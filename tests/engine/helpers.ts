import { demoCells, demoPack, exampleScenario, type SimulationInput, type Scenario, type Strategy, type SimulationOptions } from '../../src/lib/engine/index';

export const nmc = demoCells[0];
export const lfp = demoCells[1];
export const C = (celsius: number) => celsius + 273.15;

/** A simulation input built on the demo NMC cell, demo pack and example scenario. */
export function input(
	scenario: Partial<Scenario> = {},
	strategy: Strategy | null = null,
	options: SimulationOptions = { keepSeries: false }
): SimulationInput {
	return { cell: nmc, pack: demoPack, scenario: { ...exampleScenario, ...scenario }, strategy, options };
}

/** Plug in straight after a cold/warm soak: no drive, no dwell. */
export const soaked = (ambient_C: number, extra: Partial<Scenario> = {}): Partial<Scenario> => ({
	ambient_K: C(ambient_C),
	drive: { duration_s: 0, profile: { kind: 'constant', power_W: 0 } },
	dwell_s: 0,
	...extra
});
