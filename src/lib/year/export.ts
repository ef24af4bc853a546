/**
 * CSV of a year-of-use evaluation (with an exact run: the simulated figures and the lookup's
 * error, lookup − exact, beside each lookup figure) through the product's one CSV writer: one record per policy
 * and period (the year, then each month), per vehicle and for the fleet. Units in the column
 * names; money in the pattern's currency.
 */
import { writeCsv, type CsvCell } from '../csv';
import { MONTH_NAMES } from './calendar';
import { POLICY_LABEL, type Prices, type YearResult } from './evaluate';
import type { ExactYear } from './exact';

export const YEAR_CSV_HEADER = [
	'policy',
	'period',
	'scope',
	'vehicles',
	'charge_events',
	'events_without_figures',
	'hours_saved_h',
	'energy_kWh',
	'energy_cost',
	'time_value',
	'kWh_per_hour_saved',
	'events_worth_it_share',
	'currency'
] as const;

/** Columns added when the evaluation has a finished exact run. */
export const YEAR_CSV_EXACT_COLUMNS = [
	'exact_hours_saved_h',
	'exact_energy_kWh',
	'lookup_error_hours_h',
	'lookup_error_hours_share',
	'lookup_error_energy_kWh',
	'lookup_error_energy_share'
] as const;

const r6 = (x: number | null) => (x === null || !Number.isFinite(x) ? null : Number(x.toFixed(6)));

export function yearCsv(result: YearResult, prices: Prices & { currency: string }, fleetSize: number, exact: ExactYear | null = null): string {
	const rows: CsvCell[][] = [];
	for (const p of result.policies) {
		const x = exact?.policies.find((q) => q.kind === p.kind) ?? null;
		for (const [scope, n] of [
			['per vehicle', 1],
			['fleet', fleetSize]
		] as const) {
			const periods = [{ name: 'year', events: p.events, t: p.timeSaved_s, e: p.energy_Wh, without: p.withoutFigures as number | null, worth: p.events ? p.worthIt / p.events : null }];
			p.monthly.forEach((m, i) => periods.push({ name: MONTH_NAMES[i], events: m.events, t: m.timeSaved_s, e: m.energy_Wh, without: null, worth: null }));
			const exactPeriods = x ? [{ t: x.timeSaved_s, e: x.energy_Wh }, ...x.monthly.map((m) => ({ t: m.timeSaved_s, e: m.energy_Wh }))] : [];
			for (const [k, per] of periods.entries()) {
				const h = (per.t / 3600) * n;
				const kWh = (per.e / 1000) * n;
				rows.push([
					POLICY_LABEL[p.kind],
					per.name,
					scope,
					n,
					per.events * n,
					per.without === null ? null : per.without * n,
					r6(h),
					r6(kWh),
					prices.energyPrice_per_kWh === null ? null : r6(kWh * prices.energyPrice_per_kWh),
					prices.hourValue === null ? null : r6(h * prices.hourValue),
					h > 0 ? r6(kWh / h) : null,
					r6(per.worth),
					prices.currency
				]);
				if (exact) {
					const xp = exactPeriods[k];
					const xh = xp ? (xp.t / 3600) * n : null;
					const xkWh = xp ? (xp.e / 1000) * n : null;
					const share = (l: number, e: number | null) => (e === null || e === 0 ? null : r6((l - e) / Math.abs(e)));
					rows[rows.length - 1].push(
						r6(xh),
						r6(xkWh),
						xh === null ? null : r6(h - xh),
						share(h, xh),
						xkWh === null ? null : r6(kWh - xkWh),
						share(kWh, xkWh)
					);
				}
			}
		}
	}
	return writeCsv(exact ? [...YEAR_CSV_HEADER, ...YEAR_CSV_EXACT_COLUMNS] : YEAR_CSV_HEADER, rows);
}
