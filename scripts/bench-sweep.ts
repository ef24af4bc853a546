/**
 * Sweep throughput benchmark (chained into `npm run bench`; alone: `npx tsx scripts/bench-sweep.ts`).
 *
 * Runs the engine's reference sweep — 10 lead times × 8 coolant set-points × 3 ambients × 2 states
 * of health = 480 grid points, plus one baseline per scenario — with 1 and then 2 simulation
 * threads, two ways, all in this one run:
 *   - "queue":  the production path: private redis-server, BullMQ chunk jobs, the app's own worker
 *               child process, results stored in SQLite by the sweep service (create → every
 *               chunk stored).
 *   - "pool":   the same chunks and persistence dispatched straight to the thread pool, without
 *               Redis, to show what the queue itself costs.
 * Thread start-up (loading the compiled engine into each thread, starting the worker process)
 * happens before the clock starts. Prints the wall times beside the target (≤ 1 s with 2 threads)
 * and the speed-up from 1 to 2 threads of each path as a ratio (target ≥ 1.8×). The worker child
 * runs at nice 0 here, like the pool path: on a machine shared with other work, the app's nice 10
 * would measure the neighbours, not Paretherm.
 * Everything lives in a temporary data folder that is removed afterwards.
 *
 * Flags: --pool-only (skip the queue runs), --threads=1,2 (thread counts to try), --repeat=N (run
 * each configuration N times, interleaved, and keep the fastest, for a machine busy with other work).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';

const args = process.argv.slice(2);
const poolOnly = args.includes('--pool-only');
const threadCounts = (args.find((a) => a.startsWith('--threads='))?.slice('--threads='.length) ?? '1,2')
	.split(',')
	.map(Number)
	.filter((n) => Number.isInteger(n) && n > 0);

const repeat = Math.max(1, Number(args.find((a) => a.startsWith('--repeat='))?.slice('--repeat='.length) ?? 1) || 1);

const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'paretherm-bench-'));
process.env.PARETHERM_DATA_DIR = dataDir;
delete process.env.REDIS_URL; // always the private server: the benchmark must not touch a shared Redis
process.env.PARETHERM_QUEUE_PREFIX = `bench${process.pid}`;

// Dynamic imports: the database module reads PARETHERM_DATA_DIR when it is loaded.
const { ensureDb } = await import('../src/lib/server/db/index');
const { Program, ParameterSet, Sweep } = await import('../src/lib/server/db/models/index');
const { demoCells, demoPack, exampleScenario, REFERENCE_SWEEP_AXES } = await import('../src/lib/engine/index');
const { createSweep } = await import('../src/lib/server/sweeps/service');
const { runSweepInline } = await import('../src/lib/server/sweeps/inline');
const { startSweepRuntime, stopSweepRuntime } = await import('../src/lib/server/sweeps/runtime');

const quiet = process.env.PARETHERM_BENCH_VERBOSE ? console.log : () => {};
/** Targets of the speed plan (README, "Speed and load"). */
const TARGET_2THREADS_S = 1;
const TARGET_SPEEDUP = 1.8;
const origLog = console.log;

interface Row {
	path: string;
	threads: number;
	simulations: number;
	wall_s: number;
}

const loadBefore = os.loadavg().map((v) => v.toFixed(2)).join(', ');

async function main() {
	await ensureDb();
	const program = await Program.create({ name: 'Benchmark', description: 'reference sweep' });
	for (const [kind, slug, data] of [
		['cell', demoCells[0].id, demoCells[0]],
		['pack', demoPack.id, demoPack],
		['scenario', 'example', exampleScenario]
	] as const)
		await ParameterSet.create({ program_id: program.id, kind, slug, version: 1, name: slug, data: JSON.stringify(data), created_by: null });

	const request = {
		name: 'Reference sweep',
		scenarioId: 'example',
		definition: {
			cellIds: [demoCells[0].id],
			packIds: [demoPack.id],
			ambients_K: [...REFERENCE_SWEEP_AXES.ambient_K],
			statesOfHealth: [...REFERENCE_SWEEP_AXES.stateOfHealth],
			arrivalSocs: [exampleScenario.arrivalSoc],
			leadTimes_s: [...REFERENCE_SWEEP_AXES.leadTime_s],
			setpoints_K: [...REFERENCE_SWEEP_AXES.coolantSetpoint_K]
		}
	};

	const rows: Row[] = [];
	let gridPoints = 0;
	const keepFastest = (row: Row) => {
		const same = rows.find((r) => r.path === row.path && r.threads === row.threads);
		if (!same) rows.push(row);
		else if (row.wall_s < same.wall_s) same.wall_s = row.wall_s;
	};
	for (let round = 0; round < repeat; round++) {
		for (const threads of threadCounts) {
			// Pool path.
			{
				const sweep = await createSweep(program.id, null, request);
				gridPoints = sweep.grid_points;
				const r = await runSweepInline(sweep.id, { threads });
				if (r.status !== 'done') throw new Error(`The pool run ended ${r.status}.`);
				keepFastest({ path: 'pool', threads, simulations: r.simulations, wall_s: r.pointsWall_s });
				origLog(`  pool   ${threads} thread(s): ${r.simulations} simulations in ${r.pointsWall_s.toFixed(2)} s`);
			}
			if (poolOnly) continue;
			// Queue path: the worker's threads are loaded before startSweepRuntime resolves.
			{
				console.log = quiet; // runtime and worker chatter
				await startSweepRuntime({ inProcessWorker: true, workerProcess: true, workerNice: 0, quietWorker: !process.env.PARETHERM_BENCH_VERBOSE, threads });
				const t0 = performance.now();
				const sweep = await createSweep(program.id, null, request);
				for (;;) {
					await sweep.reload();
					if (sweep.chunks_done >= sweep.chunk_count || sweep.status === 'failed' || sweep.status === 'cancelled') break;
					await new Promise((r) => setTimeout(r, 20));
				}
				const wall_s = (performance.now() - t0) / 1000;
				// Let finalisation and the front time series finish before stopping, for a clean shutdown.
				for (let i = 0; i < 600 && !['done', 'failed', 'cancelled'].includes(sweep.status); i++) {
					await new Promise((r) => setTimeout(r, 50));
					await sweep.reload();
				}
				await stopSweepRuntime();
				console.log = origLog;
				if (sweep.status === 'failed') throw new Error(`The queue run failed: ${sweep.failure_reason}`);
				keepFastest({ path: 'queue', threads, simulations: sweep.simulation_count, wall_s });
				origLog(`  queue  ${threads} thread(s): ${sweep.simulation_count} simulations in ${wall_s.toFixed(2)} s`);
			}
		}
	}
	rows.sort((a, b) => (a.path === b.path ? a.threads - b.threads : a.path === 'pool' ? -1 : 1));

	const scenarios = REFERENCE_SWEEP_AXES.ambient_K.length * REFERENCE_SWEEP_AXES.stateOfHealth.length;
	origLog('');
	origLog(`Sweep throughput${repeat > 1 ? ` (fastest of ${repeat} runs each)` : ''} — reference sweep: ${gridPoints} grid points (10 lead times × 8 set-points × 3 ambients × 2 states of health) + ${scenarios} baselines, ${os.cpus().length} CPU cores`);
	origLog('  path   threads   wall [s]   simulations/s   speed-up vs 1 thread');
	for (const r of rows) {
		const one = rows.find((q) => q.path === r.path && q.threads === 1);
		const speedup = one ? (one.wall_s / r.wall_s).toFixed(2) + '×' : '–';
		origLog(`  ${r.path.padEnd(6)} ${String(r.threads).padStart(7)} ${r.wall_s.toFixed(2).padStart(10)} ${(r.simulations / r.wall_s).toFixed(1).padStart(15)}   ${speedup}`);
	}
	origLog(`  machine load average (1, 5, 15 min): ${loadBefore} before, ${os.loadavg().map((v) => v.toFixed(2)).join(', ')} after`);
	origLog('');
	origLog('Sweep figures against their targets:');
	const line = (figure: string, measured: string, target: string, met: boolean) => origLog(`  ${figure.padEnd(52)} ${measured.padStart(8)}   target ${target.padEnd(7)} ${met ? 'met' : 'NOT met'}`);
	for (const path of ['pool', 'queue']) {
		const one = rows.find((r) => r.path === path && r.threads === 1);
		const two = rows.find((r) => r.path === path && r.threads === 2);
		if (two) line(`480-point reference sweep, 2 threads, ${path}`, `${two.wall_s.toFixed(2)} s`, `≤ ${TARGET_2THREADS_S} s`, two.wall_s <= TARGET_2THREADS_S);
		if (one && two) line(`speed-up 1 → 2 threads, ${path}`, `${(one.wall_s / two.wall_s).toFixed(2)}×`, `≥ ${TARGET_SPEEDUP}×`, one.wall_s / two.wall_s >= TARGET_SPEEDUP);
	}
	await Sweep.sequelize!.close();
}

try {
	await main();
} finally {
	console.log = origLog;
	fs.rmSync(dataDir, { recursive: true, force: true });
}
process.exit(0);
