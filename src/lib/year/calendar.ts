/**
 * Calendar of an hourly climate year: 365 days (8 760 hours) or, in a leap year, 366 days
 * (8 784 hours). Months follow the Gregorian calendar; February has 29 days in a leap year.
 * Hours of the year count from 0 (1 January, 00:00–01:00). Pure.
 */
export const HOURS_PER_YEAR = 8760;
export const HOURS_PER_LEAP_YEAR = 8784;

export const MONTH_NAMES = ['Jan', 'Feb', 'Mar', 'Apr', 'May', 'Jun', 'Jul', 'Aug', 'Sep', 'Oct', 'Nov', 'Dec'] as const;

export function monthLengths(leapYear: boolean): number[] {
	return [31, leapYear ? 29 : 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31];
}

/** Day of year (1-based) of the first day of each month. */
export function monthStartDays(leapYear: boolean): number[] {
	const out: number[] = [];
	let d = 1;
	for (const len of monthLengths(leapYear)) {
		out.push(d);
		d += len;
	}
	return out;
}

/** Month index 0…11 of a 1-based day of the year. */
export function monthOfDay(dayOfYear: number, leapYear: boolean): number {
	const starts = monthStartDays(leapYear);
	for (let m = 11; m >= 0; m--) if (dayOfYear >= starts[m]) return m;
	return 0;
}

export function isLeapYear(year: number): boolean {
	return (year % 4 === 0 && year % 100 !== 0) || year % 400 === 0;
}

/** "day 34, 05:00" for messages. */
export function describeHour(hourOfYear: number): string {
	const day = Math.floor(hourOfYear / 24) + 1;
	const h = hourOfYear % 24;
	return `day ${day}, ${String(h).padStart(2, '0')}:00`;
}
