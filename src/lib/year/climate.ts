/**
 * Hourly ambient-temperature year ("climate"): parsing and validation of an uploaded CSV file,
 * and the facts kept with it. Pure: bytes in, ambient temperatures in kelvin or an UploadError out.
 *
 * Accepted layouts (a header line is required; lines starting with '#' above it are comments):
 *   timestamp,ambient_C           2025-01-01 00:00,-3.5   (also 2025-01-01T00:00[:00][Z])
 *   day_of_year,hour,ambient_C    1,0,-3.5                (day 1…366, hour 0…23)
 * The ambient column is named `ambient`, `temperature` or `temp`, with its unit after an
 * underscore or in brackets (°C, K or °F); without a unit it is read as °C (and a note says so).
 *
 * Rules: one row per hour, starting on 1 January at 00:00, in order, no gaps and no repeats;
 * 8 760 rows, or 8 784 in a leap year (a timestamped file's year decides which; a day-of-year
 * file with day 366 is a leap year); every ambient a number between −60 °C and 60 °C. Every
 * refusal names the file's line number. Nothing is partially accepted.
 */
import { decodeText, MAX_ISSUES, readCsvRows, UploadError } from '../uploads/csv-reader';
import { UNITS } from '../uploads/columns';
import { describeHour, HOURS_PER_LEAP_YEAR, HOURS_PER_YEAR, isLeapYear, monthLengths, monthOfDay } from './calendar';

export const AMBIENT_MIN_C = -60;
export const AMBIENT_MAX_C = 60;
const ZERO_C_K = 273.15;

export interface ParsedClimate {
	/** Ambient per hour of the year, K; length 8 760 or 8 784. */
	ambient_K: number[];
	leapYear: boolean;
	/** Calendar year when the file is timestamped, otherwise null. */
	year: number | null;
	layout: 'timestamp' | 'day-hour';
	unit: string;
	notes: string[];
}

export interface ClimateSummary {
	hours: number;
	leapYear: boolean;
	min_C: number;
	mean_C: number;
	max_C: number;
	/** Per month: mean, min and max ambient, °C. */
	months: { mean_C: number; min_C: number; max_C: number }[];
}

const norm = (h: string) =>
	h
		.trim()
		.toLowerCase()
		.replace(/°/g, 'deg')
		.replace(/[()[\]]/g, ' ')
		.trim()
		.replace(/\s+/g, '_');

function ambientColumn(header: string): { unit: string | null } | null {
	const n = norm(header);
	const m = /^(ambient|temperature|temp|ambient_temperature|air_temperature)(?:_(.*))?$/.exec(n);
	if (!m) return null;
	return { unit: m[2] ? m[2].replace(/^deg_?/, 'deg').replace(/_/g, '') : null };
}

const TIMESTAMP = /^(\d{4})-(\d{2})-(\d{2})[T ](\d{2}):(\d{2})(?::(\d{2})(?:\.\d+)?)?(Z|[+-]00:?00)?$/;

function parseTimestamp(cell: string): number | null {
	const m = TIMESTAMP.exec(cell.trim());
	if (!m) return null;
	const [y, mo, d, h, mi, s] = [m[1], m[2], m[3], m[4], m[5], m[6] ?? '0'].map(Number);
	const t = Date.UTC(y, mo - 1, d, h, mi, s);
	const back = new Date(t);
	if (back.getUTCFullYear() !== y || back.getUTCMonth() !== mo - 1 || back.getUTCDate() !== d || h > 23) return null;
	return t;
}

const isNumber = (s: string) => /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(s.trim());
const show = (s: string) => (s.length > 24 ? `${s.slice(0, 24)}…` : s);
const fmtC = (c: number) => `${Number(c.toFixed(2))} °C`;

/** Parse and validate a climate CSV; throws UploadError naming every problem (up to 20). */
export function parseClimate(bytes: Uint8Array): ParsedClimate {
	const { text, notes } = decodeText(bytes);
	const { rows, lines } = readCsvRows(text);
	const header = rows[0];
	if (header.every((c) => isNumber(c) || TIMESTAMP.test(c.trim())))
		throw new UploadError(
			'The first row holds values, not column names. Add a header line: “timestamp,ambient_C” or “day_of_year,hour,ambient_C”.'
		);
	const names = header.map(norm);
	const tsCol = names.findIndex((n) => ['timestamp', 'time', 'date_time', 'datetime', 'date'].includes(n));
	const dayCol = names.findIndex((n) => ['day_of_year', 'day', 'doy'].includes(n));
	const hourCol = names.findIndex((n) => ['hour', 'hour_of_day'].includes(n));
	const ambCol = header.findIndex((h) => ambientColumn(h) !== null);
	if (ambCol < 0)
		throw new UploadError(
			`No ambient column: the header “${show(header.join(','))}” has none named ambient_C, temperature_C or temp_C. Name the column with its unit.`,
			'file'
		);
	const layout: ParsedClimate['layout'] | null = tsCol >= 0 ? 'timestamp' : dayCol >= 0 && hourCol >= 0 ? 'day-hour' : null;
	if (!layout)
		throw new UploadError(
			'No time columns: give either a “timestamp” column (2025-01-01 00:00) or “day_of_year” and “hour” columns (1…366 and 0…23).'
		);
	const unitKey = ambientColumn(header[ambCol])!.unit;
	const unitDef = unitKey === null ? UNITS.ambient.c : UNITS.ambient[unitKey === 'degc' ? 'c' : unitKey === 'degf' ? 'f' : unitKey];
	if (!unitDef)
		throw new UploadError(`The ambient column “${show(header[ambCol])}” has the unit “${unitKey}”; use °C (ambient_C), K (ambient_K) or °F (ambient_F).`);
	if (unitKey === null) notes.push(`the column “${header[ambCol].trim()}” names no unit; it was read as °C`);

	const issues: string[] = [];
	const add = (msg: string) => {
		if (issues.length < MAX_ISSUES) issues.push(msg);
	};
	const ambient_K: number[] = [];
	let year: number | null = null;
	let start = 0;
	let leapFromFile = false;
	let expected = 0;
	for (let r = 1; r < rows.length; r++) {
		const row = rows[r];
		const line = lines[r];
		// Hour of the year this row stands for.
		let hour: number | null = null;
		if (layout === 'timestamp') {
			const cell = (row[tsCol] ?? '').trim();
			const t = parseTimestamp(cell);
			if (t === null) {
				add(`row ${line}: timestamp “${show(cell)}” is not a date and hour; write it as 2025-01-31 13:00`);
			} else {
				if (year === null) {
					year = new Date(t).getUTCFullYear();
					start = Date.UTC(year, 0, 1, 0, 0, 0);
					leapFromFile = isLeapYear(year);
					if (t !== start) add(`row ${line}: the year must start on 1 January at 00:00; this file starts at ${show(cell)}`);
				}
				const offset = (t - start) / 3_600_000;
				if (!Number.isInteger(offset)) add(`row ${line}: ${show(cell)} is not on the hour; give one value per whole hour`);
				else hour = offset;
			}
		} else {
			const dCell = (row[dayCol] ?? '').trim();
			const hCell = (row[hourCol] ?? '').trim();
			const d = Number(dCell);
			const h = Number(hCell);
			if (!/^\d+$/.test(dCell) || d < 1 || d > 366) add(`row ${line}: day of year “${show(dCell)}” is not a whole number from 1 to 366`);
			else if (!/^\d+$/.test(hCell) || h > 23) add(`row ${line}: hour “${show(hCell)}” is not a whole number from 0 to 23`);
			else {
				hour = (d - 1) * 24 + h;
				if (d === 366) leapFromFile = true;
			}
		}
		// The ambient value.
		const aCell = (row[ambCol] ?? '').trim();
		let ambient: number = NaN;
		if (aCell === '') add(`row ${line}: the ambient value is missing; fill in every hour`);
		else if (!isNumber(aCell)) add(`row ${line}: ambient “${show(aCell)}” is not a number; use “.” as the decimal mark and no unit in the cell`);
		else {
			ambient = unitDef.toSi(Number(aCell));
			const c = ambient - ZERO_C_K;
			if (c < AMBIENT_MIN_C - 1e-9 || c > AMBIENT_MAX_C + 1e-9)
				add(
					`row ${line}: ambient ${show(aCell)} ${unitDef.label} (${fmtC(c)}) is outside ${AMBIENT_MIN_C}…${AMBIENT_MAX_C} °C; ${unitKey === null || unitDef.label === '°C' ? (c > 200 ? 'is the column in kelvin? Name it ambient_K' : 'check the logger') : 'check the unit in the header'}`
				);
		}
		// Order: exactly one row per hour, no gaps, no repeats.
		if (hour !== null) {
			if (hour > expected) {
				const missing = hour - expected;
				add(`row ${line}: ${missing} hour${missing === 1 ? '' : 's'} missing before it (expected ${describeHour(expected)}, found ${describeHour(hour)}); fill the gap`);
			} else if (hour < expected) {
				add(`row ${line}: ${describeHour(hour)} repeats or goes back in time (expected ${describeHour(expected)}); keep one row per hour in order`);
			}
			expected = Math.max(expected, hour + 1);
		} else expected++;
		ambient_K.push(ambient);
	}
	if (issues.length) throw new UploadError(issues);
	const n = ambient_K.length;
	const leapYear = leapFromFile;
	const need = leapYear ? HOURS_PER_LEAP_YEAR : HOURS_PER_YEAR;
	if (n !== HOURS_PER_YEAR && n !== HOURS_PER_LEAP_YEAR) {
		throw new UploadError(
			`The file has ${n.toLocaleString('en-GB')} hourly rows; a year has 8,760 (8,784 in a leap year). It ends at ${describeHour(n - 1)}${n < need ? `, ${(need - n).toLocaleString('en-GB')} hours short of a full year` : ''}. Give one row for every hour of one year.`
		);
	}
	if (n !== need) {
		throw new UploadError(
			leapYear
				? `The file has ${n.toLocaleString('en-GB')} rows, but ${year !== null ? `${year} is a leap year` : 'it includes day 366'}: a leap year has 8,784 hours. Add the missing hours.`
				: `The file has ${n.toLocaleString('en-GB')} rows, but ${year !== null ? `${year} is not a leap year` : 'it has no day 366'}: the year has 8,760 hours.`
		);
	}
	return { ambient_K, leapYear, year, layout, unit: unitDef.label, notes };
}

export function summariseClimate(ambient_K: readonly number[]): ClimateSummary {
	const leapYear = ambient_K.length === HOURS_PER_LEAP_YEAR;
	const months = monthLengths(leapYear).map(() => ({ sum: 0, n: 0, min: Infinity, max: -Infinity }));
	let sum = 0;
	let min = Infinity;
	let max = -Infinity;
	for (let i = 0; i < ambient_K.length; i++) {
		const c = ambient_K[i] - ZERO_C_K;
		const m = months[monthOfDay(Math.floor(i / 24) + 1, leapYear)];
		m.sum += c;
		m.n++;
		m.min = Math.min(m.min, c);
		m.max = Math.max(m.max, c);
		sum += c;
		min = Math.min(min, c);
		max = Math.max(max, c);
	}
	const r = (x: number) => Number(x.toFixed(2));
	return {
		hours: ambient_K.length,
		leapYear,
		min_C: r(min),
		mean_C: r(sum / ambient_K.length),
		max_C: r(max),
		months: months.map((m) => ({ mean_C: r(m.sum / m.n), min_C: r(m.min), max_C: r(m.max) }))
	};
}

/**
 * An invented climate from a stated formula, for demos and tests: a seasonal sinusoid plus a
 * daily one, no weather noise.
 *   T(d, h) = mean − seasonal·cos(2π(d − coldestDay)/days) − daily·cos(2π(h − coldestHour)/24)
 * d = day of year (1-based), h = hour 0…23. The year is coldest on `coldestDay` and at
 * `coldestHour` of each day. Values are rounded to 0.1 °C as a logger would write them.
 */
export interface InventedClimate {
	mean_C: number;
	seasonalAmplitude_K: number;
	dailyAmplitude_K: number;
	coldestDay: number;
	coldestHour: number;
	leapYear?: boolean;
}

export function inventedClimate_C(p: InventedClimate): number[] {
	const days = p.leapYear ? 366 : 365;
	const out: number[] = [];
	for (let d = 1; d <= days; d++) {
		for (let h = 0; h < 24; h++) {
			const t =
				p.mean_C -
				p.seasonalAmplitude_K * Math.cos((2 * Math.PI * (d - p.coldestDay)) / days) -
				p.dailyAmplitude_K * Math.cos((2 * Math.PI * (h - p.coldestHour)) / 24);
			out.push(Math.round(t * 10) / 10);
		}
	}
	return out;
}

/** A day-of-year CSV of an hourly climate in °C (what the upload accepts). */
export function climateCsv_C(values_C: readonly number[], comment?: string): string {
	const lines: string[] = [];
	if (comment) for (const c of comment.split('\n')) lines.push(`# ${c}`);
	lines.push('day_of_year,hour,ambient_C');
	values_C.forEach((v, i) => lines.push(`${Math.floor(i / 24) + 1},${i % 24},${v}`));
	return lines.join('\n') + '\n';
}
