/**
 * Engine benchmark (not a test): `npm run bench`.
 *
 * 1. Median wall time of one 30-minute-drive + charge-to-80 % simulation (the
 *    example scenario with a 15-min pre-conditioning strategy, and its
 *    baseline), series off as in a sweep and on as in a single run.
 *    Target (issue 3): under 20 ms per simulation on this machine.
 * 2. Memory: heap retained by one result (with and without the series) and
 *    the heap allocated per simulation.
 * 3. Throughput on one thread: simulations per second over the 480-point
 *    reference grid (src/lib/engine/reference-sweep.ts).
 */
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { exampleScenarioFile, parseScenarioFile, referenceSweepInputs, simulate, type SimulationInput } from '../src/lib/engine/index';

const TARGET_MS = 20;

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

function timeRuns(inp: SimulationInput, runs: number): { median_ms: number; p90_ms: number } {
	for (let i = 0; i < 10; i++) simulate(inp); // warm-up (JIT)
	const t: number[] = [];
	for (let i = 0; i < runs; i++) {
		const t0 = performance.now();
		simulate(inp);
		t.push(performance.now() - t0);
	}
	t.sort((a, b) => a - b);
	return { median_ms: median(t), p90_ms: t[Math.floor(0.9 * (t.length - 1))] };
}

/** Heap held by one result: keep 20 of them alive and divide, after a warm-up, so one-time
 * caches and collector noise do not dominate (a single result measured alone came out negative). */
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

const base = parseScenarioFile(JSON.parse(JSON.stringify(exampleScenarioFile())));
const sweepLike: SimulationInput = { ...base, options: { ...base.options, keepSeries: false } };
const withSeries: SimulationInput = { ...base, options: { ...base.options, keepSeries: true } };
const baseline: SimulationInput = { ...sweepLike, strategy: null };

console.log('Paretherm engine benchmark');
console.log(`node ${process.version}, one thread\n`);
console.log('One 30-min drive + dwell + charge to 80 % (example scenario, −10 °C, demo NMC pouch, demo van pack):');
const rows: [string, SimulationInput][] = [
	['strategy (15 min lead, 30 °C), series off', sweepLike],
	['baseline (no pre-conditioning), series off', baseline],
	['strategy, series on (10 s)', withSeries]
];
let headline = 0;
for (const [name, inp] of rows) {
	const r = timeRuns(inp, 60);
	if (headline === 0) headline = r.median_ms;
	console.log(`  ${name.padEnd(46)} median ${r.median_ms.toFixed(2).padStart(6)} ms   p90 ${r.p90_ms.toFixed(2).padStart(6)} ms`);
}
console.log(`  target < ${TARGET_MS} ms per simulation: ${headline < TARGET_MS ? 'met' : 'NOT met'} (median ${headline.toFixed(2)} ms)\n`);

console.log('Memory:');
console.log(`  retained by one result with series   ${retained_kB(() => simulate(withSeries)).toFixed(0).padStart(6)} kB`);
console.log(`  retained by one result, summary only ${retained_kB(() => simulate(sweepLike)).toFixed(0).padStart(6)} kB`);
{
	collect();
	const h0 = process.memoryUsage().heapUsed;
	let allocated = 0;
	let last = h0;
	// Heap growth between runs (no GC in between for small runs) approximates allocation per run.
	for (let i = 0; i < 20; i++) {
		simulate(sweepLike);
		const h = process.memoryUsage().heapUsed;
		if (h > last) allocated += h - last;
		last = h;
	}
	console.log(`  heap allocated per simulation (approx.) ${(allocated / 20 / 1024).toFixed(0).padStart(4)} kB`);
	console.log(`  resident set size                     ${(process.memoryUsage().rss / 1048576).toFixed(0).padStart(5)} MB\n`);
}

const grid = referenceSweepInputs();
console.log(`Reference grid: ${grid.length} simulations (10 lead times × 8 set-points × 3 ambients × 2 states of health):`);
for (let i = 0; i < 20; i++) simulate(grid[i * 7]);
const t0 = performance.now();
let reached = 0;
for (const inp of grid) if (simulate(inp).summary.reachedTarget) reached++;
const elapsed = (performance.now() - t0) / 1000;
console.log(`  ${elapsed.toFixed(2)} s on one thread → ${(grid.length / elapsed).toFixed(0)} simulations/s (${((elapsed / grid.length) * 1000).toFixed(2)} ms each); ${reached}/${grid.length} reached the target`);
