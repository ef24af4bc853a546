/**
 * The one way Paretherm writes a moment, on pages and in mail: ISO 8601 calendar date, 24-hour
 * time and the zone, always UTC ("2026-01-05 06:30 UTC"), so people in different places read the
 * same thing and nothing depends on a browser's locale.
 */
export function dateTime(value: string | number | Date | null | undefined): string {
	if (value === null || value === undefined || value === '') return '–';
	const d = value instanceof Date ? value : new Date(typeof value === 'string' ? normalise(value) : value);
	if (Number.isNaN(d.getTime())) return String(value);
	return `${d.toISOString().slice(0, 10)} ${d.toISOString().slice(11, 16)} UTC`;
}

/** SQLite's "2026-01-05 06:30:12.345 +00:00" → an ISO string Date parses everywhere. */
function normalise(s: string): string {
	const m = /^(\d{4}-\d\d-\d\d)[ T](\d\d:\d\d(?::\d\d(?:\.\d+)?)?)\s*(Z|[+-]\d\d:?\d\d)?$/.exec(s.trim());
	if (!m) return s;
	const zone = !m[3] || m[3] === 'Z' ? 'Z' : m[3].replace(/^([+-]\d\d)(\d\d)$/, '$1:$2');
	return `${m[1]}T${m[2]}${zone}`;
}
