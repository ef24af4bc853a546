/**
 * Robust-study throughput (chained into `npm run bench`; alone: `npx tsx scripts/bench-robust.ts`).
 *
 * Target: a robust study of 480 strategies × 64 samples (the reference sweep's strategies, plus the
 * paired baseline: 481 × 64 = 30 784 simulations) in ≤ 60 s on 2 cores.
 *
 * A full study is hours of CPU at today's simulation cost, too long for a routine bench, so this
 * script measures a spread subset on one thread — every 60th reference strategy (8) under the first
 * 4 samples of a seeded Latin hypercube over all seven uncertain inputs, with their baselines — and
 * projects the full study assuming 2 threads share it perfectly. The projection is printed as such.
 * Flags: --strategies=N (subset size, default 8), --samples=N (default 4).
 */
import os from 'node:os';
import { demoCells, demoPack, exampleScenario, expandGrid, REFERENCE_SWEEP_AXES, type Strategy } from '../src/lib/engine/index';
import { robustRunTimeEstimate_s, robustTaskCount, runPairedStudy, sampleValues, validateUncertaintySet } from '../src/lib/engine/robust/index';

const args = process.argv.slice(2);
const flag = (name: string, dflt: number) => Math.max(1, Number(args.find((a) => a.startsWith(`--${name}=`))?.split('=')[1] ?? dflt) || dflt);
const TARGET_S = 60;
const FULL_STRATEGIES = 480;
const FULL_SAMPLES = 64;
const THREADS = 2;

const all: Strategy[] = expandGrid({ leadTime_s: REFERENCE_SWEEP_AXES.leadTime_s, coolantSetpoint_K: REFERENCE_SWEEP_AXES.coolantSetpoint_K }).map((p) => ({
	leadTime_s: p.leadTime_s,
	coolantSetpoint_K: p.coolantSetpoint_K
}));
const nStrategies = Math.min(flag('strategies', 8), all.length);
const step = Math.floor(all.length / nStrategies);
const strategies = Array.from({ length: nStrategies }, (_, i) => all[i * step]);

const u = validateUncertaintySet({
	seed: 2026,
	samples: FULL_SAMPLES,
	inputs: {
		arrivalTimeError_s: { kind: 'normal', sd: 300, lower: -900, upper: 900 },
		ambientError_K: { kind: 'normal', sd: 2, lower: -6, upper: 6 },
		arrivalSocError: { kind: 'uniform', lower: -0.05, upper: 0.05 },
		initialPackTempOffset_K: { kind: 'triangular', lower: -2, mode: 0, upper: 3 },
		cellCapacitySpread: { kind: 'normal', sd: 0.02, lower: -0.06, upper: 0.06 },
		cellResistanceSpread: { kind: 'normal', sd: 0.05, lower: -0.15, upper: 0.15 },
		cellDiffusivitySpread: { kind: 'uniform', lower: -0.2, upper: 0.2 }
	}
});
const samples = sampleValues(u).slice(0, flag('samples', 4));
const base = { cell: demoCells[0], pack: demoPack, scenario: exampleScenario };

const t0 = performance.now();
const runs = runPairedStudy(base, strategies, u, samples);
const wall_s = (performance.now() - t0) / 1000;
const sims = samples.length * (strategies.length + 1);
const perSim_s = wall_s / sims;
const fullSims = robustTaskCount(1, FULL_STRATEGIES, FULL_SAMPLES);
const projected_s = robustRunTimeEstimate_s(fullSims, perSim_s, THREADS);
if (runs.baseline.length !== samples.length) throw new Error('robust bench: missing baseline runs');

console.log(`\nRobust study — ${os.cpus().length} CPU cores, load ${os.loadavg().map((v) => v.toFixed(2)).join(', ')}`);
console.log(`  measured: ${strategies.length} strategies × ${samples.length} samples + baselines = ${sims} simulations in ${wall_s.toFixed(1)} s on 1 thread (${(perSim_s * 1000).toFixed(0)} ms each)`);
console.log(
	`  ${FULL_STRATEGIES} strategies × ${FULL_SAMPLES} samples (${fullSims.toLocaleString('en-GB')} simulations), ${THREADS} threads, projected: ${projected_s.toFixed(0)} s   target ≤ ${TARGET_S} s: ${projected_s <= TARGET_S ? 'met' : 'NOT met'}`
);
