/**
 * Building blocks for messages: escaping, engineers' units, and one HTML frame with inline styles
 * (mail clients ignore style sheets) around a body, always with a plain-text alternative.
 */
import { CAUTION } from './config';

export function esc(value: unknown): string {
	return String(value ?? '')
		.replace(/&/g, '&amp;')
		.replace(/</g, '&lt;')
		.replace(/>/g, '&gt;')
		.replace(/"/g, '&quot;')
		.replace(/'/g, '&#39;');
}

// Engineers' units at the edge, with the same precision as the strategy pages.
export const fmt = {
	min: (s: number | null | undefined) => (s == null || !Number.isFinite(s) ? '–' : (s / 60).toFixed(1)),
	degC: (k: number | null | undefined) => (k == null || !Number.isFinite(k) ? '–' : (k - 273.15).toFixed(1)),
	kWh: (wh: number | null | undefined) => (wh == null || !Number.isFinite(wh) ? '–' : (wh / 1000).toFixed(2)),
	pct: (x: number | null | undefined) => (x == null || !Number.isFinite(x) ? '–' : `${Math.round(x * 100)} %`),
	duration(ms: number): string {
		const s = Math.max(0, Math.round(ms / 1000));
		if (s < 60) return `${s} s`;
		const m = Math.floor(s / 60);
		if (m < 60) return `${m} min ${s % 60} s`;
		return `${Math.floor(m / 60)} h ${m % 60} min`;
	}
};

export interface Rendered {
	subject: string;
	html: string;
	text: string;
}

export const S = {
	h1: 'font-size:18px;margin:0 0 8px;color:#1d2630',
	h2: 'font-size:15px;margin:18px 0 6px;color:#1d2630',
	p: 'margin:0 0 10px;line-height:1.45',
	table: 'border-collapse:collapse;font-size:13px;margin:6px 0 12px',
	th: 'text-align:left;border-bottom:2px solid #c9d1d9;padding:4px 8px;white-space:nowrap',
	td: 'border-bottom:1px solid #e3e8ec;padding:4px 8px;white-space:nowrap',
	tdNum: 'border-bottom:1px solid #e3e8ec;padding:4px 8px;text-align:right;white-space:nowrap;font-variant-numeric:tabular-nums',
	button: 'display:inline-block;background:#1f4e79;color:#ffffff;text-decoration:none;padding:8px 14px;border-radius:6px',
	note: 'background:#fff7e6;border-left:3px solid #d99a00;padding:6px 10px;margin:8px 0',
	muted: 'color:#5b6773;font-size:12px',
	/** Label | value pairs that wrap, so they fit a narrow mail window. */
	pairLabel: 'border-bottom:1px solid #e3e8ec;padding:3px 8px;color:#5b6773;width:40%;vertical-align:top',
	pairValue: 'border-bottom:1px solid #e3e8ec;padding:3px 8px;vertical-align:top'
};

/** Wrap an HTML body and a text body with the header, footer and caution line. */
export function frame(opts: { subject: string; htmlBody: string; textBody: string; footer?: { html: string; text: string }; caution?: boolean }): Rendered {
	const caution = opts.caution ?? true;
	const html = `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width"><title>${esc(opts.subject)}</title></head>
<body style="margin:0;padding:16px;background:#f4f6f8;font-family:Manrope,Segoe UI,Helvetica,Arial,sans-serif;color:#1d2630;font-size:14px">
<div style="max-width:600px;margin:0 auto;background:#ffffff;border:1px solid #dde3e8;border-radius:8px;padding:18px 16px;overflow-wrap:anywhere">
<div style="font-weight:700;color:#1f4e79;margin-bottom:10px">Paretherm</div>
${opts.htmlBody}
${caution ? `<p style="${S.p};${S.muted};margin-top:16px">${esc(CAUTION)}</p>` : ''}
${opts.footer ? `<p style="${S.p};${S.muted}">${opts.footer.html}</p>` : ''}
</div></body></html>`;
	const text = [opts.textBody.trimEnd(), caution ? `\n${CAUTION}` : '', opts.footer ? `\n${opts.footer.text}` : ''].join('\n').trimEnd() + '\n';
	return { subject: opts.subject.replace(/[\r\n]+/g, ' ').slice(0, 390), html, text };
}

/** A plain-text table with aligned columns. */
export function textTable(head: string[], rows: string[][]): string {
	const widths = head.map((h, i) => Math.max(h.length, ...rows.map((r) => (r[i] ?? '').length)));
	const line = (cells: string[]) => cells.map((c, i) => (i === 0 ? c.padEnd(widths[i]) : c.padStart(widths[i]))).join('  ').trimEnd();
	return [line(head), widths.map((w) => '-'.repeat(w)).join('  '), ...rows.map(line)].join('\n');
}

/**
 * One small two-column table per row of a wide table (the first cell as its title, then one
 * "column name | value" line per cell). Fits any width a mail client gives it — no side
 * scrolling and no media queries, which many clients drop.
 */
export function stackedTables(head: string[], rows: string[][]): string {
	const label = 'border-bottom:1px solid #e3e8ec;padding:3px 8px;color:#5b6773;width:45%;vertical-align:top';
	const value = 'border-bottom:1px solid #e3e8ec;padding:3px 8px;text-align:right;font-variant-numeric:tabular-nums;vertical-align:top';
	return rows
		.map(
			(r) =>
				`<table role="presentation" width="100%" style="width:100%;border-collapse:collapse;font-size:13px;margin:8px 0 12px;border:1px solid #e3e8ec">` +
				`<tr><td colspan="2" style="padding:5px 8px;background:#f4f6f8;font-weight:600">${esc(r[0])}</td></tr>` +
				r
					.slice(1)
					.map((c, i) => `<tr><td style="${label}">${esc(head[i + 1])}</td><td style="${value}">${esc(c)}</td></tr>`)
					.join('') +
				`</table>`
		)
		.join('\n');
}

export function htmlTable(head: string[], rows: string[][], numericFrom = 1): string {
	const th = head.map((h, i) => `<th style="${S.th}${i >= numericFrom ? ';text-align:right' : ''}">${esc(h)}</th>`).join('');
	const body = rows
		.map((r) => `<tr>${r.map((c, i) => `<td style="${i >= numericFrom ? S.tdNum : S.td}">${esc(c)}</td>`).join('')}</tr>`)
		.join('\n');
	return `<table role="presentation" style="${S.table}"><thead><tr>${th}</tr></thead><tbody>\n${body}\n</tbody></table>`;
}
