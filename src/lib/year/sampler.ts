/**
 * Charge events of one vehicle over a climate year, from a charging pattern.
 *
 * Events per year N = round(eventsPerWeek × days / 7) (days = 365 or 366).
 *
 * 'even' (deterministic): N is shared over the months by the largest-remainder method
 * (Hamilton apportionment) on the month weights, each month's count over the hours of the day
 * the same way, and the events of a (month, hour) cell spread evenly over the month's days
 * (k-th of c events on day ⌊(k + ½)·D/c⌋ of a D-day month). Arrival states of charge are shared
 * over N by largest remainders too and handed out in time order by smooth weighted round-robin,
 * so each value's count is exact and its events are spread through the year. Counts per month
 * and per (month, hour) are therefore exactly the apportioned ones.
 *
 * 'random' (seeded, seedrandom's ARC4 generator): N is the same; each event's month, hour and
 * arrival state of charge are drawn independently from the weights and its day uniformly within
 * the month. Counts are multinomial: a cell with probability p holds N·p ± √(N·p·(1 − p)) events
 * (one standard deviation). The same seed gives the same events.
 */
import seedrandom from 'seedrandom';
import type { ChargingPattern } from './pattern';
import { monthLengths, monthStartDays } from './calendar';

export interface ChargeEvent {
	/** Hour of the climate year, 0-based. */
	hourOfYear: number;
	/** Day of year, 1-based. */
	day: number;
	month: number;
	hour: number;
	arrivalSoc: number;
}

/** Hamilton / largest-remainder apportionment of `total` over `weights` (ties: lower index first). */
export function apportion(total: number, weights: readonly number[]): number[] {
	const sum = weights.reduce((a, b) => a + b, 0);
	if (total === 0 || sum <= 0) return weights.map(() => 0);
	const quotas = weights.map((w) => (total * w) / sum);
	const counts = quotas.map((q) => Math.floor(q + 1e-9));
	let left = total - counts.reduce((a, b) => a + b, 0);
	const order = quotas
		.map((q, i) => ({ i, r: q - counts[i] }))
		.filter((x) => weights[x.i] > 0)
		.sort((a, b) => b.r - a.r || a.i - b.i);
	for (let k = 0; left > 0 && order.length; k = (k + 1) % order.length, left--) counts[order[k].i]++;
	return counts;
}

export function eventsPerYear(p: Pick<ChargingPattern, 'eventsPerWeek'>, leapYear: boolean): number {
	return Math.round((p.eventsPerWeek * (leapYear ? 366 : 365)) / 7);
}

/** Smooth weighted round-robin over integer counts: returns indices, each exactly counts[i] times. */
function roundRobin(counts: readonly number[]): number[] {
	const total = counts.reduce((a, b) => a + b, 0);
	const current = counts.map(() => 0);
	const out: number[] = [];
	for (let n = 0; n < total; n++) {
		let best = -1;
		for (let i = 0; i < counts.length; i++) {
			if (counts[i] === 0) continue;
			current[i] += counts[i];
			if (best < 0 || current[i] > current[best]) best = i;
		}
		current[best] -= total;
		out.push(best);
	}
	return out;
}

function pick(weights: readonly number[], sum: number, u: number): number {
	let acc = 0;
	const target = u * sum;
	for (let i = 0; i < weights.length; i++) {
		acc += weights[i];
		if (target < acc && weights[i] > 0) return i;
	}
	for (let i = weights.length - 1; i >= 0; i--) if (weights[i] > 0) return i;
	return 0;
}

export function sampleEvents(p: ChargingPattern, leapYear: boolean): ChargeEvent[] {
	const n = eventsPerYear(p, leapYear);
	const lengths = monthLengths(leapYear);
	const starts = monthStartDays(leapYear);
	const socs = p.arrivalSocs.map((a) => a.soc);
	const socWeights = p.arrivalSocs.map((a) => a.weight);
	const events: ChargeEvent[] = [];
	const make = (month: number, dayInMonth: number, hour: number, soc: number): ChargeEvent => {
		const day = starts[month] + dayInMonth;
		return { hourOfYear: (day - 1) * 24 + hour, day, month, hour, arrivalSoc: soc };
	};
	if (p.sampling === 'even') {
		const perMonth = apportion(n, p.monthWeights);
		perMonth.forEach((mc, month) => {
			apportion(mc, p.hourWeights).forEach((c, hour) => {
				for (let k = 0; k < c; k++) events.push(make(month, Math.floor(((k + 0.5) * lengths[month]) / c), hour, NaN));
			});
		});
		events.sort((a, b) => a.hourOfYear - b.hourOfYear);
		const order = roundRobin(apportion(n, socWeights));
		events.forEach((e, i) => (e.arrivalSoc = socs[order[i]]));
		return events;
	}
	const rng = seedrandom(`paretherm-year:${p.seed}`);
	const mSum = p.monthWeights.reduce((a, b) => a + b, 0);
	const hSum = p.hourWeights.reduce((a, b) => a + b, 0);
	const sSum = socWeights.reduce((a, b) => a + b, 0);
	for (let i = 0; i < n; i++) {
		const month = pick(p.monthWeights, mSum, rng());
		const day = Math.min(lengths[month] - 1, Math.floor(rng() * lengths[month]));
		const hour = pick(p.hourWeights, hSum, rng());
		events.push(make(month, day, hour, socs[pick(socWeights, sSum, rng())]));
	}
	events.sort((a, b) => a.hourOfYear - b.hourOfYear);
	return events;
}
