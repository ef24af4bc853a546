/**
 * The one CSV writer behind every export (calibration table, chart downloads, upload and check
 * exports): papaparse's `unparse`, RFC 4180 quoting, and formula escaping so a spreadsheet never
 * executes a cell (OWASP "CSV Injection": a text cell starting with = + - @, tab or carriage
 * return is prefixed with an apostrophe, and quoted).
 *
 * Numbers stay numbers (a negative value is not text and is not escaped); non-finite numbers,
 * null and undefined become empty cells. Pure, runs in the browser and on the server.
 */
import Papa from 'papaparse';

export type CsvCell = string | number | null | undefined;

/**
 * Text cells that spreadsheets read as a formula. papaparse's own `escapeFormulae: true` pattern
 * ends in `.*$` without the `s` flag, so a cell such as "=1+1\nmore" would slip through; this one
 * looks at the first character only.
 */
export const FORMULA_START = /^[=+\-@\t\r]/;

export interface CsvOptions {
	/** Line break between records and after the last one (default CRLF, RFC 4180 §2). */
	newline?: '\r\n' | '\n';
}

function cell(v: CsvCell): string | number | null {
	if (v === null || v === undefined) return null;
	if (typeof v === 'number') return Number.isFinite(v) ? (Object.is(v, -0) ? 0 : v) : null;
	return String(v);
}

/** A header record, then one record per row; every record ends with the line break. */
export function writeCsv(header: readonly string[], rows: readonly (readonly CsvCell[])[], opts: CsvOptions = {}): string {
	const newline = opts.newline ?? '\r\n';
	const records: (string | number | null)[][] = [[...header], ...rows.map((r) => r.map(cell))];
	return Papa.unparse(records, { newline, escapeFormulae: FORMULA_START, quotes: false }) + newline;
}
