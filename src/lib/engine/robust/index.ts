/**
 * Robust strategies under uncertainty: how a pre-conditioning choice holds up when arrival time,
 * ambient, arrival state of charge, initial pack temperature and the vehicle's cells differ from
 * the plan. Pure and synchronous like the rest of the engine (no I/O).
 */
export * from './distributions';
export * from './uncertainty';
export * from './design';
export * from './statistics';
export * from './sobol';
export * from './apply';
export * from './front';
export * from './analysis';
export * from './plan';
