/**
 * Year of use, lookup mode: time to sample a year of 1 000 charges and evaluate the three
 * policies against a sweep-sized grid (5 ambients × 4 arrival SOCs × 2 states of health × 20
 * strategies, invented smooth figures). Target: < 1 s.
 */
import { inventedClimate_C } from '../src/lib/year/climate';
import { patternSchema } from '../src/lib/year/pattern';
import { sampleEvents } from '../src/lib/year/sampler';
import { evaluateYear, type SweepNode } from '../src/lib/year/evaluate';

const TARGET_MS = 1000;
const K = (c: number) => c + 273.15;
const nodes: SweepNode[] = [];
for (const a of [-20, -10, 0, 10, 25])
	for (const soc of [0.1, 0.2, 0.3, 0.5])
		for (const soh of [0.8, 1]) {
			const strategies = [];
			for (const lead of [0, 600, 1200, 1800, 2700])
				for (const set of [15, 20, 25, 30]) {
					const cold = Math.max(0, 25 - a);
					strategies.push({ leadTime_s: lead, setpoint_K: K(set), heaterPowerCap_W: null, timeSaved_s: cold * (lead / 60) * (set / 30) * soh, energy_Wh: 40 * cold * (lead / 600 + 1) * (set / 25) + 100 * soc });
				}
			const best = strategies[strategies.length - 1];
			nodes.push({ ambient_K: K(a), arrivalSoc: soc, stateOfHealth: soh, baselineTime_s: 1800 + 40 * Math.max(0, 25 - a), table: { leadTime_s: best.leadTime_s, setpoint_K: best.setpoint_K, timeSaved_s: best.timeSaved_s!, energy_Wh: best.energy_Wh! }, strategies });
		}
const climate_K = inventedClimate_C({ mean_C: 2, seasonalAmplitude_K: 17, dailyAmplitude_K: 5, coldestDay: 20, coldestHour: 5 }).map(K);
const pattern = patternSchema.parse({
	eventsPerWeek: (1000 * 7) / 365,
	monthWeights: new Array(12).fill(1),
	hourWeights: new Array(24).fill(1),
	arrivalSocs: [{ soc: 0.15, weight: 1 }, { soc: 0.25, weight: 2 }, { soc: 0.4, weight: 1 }],
	targetSoc: 0.8,
	scenarioSlug: 'bench',
	sampling: 'random',
	seed: 3
});
const times: number[] = [];
let events = 0;
for (let i = 0; i < 21; i++) {
	const t0 = performance.now();
	const ev = sampleEvents(pattern, false);
	evaluateYear({ events: ev, climate_K, stateOfHealth: 0.9, nodes, fixed: { leadTime_s: 1200, setpoint_K: K(20), belowAmbient_K: K(5) }, prices: { energyPrice_per_kWh: 0.3, hourValue: 40 } });
	times.push(performance.now() - t0);
	events = ev.length;
}
times.sort((a, b) => a - b);
const median = times[10];
console.log('\nYear of use, lookup mode');
console.log(`  ${events} charges, 3 policies, ${nodes.length} scenarios × 20 strategies: median ${median.toFixed(1)} ms, slowest ${times[20].toFixed(1)} ms`);
console.log(`  target < ${TARGET_MS} ms: ${median < TARGET_MS ? 'met' : 'NOT met'}`);
