/**
 * Year of use, exact mode (chained into `npm run bench`; alone: `npx tsx scripts/bench-year-exact.ts`).
 *
 * The production path end to end: a year of 1 000 charges (an invented cold continental climate
 * at 0.1 °C resolution, three arrival states of charge, seeded random sampling) evaluated against
 * a small finished sweep, then its exact run — planned, queued as chunk jobs on a private
 * redis-server, simulated by the app's own worker child with 2 threads, stored chunk by chunk in
 * SQLite and added up. The clock runs from the start request to the finished result; thread
 * start-up happens before. Target: ≤ 10 s on 2 cores.
 * Everything lives in a temporary data folder that is removed afterwards.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';

const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'paretherm-bench-year-'));
process.env.PARETHERM_DATA_DIR = dataDir;
delete process.env.REDIS_URL; // always the private server: the benchmark must not touch a shared Redis
process.env.PARETHERM_QUEUE_PREFIX = `benchyear${process.pid}`;

const { ensureDb } = await import('../src/lib/server/db/index');
const { Program, ParameterSet, Sweep, YearExactChunk } = await import('../src/lib/server/db/models/index');
const { demoCells, demoPack, exampleScenario } = await import('../src/lib/engine/index');
const { createSweep } = await import('../src/lib/server/sweeps/service');
const { runSweepInline } = await import('../src/lib/server/sweeps/inline');
const { startSweepRuntime, stopSweepRuntime } = await import('../src/lib/server/sweeps/runtime');
const { storeClimate, savePattern, createEvaluation } = await import('../src/lib/server/year');
const { startExactRun } = await import('../src/lib/server/year-exact');
const { climateCsv_C, inventedClimate_C } = await import('../src/lib/year/climate');

const TARGET_S = 10;
const THREADS = 2;
const origLog = console.log;
const quiet = process.env.PARETHERM_BENCH_VERBOSE ? console.log : () => {};
const K = (c: number) => c + 273.15;
const loadBefore = os.loadavg().map((v) => v.toFixed(2)).join(', ');

async function main() {
	await ensureDb();
	console.log = quiet;
	const program = await Program.create({ name: 'Benchmark', description: 'year of use, exact mode' });
	for (const [kind, slug, data] of [
		['cell', demoCells[0].id, demoCells[0]],
		['pack', demoPack.id, demoPack],
		['scenario', 'example', exampleScenario]
	] as const)
		await ParameterSet.create({ program_id: program.id, kind, slug, version: 1, name: slug, data: JSON.stringify(data), created_by: null });
	const sweep = await createSweep(program.id, null, {
		name: 'Year grid',
		scenarioId: 'example',
		definition: {
			cellIds: [demoCells[0].id],
			packIds: [demoPack.id],
			ambients_K: [-20, -10, 0, 10, 25].map(K),
			statesOfHealth: [1],
			arrivalSocs: [0.15, 0.4],
			leadTimes_s: [900, 1800],
			setpoints_K: [20, 30].map(K)
		}
	});
	const report = await runSweepInline(sweep.id, { threads: THREADS });
	if (report.status !== 'done') throw new Error(`The grid sweep ended ${report.status}.`);
	const climate_C = inventedClimate_C({ mean_C: 2, seasonalAmplitude_K: 17, dailyAmplitude_K: 5, coldestDay: 20, coldestHour: 5 }).map((c) => Math.round(c * 10) / 10);
	const climate = await storeClimate(program.id, null, { bytes: new TextEncoder().encode(climateCsv_C(climate_C)), fileName: 'bench.csv' }, 'Invented bench climate', { invented: true });
	const pattern = await savePattern(program.id, null, 'Bench pattern', {
		eventsPerWeek: (1000 * 7) / 365,
		monthWeights: new Array(12).fill(1),
		hourWeights: new Array(24).fill(1),
		arrivalSocs: [{ soc: 0.15, weight: 1 }, { soc: 0.25, weight: 2 }, { soc: 0.4, weight: 1 }],
		targetSoc: exampleScenario.target.soc,
		scenarioSlug: 'example',
		sampling: 'random',
		seed: 3
	});
	const form: Record<string, string> = {
		name: 'Bench year',
		climateId: String(climate.id),
		patternId: String(pattern.id),
		sweepId: String(sweep.id),
		fixedLeadTime_min: '15',
		fixedSetpoint_C: '20',
		fixedBelowAmbient_C: '5',
		fleetSize: '1'
	};
	const evaluation = await createEvaluation(program.id, null, (k) => form[k] ?? null);
	const events = JSON.parse(evaluation.result!).events as number;

	await startSweepRuntime({ inProcessWorker: true, workerProcess: true, workerNice: 0, quietWorker: !process.env.PARETHERM_BENCH_VERBOSE, threads: THREADS });
	const t0 = performance.now();
	const run = await startExactRun(program.id, evaluation.id, null);
	for (;;) {
		await run.reload();
		if (['done', 'failed', 'cancelled'].includes(run.status)) break;
		await new Promise((r) => setTimeout(r, 20));
	}
	const wall_s = (performance.now() - t0) / 1000;
	await stopSweepRuntime();
	console.log = origLog;
	if (run.status !== 'done') throw new Error(`The exact run ended ${run.status}: ${run.failure_reason}`);
	const result = JSON.parse(run.result!);
	const chunks = await YearExactChunk.findAll({ where: { run_id: run.id }, attributes: ['elapsed_ms'] });
	const perSim_ms = chunks.reduce((a, c) => a + c.elapsed_ms, 0) / run.simulation_count;
	origLog('\nYear of use, exact mode');
	origLog(`  ${events} charges → ${run.simulation_count} simulations (distinct charges × baseline and policies) in ${run.chunk_count} chunks, ${THREADS} threads, queue path: ${wall_s.toFixed(2)} s (${(run.simulation_count / wall_s).toFixed(0)} simulations/s)`);
	origLog(`  engine time per simulation (inside the worker threads): ${perSim_ms.toFixed(0)} ms on average; ${os.cpus().length} CPU cores, load average (1, 5, 15 min) ${loadBefore} before, ${os.loadavg().map((v) => v.toFixed(2)).join(', ')} after`);
	for (const e of result.lookupError)
		origLog(`  lookup error, ${e.kind}: time saved ${(e.timeSaved_s.rel * 100).toFixed(1)} %, energy ${(e.energy_Wh.rel * 100).toFixed(1)} %`);
	origLog(`  ${result.verdict}`);
	origLog(`  exact mode, 1 000 charges, 2 threads          ${wall_s.toFixed(2).padStart(6)} s   target ≤ ${TARGET_S} s  ${wall_s <= TARGET_S ? 'met' : 'NOT met'}`);
	await Sweep.sequelize!.close();
}

try {
	await main();
} finally {
	console.log = origLog;
	fs.rmSync(dataDir, { recursive: true, force: true });
}
process.exit(0);
