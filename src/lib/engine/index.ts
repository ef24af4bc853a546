/**
 * Paretherm simulation engine: pure, synchronous TypeScript (no I/O, no
 * framework). SI units inside with the unit in every name; the sign
 * convention (cell current I_A > 0 while charging) is stated in units.ts.
 */
export { simulate, prepareScenario, LIMIT_NAMES, CONTROL_TOLERANCE } from './simulate';
export type { LimitName, Phase, ChargeProtocol, TimeSeries, SimulationSummary, SimulationResult } from './simulate';
export {
	cellParamsSchema,
	packDesignSchema,
	scenarioSchema,
	strategySchema,
	simulationOptionsSchema,
	simulationInputSchema,
	ocpSpecSchema,
	validateSimulationInput,
	EngineInputError,
	zodIssues,
	issuePath,
	BUILTIN_DRIVE_PROFILES
} from './schemas';
export type {
	CellParams,
	CellParamsInput,
	ElectrodeParams,
	PackDesign,
	PackDesignInput,
	Scenario,
	ScenarioInput,
	DriveProfile,
	Strategy,
	SimulationOptions,
	SimulationInput
} from './schemas';
export { demoCells, demoPack, demoPacks, demoNmcPouch, demoLfpPrismatic, exampleScenario, findDemoCell, findDemoPack } from './demo';
export { cellDerived } from './cell-derived';
export type { CellDerived } from './cell-derived';
export { cellWindow } from './cell-window';
export { graphiteOcpChen2020_V, nmc811OcpChen2020_V, PUBLISHED_OCP_FITS, makeOcp } from './ocp';
export type { OcpSpec, PublishedOcpFit } from './ocp';
export { parseScenarioFile, exampleScenarioFile, ScenarioFileError } from './scenario-file';
export type { ScenarioFile } from './scenario-file';
export { referenceSweepInputs, expandGrid, REFERENCE_SWEEP_AXES } from './reference-sweep';
export * from './units';
