/**
 * Engine benchmark (not a test): `npm run bench` (then scripts/bench-sweep.ts for threads and the
 * queue). Every figure is printed beside its target; targets live here and in bench-sweep.ts,
 * never in tests.
 *
 * 1. Speed, one thread: median wall time of one 30-minute drive + dwell + charge to 80 % (the
 *    example scenario with a 15-min pre-conditioning strategy, and its baseline), series off as in
 *    a sweep; and of a charge-only case with one cell group.
 * 2. Accuracy of that speed: on cold/hot, new/aged, with and without a drive, the engine's default
 *    steps against a converged reference — the steps halved until time to target and thermal
 *    energy move by less than 0.05 % — and the lowest anode potential against the cell's margin.
 * 3. Memory: heap held by one result and heap allocated per simulation.
 * 4. Throughput on one thread over the 480-point reference grid (src/lib/engine/reference-sweep.ts).
 */
import { spawnSync } from 'node:child_process';
import os from 'node:os';
import { fileURLToPath } from 'node:url';
import {
	demoCells,
	demoPack,
	exampleScenario,
	exampleScenarioFile,
	parseScenarioFile,
	referenceSweepInputs,
	simulate,
	celsiusToKelvin,
	type SimulationInput,
	type SimulationOptions
} from '../src/lib/engine/index';

/** Targets of the speed plan (README, "Speed and load"). */
const TARGET = {
	driveAndCharge_ms: 2,
	chargeOnly_ms: 0.5,
	relError_pct: 0.3,
	anodeOvershoot_mV: 1,
	converged_pct: 0.05
};

// Re-run with --expose-gc so the memory figures are meaningful.
const gc = (globalThis as { gc?: () => void }).gc;
if (!gc) {
	const r = spawnSync(process.execPath, ['--expose-gc', '--import', 'tsx', fileURLToPath(import.meta.url), ...process.argv.slice(2)], { stdio: 'inherit' });
	process.exit(r.status ?? 1);
}
const collect = gc as () => void;

function median(xs: number[]): number {
	const s = [...xs].sort((a, b) => a - b);
	const m = s.length >> 1;
	return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/** Median and p90 over at least `minRuns` runs and at least `minTime_ms` of runs, after a warm-up. */
function timeRuns(inp: SimulationInput, minRuns = 40, minTime_ms = 1500): { median_ms: number; p90_ms: number; runs: number } {
	for (let i = 0; i < 10; i++) simulate(inp); // warm-up (JIT)
	const t: number[] = [];
	const start = performance.now();
	while (t.length < minRuns || performance.now() - start < minTime_ms) {
		const t0 = performance.now();
		simulate(inp);
		t.push(performance.now() - t0);
		if (t.length >= 5000) break;
	}
	t.sort((a, b) => a - b);
	return { median_ms: median(t), p90_ms: t[Math.floor(0.9 * (t.length - 1))], runs: t.length };
}

/** Heap held by one result: keep 20 alive and divide, after a warm-up (one alone is lost in noise). */
function retained_kB(make: () => unknown, count = 20): number {
	make();
	collect();
	const before = process.memoryUsage().heapUsed;
	const keep: unknown[] = [];
	for (let i = 0; i < count; i++) keep.push(make());
	collect();
	const after = process.memoryUsage().heapUsed;
	if (keep.length !== count) throw new Error('unreachable');
	return (after - before) / 1024 / count;
}

// ---------------------------------------------------------------------------------------------
// Inputs

const base = parseScenarioFile(JSON.parse(JSON.stringify(exampleScenarioFile())));
const sweepLike: SimulationInput = { ...base, options: { ...base.options, keepSeries: false } };
const withSeries: SimulationInput = { ...base, options: { ...base.options, keepSeries: true } };
const baseline: SimulationInput = { ...sweepLike, strategy: null };
const oneGroupPack = { ...demoPack, cellGroups: [{ name: 'all cells', share: 1, coolingFactor: 1 }] };
const noDrive = { duration_s: 0, profile: { kind: 'constant' as const, power_W: 0 } };
const chargeOnly: SimulationInput = {
	cell: demoCells[0],
	pack: oneGroupPack,
	scenario: { ...exampleScenario, name: 'Charge only', ambient_K: celsiusToKelvin(25), drive: noDrive, dwell_s: 0 },
	strategy: null,
	options: { keepSeries: false }
};

interface Row {
	figure: string;
	measured: string;
	target: string;
	met: boolean | null;
}
const rows: Row[] = [];
const ms = (v: number) => `${v.toFixed(v < 1 ? 3 : 2)} ms`;

const loadAvg = () => os.loadavg().map((v) => v.toFixed(2)).join(', ');
const loadBefore = loadAvg();
console.log('Paretherm engine benchmark');
console.log(`node ${process.version}, one thread, ${os.availableParallelism?.() ?? os.cpus().length} cores, load average ${loadBefore} (1, 5, 15 min)\n`);

// ---------------------------------------------------------------------------------------------
// 1. Speed

console.log('Speed (series off, as in a sweep):');
const speed: [string, SimulationInput, number][] = [
	['30-min drive + charge to 80 %, strategy 15 min / 30 °C', sweepLike, TARGET.driveAndCharge_ms],
	['30-min drive + charge to 80 %, baseline', baseline, TARGET.driveAndCharge_ms],
	['charge only, one cell group, 25 °C, 20 → 80 %', chargeOnly, TARGET.chargeOnly_ms]
];
for (const [name, inp, target] of speed) {
	const r = timeRuns(inp);
	console.log(`  ${name.padEnd(56)} median ${ms(r.median_ms).padStart(10)}   p90 ${ms(r.p90_ms).padStart(10)}   (${r.runs} runs)`);
	rows.push({ figure: `${name} (median)`, measured: ms(r.median_ms), target: `≤ ${target} ms`, met: r.median_ms <= target });
}
{
	const r = timeRuns(withSeries, 20, 500);
	console.log(`  ${'the strategy with its time series kept (10 s)'.padEnd(56)} median ${ms(r.median_ms).padStart(10)}   p90 ${ms(r.p90_ms).padStart(10)}`);
}

// ---------------------------------------------------------------------------------------------
// 2. Accuracy against a converged reference

/**
 * Step options at refinement level k (0 = the engine's defaults). The engine's step controls are
 * its charging control period (default 1 s) and its drive/dwell step (default 5 s); each level
 * halves both, down to the smallest accepted control period.
 */
function refined(level: number): SimulationOptions {
	if (level === 0) return { keepSeries: false };
	return { keepSeries: false, controlPeriod_s: 1 / 2 ** level, driveStep_s: 5 / 2 ** level };
}
const MAX_LEVEL = 3; // 0.125 s control period; the engine accepts ≥ 0.1 s

const relPct = (a: number, ref: number) => (100 * Math.abs(a - ref)) / Math.max(Math.abs(ref), 1);
const figuresOf = (inp: SimulationInput) => {
	const s = simulate(inp).summary;
	return { time_s: s.timeToTarget_s ?? NaN, energy_Wh: s.thermalEnergyTotal_Wh, minAnode_V: s.minAnodePotential_V };
};

console.log(`\nAccuracy: default steps against a reference refined until time to target and thermal energy move < ${TARGET.converged_pct} %:`);
const accuracyCases: [string, SimulationInput][] = [
	['cold −10 °C, new, drive, strategy 15 min / 30 °C', sweepLike],
	['cold −10 °C, aged 80 %, drive, baseline', { ...baseline, scenario: { ...baseline.scenario, stateOfHealth: 0.8 } }],
	[
		'hot 35 °C, new, drive, strategy 10 min / 20 °C',
		{ ...sweepLike, scenario: { ...sweepLike.scenario, ambient_K: celsiusToKelvin(35) }, strategy: { leadTime_s: 600, coolantSetpoint_K: celsiusToKelvin(20) } }
	],
	['0 °C, aged 80 %, charge only, baseline', { ...chargeOnly, pack: demoPack, scenario: { ...chargeOnly.scenario, ambient_K: celsiusToKelvin(0), stateOfHealth: 0.8 } }]
];
let worstTime = 0;
let worstEnergy = 0;
let worstAnode_mV = -Infinity;
let accuracyOk = true;
try {
	for (const [name, inp] of accuracyCases) {
		const margin_V = inp.cell.limits.anodePotentialMargin_V ?? 0.01;
		const fast = figuresOf(inp);
		let ref = fast;
		let level = 0;
		let converged = false;
		while (level < MAX_LEVEL) {
			level++;
			const next = figuresOf({ ...inp, options: refined(level) });
			const moved = Math.max(relPct(next.time_s, ref.time_s), relPct(next.energy_Wh, ref.energy_Wh));
			ref = next;
			if (level > 1 && moved < TARGET.converged_pct) {
				converged = true;
				break;
			}
		}
		const dt = relPct(fast.time_s, ref.time_s);
		const de = relPct(fast.energy_Wh, ref.energy_Wh);
		const overshoot_mV = (margin_V - fast.minAnode_V) * 1000;
		worstTime = Math.max(worstTime, dt);
		worstEnergy = Math.max(worstEnergy, de);
		worstAnode_mV = Math.max(worstAnode_mV, overshoot_mV);
		console.log(
			`  ${name.padEnd(50)} time ${(fast.time_s / 60).toFixed(2)} min (${dt.toFixed(3)} %)   energy ${fast.energy_Wh.toFixed(1)} Wh (${de.toFixed(3)} %)   ` +
				`anode ${(fast.minAnode_V * 1000).toFixed(1)} mV vs margin ${(margin_V * 1000).toFixed(0)} mV   reference: control period ${refined(level).controlPeriod_s} s${converged ? '' : ' (finest accepted, not converged)'}`
		);
	}
} catch (e) {
	accuracyOk = false;
	console.log(`  not measured: the engine refused the refined step options (${(e as Error).message.slice(0, 160)})`);
}
const na = (v: number, unit: string, digits = 3) => (accuracyOk ? `${v.toFixed(digits)} ${unit}` : 'not measured');
rows.push({ figure: 'time to target vs converged reference (worst case)', measured: na(worstTime, '%'), target: `≤ ${TARGET.relError_pct} %`, met: accuracyOk ? worstTime <= TARGET.relError_pct : null });
rows.push({ figure: 'thermal energy vs converged reference (worst case)', measured: na(worstEnergy, '%'), target: `≤ ${TARGET.relError_pct} %`, met: accuracyOk ? worstEnergy <= TARGET.relError_pct : null });
rows.push({
	figure: 'anode potential below the plating margin (worst case)',
	measured: accuracyOk ? `${Math.max(0, worstAnode_mV).toFixed(2)} mV` : 'not measured',
	target: `≤ ${TARGET.anodeOvershoot_mV} mV`,
	met: accuracyOk ? worstAnode_mV <= TARGET.anodeOvershoot_mV : null
});

// ---------------------------------------------------------------------------------------------
// 3. Memory

console.log('\nMemory:');
const heldSeries = retained_kB(() => simulate(withSeries));
const heldSummary = retained_kB(() => simulate(sweepLike));
console.log(`  retained by one result with series      ${heldSeries.toFixed(0).padStart(6)} kB`);
console.log(`  retained by one result, summary only    ${heldSummary.toFixed(0).padStart(6)} kB`);
let allocated_kB = 0;
{
	collect();
	let allocated = 0;
	let last = process.memoryUsage().heapUsed;
	// Heap growth between runs (no GC in between for small runs) approximates allocation per run.
	for (let i = 0; i < 20; i++) {
		simulate(sweepLike);
		const h = process.memoryUsage().heapUsed;
		if (h > last) allocated += h - last;
		last = h;
	}
	allocated_kB = allocated / 20 / 1024;
	console.log(`  heap allocated per simulation (approx.) ${allocated_kB.toFixed(0).padStart(6)} kB`);
	console.log(`  resident set size                       ${(process.memoryUsage().rss / 1048576).toFixed(0).padStart(6)} MB`);
}
rows.push({ figure: 'heap allocated per drive + charge simulation', measured: `${allocated_kB.toFixed(0)} kB`, target: 'no target (was ≈ 3 MB)', met: null });

// ---------------------------------------------------------------------------------------------
// 4. One-thread throughput on the reference grid

const grid = referenceSweepInputs();
console.log(`\nReference grid: ${grid.length} simulations (10 lead times × 8 set-points × 3 ambients × 2 states of health), one thread:`);
for (let i = 0; i < 20; i++) simulate(grid[i * 7]);
const t0 = performance.now();
let reached = 0;
for (const inp of grid) if (simulate(inp).summary.reachedTarget) reached++;
const elapsed = (performance.now() - t0) / 1000;
console.log(`  ${elapsed.toFixed(2)} s → ${(grid.length / elapsed).toFixed(0)} simulations/s (${((elapsed / grid.length) * 1000).toFixed(2)} ms each); ${reached}/${grid.length} reached the target`);
rows.push({ figure: '480-point reference grid, one thread, no queue', measured: `${elapsed.toFixed(2)} s`, target: 'no target (see the 2-thread figures below)', met: null });

// ---------------------------------------------------------------------------------------------

console.log(`\nEngine figures against their targets (load average ${loadBefore} before, ${loadAvg()} after):`);
const w = Math.max(...rows.map((r) => r.figure.length));
for (const r of rows)
	console.log(`  ${r.figure.padEnd(w)}  ${r.measured.padStart(12)}   ${r.met === null ? `(${r.target})` : `target ${r.target.padEnd(9)} ${r.met ? 'met' : 'NOT met'}`}`);
