/**
 * The CPU-bound part of a sweep job: call the engine for each task. Runs inside a worker thread
 * (sim-thread.ts) in production, and directly in unit tests. Exceptions carry the point they came
 * from, so a failed chunk tells the engineer which scenario and strategy to look at.
 */
import { gzipSync } from 'node:zlib';
import { prepareScenario, type SimulationInput, type SimulationResult } from '../../engine/index';
import type { ChunkJobData, ComputedPoint, ScenarioInputs, SeriesJobData, StrategyInput } from './jobs';

const K0 = 273.15;

function describePoint(scenarioIndex: number, inputs: ScenarioInputs | undefined, strategy: StrategyInput | null): string {
	const s = inputs?.scenario as { ambient_K?: number; stateOfHealth?: number; arrivalSoc?: number } | undefined;
	const where =
		s && typeof s.ambient_K === 'number'
			? ` (ambient ${(s.ambient_K - K0).toFixed(1)} °C, state of health ${Math.round((s.stateOfHealth ?? NaN) * 100)} %, arrival SOC ${Math.round((s.arrivalSoc ?? NaN) * 100)} %)`
			: '';
	const what = strategy
		? `strategy lead time ${(strategy.leadTime_s / 60).toFixed(1)} min, coolant set-point ${(strategy.coolantSetpoint_K - K0).toFixed(1)} °C` +
			(strategy.heaterPowerCap_W !== undefined ? `, heater cap ${(strategy.heaterPowerCap_W / 1000).toFixed(2)} kW` : '')
		: 'baseline';
	return `scenario ${scenarioIndex}${where}, ${what}`;
}

type Runner = (strategy: StrategyInput | null, options: SimulationInput['options']) => SimulationResult;

/**
 * The engine call for every simulation of one scenario (its cell, pack and scenario shared by the
 * baseline and all strategies of a chunk): the scenario is validated once, each strategy on its own.
 */
function scenarioRunner(inputs: ScenarioInputs): Runner {
	const run = prepareScenario(inputs as Pick<SimulationInput, 'cell' | 'pack' | 'scenario'>);
	return (strategy, options) => run(strategy, options);
}

export class ChunkComputeError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'ChunkComputeError';
	}
}

/** Simulate every task of a chunk in order; `onProgress` after each one. */
export function computeChunk(data: ChunkJobData, onProgress?: (done: number, total: number) => void): ComputedPoint[] {
	const out: ComputedPoint[] = [];
	const total = data.tasks.length;
	const runners = new Map<number, Runner>();
	for (const task of data.tasks) {
		const inputs = data.scenarios[String(task.scenarioIndex)];
		const strategy = task.strategyIndex === null ? null : data.strategies[String(task.strategyIndex)];
		if (!inputs || strategy === undefined) {
			throw new ChunkComputeError(
				`Chunk ${data.chunkIndex} of sweep ${data.sweepId} lacks the inputs of scenario ${task.scenarioIndex}` +
					(task.strategyIndex === null ? '' : ` or strategy ${task.strategyIndex}`) +
					'; the job was built by a different Paretherm version. Re-queue the sweep.'
			);
		}
		const t0 = performance.now();
		let summary;
		try {
			let run = runners.get(task.scenarioIndex);
			if (!run) runners.set(task.scenarioIndex, (run = scenarioRunner(inputs)));
			({ summary } = run(strategy, { keepSeries: false }));
		} catch (e) {
			throw new ChunkComputeError(`Simulation failed for ${describePoint(task.scenarioIndex, inputs, strategy)}: ${(e as Error)?.message ?? e}`);
		}
		out.push({
			scenarioIndex: task.scenarioIndex,
			strategyIndex: task.strategyIndex,
			summary,
			compute_ms: Math.round((performance.now() - t0) * 1000) / 1000
		});
		onProgress?.(out.length, total);
	}
	return out;
}

/** Re-run front points with their time series kept; each series gzip-compressed. */
export function computeFrontSeries(
	data: SeriesJobData,
	onProgress?: (done: number, total: number) => void
): { pointId: number; gzipBase64: string }[] {
	const out: { pointId: number; gzipBase64: string }[] = [];
	let run: Runner | null = null;
	for (const task of data.tasks) {
		let series;
		try {
			run ??= scenarioRunner(data.inputs);
			({ series } = run(task.strategy, { keepSeries: true, seriesInterval_s: data.seriesInterval_s }));
		} catch (e) {
			throw new ChunkComputeError(
				`Simulation failed for ${describePoint(data.scenarioIndex, data.inputs, task.strategy)} while recording its time series: ${(e as Error)?.message ?? e}`
			);
		}
		out.push({ pointId: task.pointId, gzipBase64: gzipSync(JSON.stringify(series)).toString('base64') });
		onProgress?.(out.length, data.tasks.length);
	}
	return out;
}
