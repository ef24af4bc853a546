/**
 * Year of use, exact mode (pure part): which simulations a year needs, and how their results add
 * up to yearly totals and to the lookup's error.
 *
 * Expected values are worked by hand from the definitions in src/lib/year/exact.ts (time saved =
 * baseline time − strategy time; energy = strategy − baseline; totals = count × figure; error =
 * lookup − exact, relative to |exact|; nearest node with ties to the lower one). Common practice,
 * no source.
 */
import { describe, expect, it } from 'vitest';
import { exactYear, nearestIndex, planExact, type TaskFigures } from '../../src/lib/year/exact';
import type { SweepNode, YearResult } from '../../src/lib/year/evaluate';
import type { ChargeEvent } from '../../src/lib/year/sampler';

const K = (c: number) => c + 273.15;

function node(a_C: number, soc: number, table: SweepNode['table']): SweepNode {
	return {
		ambient_K: K(a_C),
		arrivalSoc: soc,
		stateOfHealth: 1,
		baselineTime_s: 2000,
		table,
		strategies: [
			{ leadTime_s: 600, setpoint_K: K(20), heaterPowerCap_W: null, timeSaved_s: 100, energy_Wh: 500 },
			{ leadTime_s: 1200, setpoint_K: K(25), heaterPowerCap_W: 3000, timeSaved_s: 200, energy_Wh: 900 }
		]
	};
}

// Two ambients (−10 and 10 °C) × one arrival SOC; the table pre-conditions at −10 °C only.
const nodes: SweepNode[] = [
	node(-10, 0.2, { leadTime_s: 1200, setpoint_K: K(25), heaterPowerCap_W: 3000, timeSaved_s: 200, energy_Wh: 900 }),
	node(10, 0.2, { leadTime_s: null, setpoint_K: null, timeSaved_s: 0, energy_Wh: 0 })
];

const ev = (hourOfYear: number, month: number, soc = 0.2): ChargeEvent => ({ hourOfYear, day: Math.floor(hourOfYear / 24) + 1, month, hour: hourOfYear % 24, arrivalSoc: soc });

describe('nearest node', () => {
	it('should take the nearer node, the lower one on a tie, and the edge outside the range', () => {
		const axis = [0, 10, 20];
		expect(nearestIndex(axis, 4)).toBe(0);
		expect(nearestIndex(axis, 6)).toBe(1);
		expect(nearestIndex(axis, 5)).toBe(0);
		expect(nearestIndex(axis, -30)).toBe(0);
		expect(nearestIndex(axis, 99)).toBe(2);
	});
});

describe('planning an exact year', () => {
	// Hours 0 and 1 at −10 °C, hour 2 at −2 °C (nearer −10), hour 3 at 8 °C (nearer 10).
	const climate_K = [K(-10), K(-10), K(-2), K(8)];
	const events = [ev(0, 0), ev(1, 0), ev(1, 1), ev(2, 1), ev(3, 2)];

	it('should simulate each distinct charge once: its baseline and each policy’s strategy', () => {
		const plan = planExact({ events, climate_K, stateOfHealth: 1, nodes, fixed: { leadTime_s: 600, setpoint_K: K(20), belowAmbient_K: K(0) } });
		// Distinct (ambient, SOC): −10, −2, 8 °C → three keys; hours 0 and 1 share one.
		expect(plan.keys.map((k) => Math.round((k.ambient_K - 273.15) * 10) / 10)).toEqual([-10, -2, 8]);
		expect(plan.keys[0].months.slice(0, 3)).toEqual([2, 1, 0]);
		// Strategies: the fixed rule first, then the table's (with the heater cap the sweep ran it with).
		expect(plan.strategies).toEqual([
			{ leadTime_s: 600, coolantSetpoint_K: K(20) },
			{ leadTime_s: 1200, coolantSetpoint_K: K(25), heaterPowerCap_W: 3000 }
		]);
		// −10 and −2 °C: below the 0 °C threshold → fixed; nearest node −10 °C → table strategy 1.
		// 8 °C: at or above the threshold → no fixed run; nearest node 10 °C keeps the default.
		expect(plan.keys.map((k) => [k.fixed, k.table])).toEqual([
			[0, 1],
			[0, 1],
			[null, null]
		]);
		expect(plan.tasks).toEqual([
			{ key: 0, strategy: null },
			{ key: 0, strategy: 0 },
			{ key: 0, strategy: 1 },
			{ key: 1, strategy: null },
			{ key: 1, strategy: 0 },
			{ key: 1, strategy: 1 },
			{ key: 2, strategy: null }
		]);
	});

	it('should add up count × figure per policy and report the lookup’s error against it', () => {
		const plan = planExact({ events, climate_K, stateOfHealth: 1, nodes, fixed: { leadTime_s: 600, setpoint_K: K(20), belowAmbient_K: K(0) } });
		const f = (time_s: number, energy_Wh: number, reached = true): TaskFigures => ({ reached, time_s, energy_Wh });
		const figures = [
			f(2000, 10), f(1900, 410), f(1700, 810), // −10 °C: fixed saves 100 s for 400 Wh, table 300 s for 800 Wh
			f(1500, 10), f(1450, 210), f(1400, 0, false), // −2 °C: fixed saves 50 s for 200 Wh; table run missed the target
			f(1000, 5) // 8 °C: baseline only
		];
		const lookup = {
			policies: [
				{ kind: 'none', timeSaved_s: 0, energy_Wh: 0 },
				{ kind: 'fixed', timeSaved_s: 250, energy_Wh: 1000 }, // exact: 3×100 + 1×50 = 350 s; 3×400 + 200 = 1400 Wh
				{ kind: 'table', timeSaved_s: 600, energy_Wh: 1600 } // exact: 3×300 = 900 s; 3×800 = 2400 Wh
			]
		} as unknown as YearResult;
		const x = exactYear(plan, figures, lookup);
		expect(x.events).toBe(5);
		expect(x.simulations).toBe(7);
		expect(x.baselineChargeTime_s).toBe(3 * 2000 + 1500 + 1000);
		const by = Object.fromEntries(x.policies.map((p) => [p.kind, p]));
		expect([by.none.timeSaved_s, by.none.energy_Wh, by.none.evaluated]).toEqual([0, 0, 5]);
		expect([by.fixed.timeSaved_s, by.fixed.energy_Wh, by.fixed.evaluated, by.fixed.preconditioned]).toEqual([350, 1400, 5, 4]);
		expect([by.table.timeSaved_s, by.table.energy_Wh, by.table.withoutFigures, by.table.preconditioned]).toEqual([900, 2400, 1, 3]);
		// Months: January holds two −10 °C charges, February one −10 °C and one −2 °C.
		expect(by.fixed.monthly.slice(0, 3).map((m) => m.timeSaved_s)).toEqual([200, 150, 0]);
		const err = Object.fromEntries(x.lookupError.map((e) => [e.kind, e]));
		expect(err.fixed.timeSaved_s).toEqual({ lookup: 250, exact: 350, abs: -100, rel: -100 / 350 });
		expect(err.table.energy_Wh).toEqual({ lookup: 1600, exact: 2400, abs: -800, rel: -800 / 2400 });
		expect(x.gridFineEnough).toBe(false);
		expect(x.verdict).toContain('The sweep grid is not fine enough for this year');
	});

	it('should call the grid fine enough when the lookup is within 5 % (or within 0.1 h and 0.1 kWh)', () => {
		const plan = planExact({ events: [ev(0, 0)], climate_K, stateOfHealth: 1, nodes, fixed: { leadTime_s: 600, setpoint_K: K(20), belowAmbient_K: null } });
		const figures: TaskFigures[] = [
			{ reached: true, time_s: 2000, energy_Wh: 0 },
			{ reached: true, time_s: 1000, energy_Wh: 5000 }, // fixed: 1000 s, 5000 Wh
			{ reached: true, time_s: 1990, energy_Wh: 50 } // table: 10 s, 50 Wh — tiny, judged by the absolute floor
		];
		const lookup = { policies: [{ kind: 'none', timeSaved_s: 0, energy_Wh: 0 }, { kind: 'fixed', timeSaved_s: 1040, energy_Wh: 4800 }, { kind: 'table', timeSaved_s: 300, energy_Wh: 140 }] } as unknown as YearResult;
		const x = exactYear(plan, figures, lookup);
		// fixed: +4 % and −4 %; table: +290 s (< 360 s) and +90 Wh (< 100 Wh).
		expect(x.lookupError.map((e) => e.withinTolerance)).toEqual([true, true]);
		expect(x.verdict).toContain('The sweep grid is fine enough for this year');
		// 0.1 h and 0.1 kWh are the floors: one more second or watt-hour past them is not fine.
		const worse = exactYear(plan, figures, { policies: [lookup.policies[0], lookup.policies[1], { kind: 'table', timeSaved_s: 371, energy_Wh: 140 }] } as unknown as YearResult);
		expect(worse.gridFineEnough).toBe(false);
	});
});
