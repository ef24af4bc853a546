/**
 * Year of use in lookup mode: climate files, charging patterns, the event sampler, the
 * interpolation in the sweep's scenario grid and the three policies' yearly totals.
 *
 * Expected values are worked by hand from the definitions (common practice, no source):
 * Hamilton (largest-remainder) apportionment, multilinear interpolation on a rectilinear grid
 * (Press et al., Numerical Recipes, 3rd ed., §3.6 "Interpolation on a grid in multidimensions",
 * the bilinear formula extended to three axes — section cited from memory), the binomial standard deviation √(N·p·(1 − p))
 * of a multinomial count, and the Gregorian calendar (8 760 / 8 784 hours).
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { climateCsv_C, inventedClimate_C, parseClimate, summariseClimate } from '../../src/lib/year/climate';
import { UploadError } from '../../src/lib/uploads/csv-reader';
import { patternSchema, validatePattern, PatternError, type ChargingPattern, type ChargingPatternInput } from '../../src/lib/year/pattern';
import { apportion, eventsPerYear, sampleEvents } from '../../src/lib/year/sampler';
import { interpolate, locate, type Grid } from '../../src/lib/year/interpolate';
import { evaluateYear, LookupError, policyFigures, type SweepNode } from '../../src/lib/year/evaluate';
import { yearCsv } from '../../src/lib/year/export';

const enc = (s: string) => new TextEncoder().encode(s);
const K = (c: number) => c + 273.15;

function refusal(text: string): UploadError {
	try {
		parseClimate(enc(text));
	} catch (e) {
		expect(e).toBeInstanceOf(UploadError);
		return e as UploadError;
	}
	throw new Error('expected the climate file to be refused');
}

function dayHourCsv(values_C: number[]): string {
	return climateCsv_C(values_C);
}

function timestampCsv(year: number, hours: number, value: (i: number) => string = () => '1.5'): string {
	const lines = ['timestamp,ambient_C'];
	const t0 = Date.UTC(year, 0, 1);
	for (let i = 0; i < hours; i++) {
		const d = new Date(t0 + i * 3_600_000).toISOString();
		lines.push(`${d.slice(0, 10)} ${d.slice(11, 16)},${value(i)}`);
	}
	return lines.join('\n') + '\n';
}

function pattern(over: Partial<ChargingPatternInput> = {}): ChargingPattern {
	return patternSchema.parse({
		eventsPerWeek: 7,
		monthWeights: new Array(12).fill(1),
		hourWeights: new Array(24).fill(1),
		arrivalSocs: [{ soc: 0.2, weight: 1 }],
		targetSoc: 0.8,
		scenarioSlug: 'depot-run',
		...over
	});
}

describe('year of use', () => {
	describe('climate files', () => {
		it('should accept a day-of-year file of 8 760 hours and read °C into kelvin', () => {
			const c = parseClimate(enc(dayHourCsv(new Array(8760).fill(-2.5))));
			expect(c.ambient_K).toHaveLength(8760);
			expect(c.leapYear).toBe(false);
			expect(c.ambient_K[0]).toBeCloseTo(270.65, 12);
		});

		it('should accept a timestamped leap year of 8 784 rows', () => {
			const c = parseClimate(enc(timestampCsv(2024, 8784)));
			expect(c.ambient_K).toHaveLength(8784);
			expect(c.leapYear).toBe(true);
			expect(c.year).toBe(2024);
		});

		it('should accept a day-of-year leap year (day 366) of 8 784 rows', () => {
			const c = parseClimate(enc(dayHourCsv(new Array(8784).fill(3))));
			expect(c.leapYear).toBe(true);
			expect(summariseClimate(c.ambient_K).months[1].mean_C).toBe(3);
		});

		it('should read an ambient column in kelvin', () => {
			const c = parseClimate(enc(timestampCsv(2025, 8760, () => '280.15').replace('ambient_C', 'ambient_K')));
			expect(c.ambient_K[100]).toBe(280.15);
		});

		describe('refusals', () => {
			it('should refuse 8 000 rows and say a year has 8 760 (8 784 in a leap year)', () => {
				const e = refusal(dayHourCsv(new Array(8000).fill(1)));
				expect(e.message).toMatch(/8,000 hourly rows; a year has 8,760 \(8,784 in a leap year\)/);
				expect(e.message).toMatch(/ends at day 334, 07:00, 760 hours short/);
			});

			it('should name the row with text in a number', () => {
				const lines = dayHourCsv(new Array(8760).fill(1)).split('\n');
				lines[15] = '1,14,cold'; // file line 16
				const e = refusal(lines.join('\n'));
				expect(e.message).toMatch(/row 16: ambient “cold” is not a number/);
			});

			it('should name missing hours with the expected and found hour', () => {
				const lines = dayHourCsv(new Array(8760).fill(1)).split('\n');
				lines.splice(30, 2); // drop day 2 05:00 and 06:00 (file lines 31, 32)
				const e = refusal(lines.join('\n'));
				expect(e.message).toMatch(/row 31: 2 hours missing before it \(expected day 2, 05:00, found day 2, 07:00\)/);
			});

			it('should name an ambient outside −60…60 °C by its row', () => {
				const values = new Array(8760).fill(1);
				values[99] = -61;
				values[200] = 60.5;
				const e = refusal(dayHourCsv(values));
				expect(e.issues).toEqual([
					expect.stringMatching(/^row 101: ambient -61 °C \(-61 °C\) is outside -60…60 °C/),
					expect.stringMatching(/^row 202: ambient 60.5 °C \(60.5 °C\) is outside -60…60 °C/)
				]);
			});

			it('should accept the range limits themselves', () => {
				const values = new Array(8760).fill(1);
				values[0] = -60;
				values[1] = 60;
				expect(parseClimate(enc(dayHourCsv(values))).ambient_K[1]).toBeCloseTo(333.15, 9);
			});

			it('should name an empty ambient cell, a repeated hour and a year not starting on 1 January', () => {
				const lines = dayHourCsv(new Array(8760).fill(1)).split('\n');
				lines[3] = '1,2,';
				expect(refusal(lines.join('\n')).message).toMatch(/row 4: the ambient value is missing/);
				const rep = dayHourCsv(new Array(8760).fill(1)).split('\n');
				rep[6] = '1,4,1'; // line 7 should be 1,5
				expect(refusal(rep.join('\n')).message).toMatch(/row 7: day 1, 04:00 repeats or goes back in time/);
				const late = timestampCsv(2025, 8760).split('\n');
				late.splice(1, 1);
				expect(refusal(late.join('\n')).message).toMatch(/row 2: the year must start on 1 January at 00:00/);
			});

			it('should refuse 8 784 timestamped rows of a year that is not a leap year', () => {
				expect(refusal(timestampCsv(2025, 8784)).message).toMatch(/8,784 rows, but 2025 is not a leap year: the year has 8,760 hours/);
			});

			it('should refuse a file without a header or without an ambient column', () => {
				expect(refusal('1,0,3\n1,1,3\n').message).toMatch(/first row holds values/);
				expect(refusal('day_of_year,hour,wind_m_s\n1,0,3\n').message).toMatch(/No ambient column/);
			});
		});
	});

	describe('invented climates', () => {
		it('should follow the stated formula: coldest on the given day and hour, mean as given', () => {
			const v = inventedClimate_C({ mean_C: 5, seasonalAmplitude_K: 12, dailyAmplitude_K: 4, coldestDay: 20, coldestHour: 5 });
			expect(v).toHaveLength(8760);
			// Day 20, 05:00: mean − seasonal − daily = 5 − 12 − 4 = −11 °C.
			expect(v[19 * 24 + 5]).toBe(-11);
			const mean = v.reduce((a, b) => a + b, 0) / v.length;
			expect(mean).toBeCloseTo(5, 1);
			expect(parseClimate(enc(climateCsv_C(v, 'invented'))).ambient_K).toHaveLength(8760);
		});
	});

	describe('charging patterns', () => {
		it('should refuse negative and absurd weekly events, naming the field', () => {
			for (const bad of [-1, 101]) {
				try {
					validatePattern({ ...pattern(), eventsPerWeek: bad });
					throw new Error('expected a refusal');
				} catch (e) {
					expect(e).toBeInstanceOf(PatternError);
					expect((e as PatternError).field).toBe('eventsPerWeek');
				}
			}
		});

		it('should refuse all-zero weights, the wrong number of hours and a target below arrival', () => {
			expect(() => validatePattern({ ...pattern(), monthWeights: new Array(12).fill(0) })).toThrow(/monthWeights: at least one month weight/);
			expect(() => validatePattern({ ...pattern(), hourWeights: [1, 2] })).toThrow(/hourWeights: give 24 hour weights/);
			expect(() => validatePattern({ ...pattern(), targetSoc: 0.15 })).toThrow(/targetSoc: the target state of charge 15 %/);
		});
	});

	describe('event sampler', () => {
		it('should apportion by largest remainders (Hamilton)', () => {
			expect(apportion(10, [1, 1, 3])).toEqual([2, 2, 6]);
			// Quotas 3.333…: one extra to the first (ties go to the lower index).
			expect(apportion(10, [1, 1, 1])).toEqual([4, 3, 3]);
			expect(apportion(7, [0, 5, 2])).toEqual([0, 5, 2]);
		});

		it('should give exact counts per month and hour for an even pattern', () => {
			// 120 events a year: 120 × 7 / 365 events a week.
			const hourWeights = new Array(24).fill(0);
			hourWeights[7] = 1;
			hourWeights[12] = 1;
			hourWeights[18] = 3;
			const months = [2, 2, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1]; // 14 parts: 120 × 2/14 = 17.14…
			const p = pattern({ eventsPerWeek: (120 * 7) / 365, hourWeights, monthWeights: new Array(12).fill(1) });
			expect(eventsPerYear(p, false)).toBe(120);
			const ev = sampleEvents(p, false);
			expect(ev).toHaveLength(120);
			for (let m = 0; m < 12; m++) {
				const inMonth = ev.filter((e) => e.month === m);
				expect(inMonth).toHaveLength(10);
				expect([7, 12, 18].map((h) => inMonth.filter((e) => e.hour === h).length)).toEqual([2, 2, 6]);
			}
			// Uneven months: 2/14 of 120 = 17.14 → 17 each for Jan and Feb, 8.57 → 9 or 8 for the rest; sum 120.
			const ev2 = sampleEvents(pattern({ eventsPerWeek: (120 * 7) / 365, monthWeights: months }), false);
			const counts = new Array(12).fill(0);
			ev2.forEach((e) => counts[e.month]++);
			expect(counts.reduce((a, b) => a + b, 0)).toBe(120);
			expect(counts.slice(0, 2)).toEqual([17, 17]);
			for (const c of counts.slice(2)) expect([8, 9]).toContain(c);
			// Events lie in their month and in hour order.
			for (let i = 1; i < ev2.length; i++) expect(ev2[i].hourOfYear).toBeGreaterThanOrEqual(ev2[i - 1].hourOfYear);
			expect(ev2.every((e) => e.hourOfYear < 8760)).toBe(true);
		});

		it('should hand out arrival states of charge in exact shares for an even pattern', () => {
			const p = pattern({ eventsPerWeek: (100 * 7) / 365, arrivalSocs: [{ soc: 0.1, weight: 1 }, { soc: 0.3, weight: 3 }] });
			const ev = sampleEvents(p, false);
			expect(ev.filter((e) => e.arrivalSoc === 0.1)).toHaveLength(25);
			expect(ev.filter((e) => e.arrivalSoc === 0.3)).toHaveLength(75);
		});

		it('should use 366 days in a leap year', () => {
			const p = pattern({ eventsPerWeek: 7 });
			expect(eventsPerYear(p, true)).toBe(366);
			const ev = sampleEvents(p, true);
			expect(ev.filter((e) => e.month === 1)).toHaveLength(31); // 366/12 = 30.5 → largest remainders
			expect(Math.max(...ev.map((e) => e.hourOfYear))).toBeLessThan(8784);
		});

		it('should keep random counts within 4 standard deviations of N·p (seeded, reproducible)', () => {
			const monthWeights = [3, 3, 2, 1, 1, 1, 1, 1, 1, 2, 3, 3];
			const hourWeights = Array.from({ length: 24 }, (_, h) => (h >= 6 && h <= 20 ? 2 : 1));
			const p = pattern({ sampling: 'random', seed: 42, eventsPerWeek: 60, monthWeights, hourWeights });
			const ev = sampleEvents(p, false);
			const n = eventsPerYear(p, false);
			expect(ev).toHaveLength(n);
			const within = (count: number, prob: number) => {
				const sd = Math.sqrt(n * prob * (1 - prob));
				expect(Math.abs(count - n * prob)).toBeLessThanOrEqual(4 * sd);
			};
			const mSum = monthWeights.reduce((a, b) => a + b, 0);
			for (let m = 0; m < 12; m++) within(ev.filter((e) => e.month === m).length, monthWeights[m] / mSum);
			const hSum = hourWeights.reduce((a, b) => a + b, 0);
			for (let h = 0; h < 24; h++) within(ev.filter((e) => e.hour === h).length, hourWeights[h] / hSum);
			expect(sampleEvents(p, false)).toEqual(ev);
			expect(sampleEvents({ ...p, seed: 43 }, false)).not.toEqual(ev);
		});

		it('should draw nothing from a zero weight', () => {
			const monthWeights = new Array(12).fill(1);
			monthWeights[6] = 0;
			const ev = sampleEvents(pattern({ sampling: 'random', seed: 7, eventsPerWeek: 30, monthWeights }), false);
			expect(ev.filter((e) => e.month === 6)).toHaveLength(0);
		});
	});

	describe('interpolation in the scenario grid', () => {
		const grid: Grid = {
			axes: [
				[K(-20), K(0), K(25)],
				[0.1, 0.3],
				[0.8, 1]
			],
			values: [
				// ambient −20: soc 0.1 (soh 0.8, 1), soc 0.3 (0.8, 1)
				900, 800, 700, 600,
				// ambient 0
				400, 350, 300, 250,
				// ambient 25
				0.1, 0, 0.3, 0
			]
		};

		it('should reproduce every node exactly', () => {
			let idx = 0;
			for (const a of grid.axes[0]) for (const s of grid.axes[1]) for (const h of grid.axes[2]) {
				expect(interpolate(grid, [a, s, h])).toEqual({ value: grid.values[idx++], clamped: [0, 0, 0] });
			}
		});

		it('should reproduce a trilinear function everywhere in the grid', () => {
			const f = (x: number, y: number, z: number) => 2 + 0.5 * x - 3 * y + 7 * z + 0.25 * x * y * z - x * z;
			const g: Grid = { axes: [[250, 270, 300], [0.1, 0.5], [0.7, 1]], values: [] };
			for (const x of g.axes[0]) for (const y of g.axes[1]) for (const z of g.axes[2]) (g.values as number[]).push(f(x, y, z));
			fc.assert(
				fc.property(fc.double({ min: 250, max: 300, noNaN: true }), fc.double({ min: 0.1, max: 0.5, noNaN: true }), fc.double({ min: 0.7, max: 1, noNaN: true }), (x, y, z) => {
					expect(interpolate(g, [x, y, z]).value).toBeCloseTo(f(x, y, z), 8);
				})
			);
		});

		it('should be monotone between nodes where the table is monotone', () => {
			// The table falls with ambient for every soc and soh: time saved shrinks as it warms.
			fc.assert(
				fc.property(
					fc.double({ min: K(-20), max: K(25), noNaN: true }),
					fc.double({ min: K(-20), max: K(25), noNaN: true }),
					fc.double({ min: 0.1, max: 0.3, noNaN: true }),
					fc.double({ min: 0.8, max: 1, noNaN: true }),
					(a1, a2, s, h) => {
						const [lo, hi] = a1 <= a2 ? [a1, a2] : [a2, a1];
						expect(interpolate(grid, [lo, s, h]).value).toBeGreaterThanOrEqual(interpolate(grid, [hi, s, h]).value - 1e-9);
					}
				)
			);
		});

		it('should clamp outside the range, never extrapolate, and say which way', () => {
			expect(interpolate(grid, [K(-35), 0.1, 0.8])).toEqual({ value: 900, clamped: [-1, 0, 0] });
			expect(interpolate(grid, [K(40), 0.5, 1.2])).toEqual({ value: 0, clamped: [1, 1, 1] });
			// Halfway between −20 °C and 0 °C at a node of the other axes: (900 + 400)/2.
			expect(interpolate(grid, [K(-10), 0.1, 0.8]).value).toBeCloseTo(650, 9);
			expect(locate([5], 7)).toEqual({ i: 0, t: 0, clamped: 1 });
		});

		it('should give NaN when a node with weight is missing, but a node beside a missing one exactly', () => {
			const g: Grid = { axes: [[0, 1]], values: [5, NaN] };
			expect(interpolate(g, [0]).value).toBe(5);
			expect(interpolate(g, [0.5]).value).toBeNaN();
		});
	});

	describe('policies over a year', () => {
		// A stored sweep, written out by hand: 2 ambients × 2 arrival SOCs × 1 SOH, two strategies.
		// Figures are invented stored results, not computed by the code under test.
		const strat = (lead_min: number, set_C: number, t: number | null, e: number | null) => ({ leadTime_s: lead_min * 60, setpoint_K: K(set_C), heaterPowerCap_W: null, timeSaved_s: t, energy_Wh: e });
		const node = (amb_C: number, soc: number, base: number, s1: [number, number], s2: [number, number], table: 1 | 2 | null): SweepNode => ({
			ambient_K: K(amb_C),
			arrivalSoc: soc,
			stateOfHealth: 1,
			baselineTime_s: base,
			strategies: [strat(10, 25, ...s1), strat(20, 30, ...s2)],
			table:
				table === null
					? { leadTime_s: null, setpoint_K: null, timeSaved_s: 0, energy_Wh: 0 }
					: { leadTime_s: table === 1 ? 600 : 1200, setpoint_K: K(table === 1 ? 25 : 30), timeSaved_s: (table === 1 ? s1 : s2)[0], energy_Wh: (table === 1 ? s1 : s2)[1] }
		});
		const nodes: SweepNode[] = [
			node(-10, 0.1, 3100.5, [412.3, 1830.7], [655.1, 3270.2], 2),
			node(-10, 0.3, 2600.25, [301.7, 1502.9], [480.4, 2990.6], 1),
			node(15, 0.1, 1900, [12.5, 410.3], [-3, 900], 1),
			node(15, 0.3, 1700, [-1, 350], [-8, 780], null)
		];
		const fixed = { leadTime_s: 600, setpoint_K: K(25), belowAmbient_K: null };
		const prices = { energyPrice_per_kWh: 0.3, hourValue: 40 };

		it('should total exactly event count × the sweep point figures for a constant climate at a sweep ambient', () => {
			const p = pattern({ eventsPerWeek: 5, arrivalSocs: [{ soc: 0.1, weight: 1 }] });
			const events = sampleEvents(p, false);
			const n = Math.round((5 * 365) / 7);
			expect(events).toHaveLength(n);
			const r = evaluateYear({ events, climate_K: new Array(8760).fill(K(-10)), stateOfHealth: 1, nodes, fixed, prices });
			const [none, fix, table] = r.policies;
			expect(none.timeSaved_s).toBe(0);
			expect(none.energy_Wh).toBe(0);
			expect(fix.timeSaved_s).toBe(n * 412.3);
			expect(fix.energy_Wh).toBe(n * 1830.7);
			expect(table.timeSaved_s).toBe(n * 655.1);
			expect(table.energy_Wh).toBe(n * 3270.2);
			expect(r.baselineChargeTime_s).toBe(n * 3100.5);
			for (const pol of r.policies) {
				expect(pol.evaluated).toBe(n);
				expect(pol.clamped.ambient).toEqual({ below: 0, above: 0 });
			}
			// Money: 655.1 s × n = hours; 3.2702 kWh × n; worth it when 40/h × h ≥ 0.3/kWh × kWh.
			const f = policyFigures(table, prices, 10);
			expect(f.hoursSaved_h).toBeCloseTo((n * 655.1 * 10) / 3600, 9);
			expect(f.energyCost).toBeCloseTo(n * 3.2702 * 10 * 0.3, 9);
			expect(f.kWhPerHourSaved).toBeCloseTo(3270.2 / 1000 / (655.1 / 3600), 9);
			expect(f.worthShare).toBe(1); // 0.182 h × 40 = 7.28 ≥ 3.27 kWh × 0.3 = 0.98
			expect(table.monthly.reduce((a, m) => a + m.events, 0)).toBe(n);
		});

		it('should not pre-condition with the fixed rule at or above its ambient threshold', () => {
			const events = sampleEvents(pattern({ eventsPerWeek: 3 }), false);
			const r = evaluateYear({ events, climate_K: new Array(8760).fill(K(15)), stateOfHealth: 1, nodes, fixed: { ...fixed, belowAmbient_K: K(5) }, prices });
			expect(r.policies[1].timeSaved_s).toBe(0);
			expect(r.policies[1].preconditioned).toBe(0);
			// The table at 15 °C, soc 0.2: halfway between (12.5 s, 410.3 Wh) and keep-default (0, 0).
			expect(r.policies[2].timeSaved_s).toBeCloseTo(events.length * 6.25, 6);
		});

		it('should count events clamped at the grid edges per axis and never extrapolate', () => {
			const events = sampleEvents(pattern({ eventsPerWeek: 2, arrivalSocs: [{ soc: 0.5, weight: 1 }] }), false);
			const r = evaluateYear({ events, climate_K: new Array(8760).fill(K(-30)), stateOfHealth: 0.9, nodes, fixed, prices });
			const t = r.policies[2];
			expect(t.clamped.ambient.below).toBe(events.length);
			expect(t.clamped.arrivalSoc.above).toBe(events.length);
			expect(t.clamped.stateOfHealth.below).toBe(events.length);
			// Clamped to the (−10 °C, 0.3, 1) node: the table's 301.7 s there.
			expect(t.timeSaved_s).toBe(events.length * 301.7);
			expect(r.policies[0].clamped.ambient.below).toBe(0); // no lookup for "none"
		});

		it('should count events without stored figures and leave them out of the totals', () => {
			const gap = nodes.map((n) => (n.ambient_K === K(15) && n.arrivalSoc === 0.1 ? { ...n, baselineTime_s: null, strategies: n.strategies.map((s) => ({ ...s, timeSaved_s: null })) } : n));
			const events = sampleEvents(pattern({ eventsPerWeek: 2 }), false);
			const r = evaluateYear({ events, climate_K: new Array(8760).fill(K(15)), stateOfHealth: 1, nodes: gap, fixed, prices });
			expect(r.policies[1].withoutFigures).toBe(events.length);
			expect(r.policies[1].timeSaved_s).toBe(0);
			expect(r.baselineMissing).toBe(events.length);
		});

		it('should refuse a fixed rule that is not on the sweep grid, naming the grid', () => {
			const events = sampleEvents(pattern({ eventsPerWeek: 1 }), false);
			expect(() => evaluateYear({ events, climate_K: new Array(8760).fill(K(0)), stateOfHealth: 1, nodes, fixed: { ...fixed, leadTime_s: 900 }, prices })).toThrow(LookupError);
			expect(() => evaluateYear({ events, climate_K: new Array(8760).fill(K(0)), stateOfHealth: 1, nodes, fixed: { ...fixed, leadTime_s: 900 }, prices })).toThrow(/lead times 10, 20 min and set-points 25, 30 °C/);
		});

		it('should write a CSV with a year row and twelve month rows per policy and scope', () => {
			const events = sampleEvents(pattern({ eventsPerWeek: 1 }), false);
			const r = evaluateYear({ events, climate_K: new Array(8760).fill(K(-10)), stateOfHealth: 1, nodes, fixed, prices });
			const csv = yearCsv(r, { ...prices, currency: 'EUR' }, 25);
			const lines = csv.trim().split('\r\n');
			expect(lines).toHaveLength(1 + 3 * 2 * 13);
			expect(lines[0]).toMatch(/^policy,period,scope,vehicles,charge_events/);
			const fleetYear = lines.find((l) => l.startsWith('Calibration table,year,fleet'))!;
			expect(fleetYear.split(',')[4]).toBe(String(events.length * 25));
		});
	});
});
