/**
 * CSV of a year-of-use evaluation through the product's one CSV writer: one record per policy
 * and period (the year, then each month), per vehicle and for the fleet. Units in the column
 * names; money in the pattern's currency.
 */
import { writeCsv, type CsvCell } from '../csv';
import { MONTH_NAMES } from './calendar';
import { POLICY_LABEL, type Prices, type YearResult } from './evaluate';

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

const r6 = (x: number | null) => (x === null || !Number.isFinite(x) ? null : Number(x.toFixed(6)));

export function yearCsv(result: YearResult, prices: Prices & { currency: string }, fleetSize: number): string {
	const rows: CsvCell[][] = [];
	for (const p of result.policies) {
		for (const [scope, n] of [
			['per vehicle', 1],
			['fleet', fleetSize]
		] as const) {
			const periods = [{ name: 'year', events: p.events, t: p.timeSaved_s, e: p.energy_Wh, without: p.withoutFigures as number | null, worth: p.events ? p.worthIt / p.events : null }];
			p.monthly.forEach((m, i) => periods.push({ name: MONTH_NAMES[i], events: m.events, t: m.timeSaved_s, e: m.energy_Wh, without: null, worth: null }));
			for (const per of periods) {
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
			}
		}
	}
	return writeCsv(YEAR_CSV_HEADER, rows);
}
