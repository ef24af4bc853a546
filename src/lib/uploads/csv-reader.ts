/**
 * From uploaded bytes to rows of text cells, refusing what is not a plain,
 * comma-separated text table: binary files (spreadsheets, archives, images),
 * UTF-16 text, control characters, other delimiters, files over the size or
 * row limit, empty files, and cells that a spreadsheet would run as a formula
 * (CSV injection: OWASP, "CSV Injection" — cells starting with =, +, −, @,
 * tab or carriage return; we accept + and − only in front of a number).
 *
 * Pure: bytes in, rows or an UploadError out. Parsing by papaparse with the
 * delimiter fixed to a comma (guessing would accept a semicolon file whose
 * decimal commas then read as column breaks).
 */
import Papa from 'papaparse';

export const MAX_UPLOAD_BYTES = 5 * 1024 * 1024;
export const MAX_UPLOAD_ROWS = 200_000;
/** Row problems reported in full before the rest are counted. */
export const MAX_ISSUES = 20;

export class UploadError extends Error {
	readonly issues: string[];
	readonly field: string;
	constructor(issues: string[] | string, field = 'file') {
		const list = Array.isArray(issues) ? issues : [issues];
		super(summarise(list));
		this.name = 'UploadError';
		this.issues = list;
		this.field = field;
	}
}

/** The first five problems, then a count of the rest. */
export function summarise(issues: string[], show = 5): string {
	if (issues.length <= show) return issues.join(' · ');
	return `${issues.slice(0, show).join(' · ')} · …and ${issues.length - show} more problem${issues.length - show === 1 ? '' : 's'}`;
}

export function formatBytes(bytes: number): string {
	if (bytes >= 1024 * 1024) return `${(bytes / (1024 * 1024)).toFixed(1)} MB`;
	if (bytes >= 1024) return `${(bytes / 1024).toFixed(1)} kB`;
	return `${bytes} bytes`;
}

const MAGIC: { bytes: number[]; what: string }[] = [
	{ bytes: [0x50, 0x4b, 0x03, 0x04], what: 'a ZIP archive or an Excel workbook (.xlsx)' },
	{ bytes: [0xd0, 0xcf, 0x11, 0xe0], what: 'an old Excel workbook (.xls)' },
	{ bytes: [0x25, 0x50, 0x44, 0x46], what: 'a PDF document' },
	{ bytes: [0x89, 0x50, 0x4e, 0x47], what: 'a PNG image' },
	{ bytes: [0xff, 0xd8, 0xff], what: 'a JPEG image' },
	{ bytes: [0x47, 0x49, 0x46, 0x38], what: 'a GIF image' },
	{ bytes: [0x1f, 0x8b], what: 'a gzip archive' },
	{ bytes: [0x89, 0x48, 0x44, 0x46], what: 'an HDF5 data file' }
];

function startsWith(bytes: Uint8Array, prefix: number[]): boolean {
	return bytes.length >= prefix.length && prefix.every((b, i) => bytes[i] === b);
}

/** Refuses a file over the size limit (called before reading an upload into memory, and by decodeText). */
export function checkUploadSize(size: number): void {
	if (size > MAX_UPLOAD_BYTES)
		throw new UploadError(
			`The file is ${formatBytes(size)}; the limit is ${formatBytes(MAX_UPLOAD_BYTES)}. Thin the log (one row per second is plenty for a charge) or split it into several files.`
		);
}

/** Decodes the upload as text or says why it is not a CSV file. */
export function decodeText(bytes: Uint8Array): { text: string; notes: string[] } {
	const notes: string[] = [];
	if (bytes.length === 0) throw new UploadError('The file is empty; choose the CSV file that holds the data.');
	checkUploadSize(bytes.length);
	for (const m of MAGIC) {
		if (startsWith(bytes, m.bytes))
			throw new UploadError(`This is ${m.what}, not a CSV file. Open it in its program and save or export it as CSV (comma-separated values, UTF-8).`);
	}
	if (startsWith(bytes, [0xff, 0xfe]) || startsWith(bytes, [0xfe, 0xff]))
		throw new UploadError('The file is UTF-16 text; save it again as “CSV UTF-8 (comma delimited)”.');
	const head = bytes.subarray(0, Math.min(bytes.length, 65_536));
	if (head.includes(0)) throw new UploadError('The file holds binary data (NUL bytes), not text; choose a CSV file (comma-separated values).');
	let text: string;
	try {
		text = new TextDecoder('utf-8', { fatal: true }).decode(bytes);
	} catch {
		// Spreadsheets on Windows often write "°C" in Windows-1252; accept that, say so.
		text = new TextDecoder('windows-1252').decode(bytes);
		notes.push('the file is not UTF-8; it was read as Windows-1252 text');
	}
	if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
	const control = /[\u0000-\u0008\u000b\u000c\u000e-\u001f\u007f]/.exec(text);
	if (control) {
		const line = text.slice(0, control.index).split('\n').length;
		throw new UploadError(`Row ${line} contains a control character (code ${control[0].charCodeAt(0)}); this is not a plain CSV file. Export the data again as CSV.`);
	}
	if (!text.trim()) throw new UploadError('The file holds only blank lines; choose the CSV file that holds the data.');
	return { text, notes };
}

/** A formula a spreadsheet would evaluate; "+5" and "-0.3" are numbers, "-A1" or "=cmd|…" are not. */
export function looksLikeFormula(cell: string): boolean {
	if (/^[\t\r]/.test(cell)) return true;
	const c = cell.trim();
	if (/^[=@]/.test(c)) return true;
	if (/^[+-]/.test(c) && !/^[+-]\s*(\d|\.\d)/.test(c)) return c.length > 1;
	return false;
}

export interface CsvRows {
	/** Cells of each non-empty, non-comment line. */
	rows: string[][];
	/** 1-based line number of each row in the file. */
	lines: number[];
	notes: string[];
}

const OTHER_DELIMITERS: [string, string][] = [
	[';', 'semicolons (;)'],
	['\t', 'tabs'],
	['|', 'vertical bars (|)']
];

function shorten(s: string, n = 32): string {
	return s.length > n ? `${s.slice(0, n)}…` : s;
}

/** Splits the text into rows (comma-separated), refusing formulas, other delimiters and too many rows. */
export function readCsvRows(text: string): CsvRows {
	const parsed = Papa.parse<string[]>(text, { delimiter: ',', header: false, skipEmptyLines: false, dynamicTyping: false });
	const quoteError = parsed.errors.find((e) => e.type === 'Quotes');
	if (quoteError)
		throw new UploadError(
			`Row ${(quoteError.row ?? 0) + 1}: a quoted value is not closed (${quoteError.message.toLowerCase()}); remove the stray quote mark or close it.`
		);
	const rows: string[][] = [];
	const lines: number[] = [];
	let inPreamble = true;
	parsed.data.forEach((row, i) => {
		if (row.length === 1 && row[0].trim() === '') return; // blank line
		// Comment or metadata lines above the header start with '#'.
		if (inPreamble && row[0].trimStart().startsWith('#')) return;
		inPreamble = false;
		rows.push(row);
		lines.push(i + 1);
	});
	if (rows.length === 0) throw new UploadError('The file holds no table, only comment lines; add a header and rows of numbers.');
	// Refuse a file whose first row is one cell holding another delimiter: it is not comma-separated.
	if (rows[0].length === 1) {
		for (const [d, words] of OTHER_DELIMITERS) {
			if (rows[0][0].includes(d))
				throw new UploadError(
					`The file separates values with ${words}, not commas. Save it again as CSV with “,” between values and “.” as the decimal mark.`
				);
		}
	}
	const dataRows = rows.length - 1;
	if (dataRows > MAX_UPLOAD_ROWS)
		throw new UploadError(
			`The file has ${dataRows.toLocaleString('en-GB')} rows; the limit is ${MAX_UPLOAD_ROWS.toLocaleString('en-GB')}. Resample it to a coarser interval (1 s is plenty for a charge) or split it.`
		);
	const issues: string[] = [];
	for (let r = 0; r < rows.length && issues.length < MAX_ISSUES; r++) {
		for (let c = 0; c < rows[r].length; c++) {
			if (looksLikeFormula(rows[r][c])) {
				issues.push(
					`row ${lines[r]}, column ${c + 1}${r > 0 && rows[0][c] ? ` (“${shorten(rows[0][c].trim())}”)` : ''}: “${shorten(rows[r][c].trim())}” starts like a spreadsheet formula (=, +, -, @); Paretherm refuses formulas because a spreadsheet may run them when the file is opened. Export values only`
				);
				break;
			}
		}
	}
	if (issues.length) throw new UploadError(issues);
	return { rows, lines, notes: [] };
}
