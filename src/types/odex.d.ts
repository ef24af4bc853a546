/**
 * Type declarations for odex 2.0.4 (E. Hairer & G. Wanner's ODEX
 * Gragg–Bulirsch–Stoer extrapolation solver, JavaScript port by Colin Smith).
 * The package ships TypeScript sources but no declaration entry point.
 */
declare module 'odex' {
	export type Derivative = (x: number, y: number[]) => number[];
	export type OutputFunction = (
		nr: number,
		xold: number,
		x: number,
		y: number[],
		dense?: (c: number, x: number) => number
	) => boolean | void;
	export enum Outcome {
		Converged = 0,
		MaxStepsExceeded = 1,
		EarlyReturn = 2
	}
	export interface SolveResult {
		y: number[];
		outcome: Outcome;
		nStep: number;
		xEnd: number;
		nAccept: number;
		nReject: number;
		nEval: number;
	}
	export class Solver {
		constructor(n: number);
		n: number;
		maxSteps: number;
		initialStepSize: number;
		maxStepSize: number;
		denseOutput: boolean;
		relativeTolerance: number | number[];
		absoluteTolerance: number | number[];
		solve(f: Derivative, x: number, y0: number[], xEnd: number, solOut?: OutputFunction): SolveResult;
		grid(dt: number, out: (xOut: number, yOut: number[]) => unknown): OutputFunction;
	}
}
