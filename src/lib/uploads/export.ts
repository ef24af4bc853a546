/**
 * CSV export of stored upload columns and check series, through the one CSV writer (src/lib/csv.ts).
 *
 * Numbers are written with JavaScript's shortest round-trip representation
 * (`String(x)`, ECMA-262 Number::toString), so reading the file back gives
 * the identical doubles; the headers are the canonical SI names the parser
 * reads without a unit choice. Re-uploading an export therefore yields the
 * same columns bit for bit (tested).
 */
import { CANONICAL_COLUMNS, type UploadKind } from './parse-upload';
import { writeCsv } from '../csv';

/** CSV text of named columns in the given order (columns absent from `columns` are skipped). */
export function columnsToCsv(order: readonly string[], columns: Record<string, readonly number[] | null | undefined>): string {
	const names = order.filter((n) => Array.isArray(columns[n]));
	const cols = names.map((n) => columns[n] as readonly number[]);
	const rows = cols.length ? cols[0].length : 0;
	const records: number[][] = [];
	for (let r = 0; r < rows; r++) records.push(cols.map((c) => c[r]));
	return writeCsv(names, records, { newline: '\n' });
}

export function uploadToCsv(kind: UploadKind, columns: Record<string, readonly number[]>): string {
	return columnsToCsv(CANONICAL_COLUMNS[kind], columns);
}
