/**
 * What a sweep job carries and returns. Jobs carry every input they need (cell, pack and scenario
 * objects exactly as snapshotted on the sweep row), so workers never touch the database; the web
 * process is the single SQLite writer and persists what comes back.
 */
import type { CellParams, PackDesign, Scenario, SimulationSummary } from '../../engine/index';

export interface StrategyInput {
	leadTime_s: number;
	coolantSetpoint_K: number;
	heaterPowerCap_W?: number;
}

/** Engine inputs of one scenario of a sweep (a baseline and its front share them). */
export interface ScenarioInputs {
	cell: CellParams;
	pack: PackDesign;
	scenario: Scenario;
}

export interface ChunkTask {
	scenarioIndex: number;
	/** null = the scenario's baseline (the pack's own thermal policy, no pre-conditioning). */
	strategyIndex: number | null;
}

export interface ChunkJobData {
	sweepId: number;
	queueToken: string;
	chunkIndex: number;
	tasks: ChunkTask[];
	/** Inputs of the scenarios this chunk touches, keyed by scenario index. */
	scenarios: Record<string, ScenarioInputs>;
	/** Strategies this chunk touches, keyed by strategy index. */
	strategies: Record<string, StrategyInput>;
}

export interface ComputedPoint {
	scenarioIndex: number;
	strategyIndex: number | null;
	summary: SimulationSummary;
	compute_ms: number;
}

export interface ChunkJobResult {
	sweepId: number;
	chunkIndex: number;
	/** True when the worker skipped the chunk because the sweep was cancelled. */
	cancelled: boolean;
	points: ComputedPoint[];
	/** `hostname:pid` of the worker process that computed the chunk. */
	worker: string;
	/** 1 for the first try; >1 when BullMQ retried the chunk. */
	attempt: number;
	elapsed_ms: number;
}

/** A chunk of an exact year-of-use run: the same simulations as a sweep chunk, for one run. */
export interface YearChunkJobData {
	runId: number;
	queueToken: string;
	chunkIndex: number;
	tasks: ChunkTask[];
	scenarios: Record<string, ScenarioInputs>;
	strategies: Record<string, StrategyInput>;
}

export interface YearChunkJobResult {
	runId: number;
	chunkIndex: number;
	cancelled: boolean;
	points: ComputedPoint[];
	worker: string;
	attempt: number;
	elapsed_ms: number;
}

export interface SeriesTask {
	pointId: number;
	strategyIndex: number | null;
}

export interface SeriesJobData {
	sweepId: number;
	queueToken: string;
	scenarioIndex: number;
	inputs: ScenarioInputs;
	tasks: (SeriesTask & { strategy: StrategyInput | null })[];
	seriesInterval_s: number;
}

export interface SeriesJobResult {
	sweepId: number;
	scenarioIndex: number;
	cancelled: boolean;
	/** Each point's TimeSeries as gzip-compressed JSON, base64 (Redis return values are strings). */
	series: { pointId: number; gzipBase64: string }[];
	worker: string;
	elapsed_ms: number;
}

/** Progress a job reports while it runs (BullMQ `job.updateProgress`). */
export interface JobProgress {
	done: number;
	total: number;
}

/** Time-series resolution kept for front points and for on-demand recomputation. */
export const STORED_SERIES_INTERVAL_S = 5;
