/**
 * Run a stored sweep to completion inside this process, without Redis: the same chunk jobs, the
 * same worker-thread computation and the same idempotent persistence and finalisation as the
 * queue path, only dispatched directly to a thread pool. Timings start once the threads are loaded. Used by the demo seed (so a newcomer's
 * first screen has a finished sweep without a running Redis) and by the benchmark.
 */
import { Sweep, SweepChunk, SweepScenario } from '../db/models/index';
import type { ComputedPoint } from '../queue/jobs';
import { SimulationPool } from '../queue/thread-pool';
import { chunkJobData, finalizeSweep, persistChunkResult, persistSeriesResult, seriesJobData } from './service';

export interface InlineRunReport {
	sweepId: number;
	status: string;
	simulations: number;
	/** Wall time of the grid points alone (chunks computed and stored), s. */
	pointsWall_s: number;
	/** Wall time including finalisation and the front time series, s. */
	totalWall_s: number;
}

export async function runSweepInline(sweepId: number, opts: { threads?: number; pool?: SimulationPool; onProgress?: (done: number, total: number) => void } = {}): Promise<InlineRunReport> {
	const sweep = await Sweep.findByPk(sweepId);
	if (!sweep) throw new Error(`No sweep ${sweepId}.`);
	if (sweep.status !== 'queued' && sweep.status !== 'running')
		throw new Error(`Sweep ${sweepId} is ${sweep.status}; only queued or running sweeps can be run.`);
	const pool = opts.pool ?? new SimulationPool(opts.threads);
	try {
		await pool.ready();
		const t0 = performance.now();
		const stored = new Set((await SweepChunk.findAll({ where: { sweep_id: sweepId }, attributes: ['chunk_index'] })).map((c) => c.chunk_index));
		let done = sweep.simulations_done;
		await Promise.all(
			Array.from({ length: sweep.chunk_count }, (_, i) => i)
				.filter((i) => !stored.has(i))
				.map(async (i) => {
					const data = chunkJobData(sweep, i);
					const c0 = performance.now();
					const points = await pool.run<ComputedPoint[]>({ kind: 'chunk', data });
					const outcome = await persistChunkResult(
						{ sweepId, chunkIndex: i, cancelled: false, points, worker: `inline:${process.pid}`, attempt: 1, elapsed_ms: performance.now() - c0 },
						sweep.queue_token
					);
					if (outcome === 'stored') done += points.length;
					opts.onProgress?.(done, sweep.simulation_count);
				})
		);
		const pointsWall_s = (performance.now() - t0) / 1000;
		await finalizeSweep(sweepId);
		const pending = await SweepScenario.findAll({ where: { sweep_id: sweepId, series_status: 'pending' } });
		await Promise.all(
			pending.map(async (sc) => {
				const data = await seriesJobData(sweep, sc.scenario_index);
				const series = await pool.run<{ pointId: number; gzipBase64: string }[]>({ kind: 'series', data });
				await persistSeriesResult({ sweepId, scenarioIndex: sc.scenario_index, cancelled: false, series, worker: `inline:${process.pid}`, elapsed_ms: 0 }, sweep.queue_token);
			})
		);
		await sweep.reload();
		return { sweepId, status: sweep.status, simulations: sweep.simulation_count, pointsWall_s, totalWall_s: (performance.now() - t0) / 1000 };
	} finally {
		if (!opts.pool) await pool.close();
	}
}
