/**
 * The year-of-use digest: when an evaluation is stored, one short message to every active member
 * of its program who subscribed to digests, with the three policies' yearly figures per vehicle
 * and for the fleet. Written in the same transaction as the evaluation (see year.ts), so either
 * both are stored or neither; the dedupe key `year-digest:<id>:<user>` keeps it to one per person.
 */
import type { YearResult } from '../../year/evaluate';
import { policyFigures, type Prices } from '../../year/evaluate';
import { mailConfig } from './config';
import type { NewMessage } from './outbox';
import { S, esc, frame, stackedTables, textTable, type Rendered } from './render';
import { digestRecipients } from './sweep-digest';

export interface YearDigest {
	evaluationId: number;
	programId: number;
	programName: string;
	name: string;
	climate: string;
	pattern: string;
	sweepId: number;
	fleetSize: number;
	currency: string;
	prices: Prices;
	result: YearResult;
}

const n1 = (x: number | null, d = 1) => (x === null || !Number.isFinite(x) ? '–' : x.toLocaleString('en-GB', { minimumFractionDigits: d, maximumFractionDigits: d }));

export function renderYearDigest(d: YearDigest, recipient: string): Rendered {
	const link = `${mailConfig().origin}/programs/${d.programId}/year/${d.evaluationId}`;
	const head = ['Policy', 'h saved / vehicle', `h saved / ${d.fleetSize} vehicles`, 'kWh / vehicle', `Energy cost / fleet (${d.currency})`, 'kWh per h saved', 'Worth it'];
	const rows = d.result.policies.map((p) => {
		const one = policyFigures(p, d.prices, 1);
		const all = policyFigures(p, d.prices, d.fleetSize);
		return [one.label, n1(one.hoursSaved_h), n1(all.hoursSaved_h, 0), n1(one.energy_kWh), n1(all.energyCost, 0), n1(one.kWhPerHourSaved, 2), `${Math.round(one.worthShare * 100)} %`];
	});
	const clamped = d.result.policies.reduce((n, p) => n + p.clamped.ambient.below + p.clamped.ambient.above, 0);
	const subject = `[Paretherm] Year of use: ${d.name} — ${d.programName}`;
	const intro = `${d.result.events} fast charges per vehicle a year; climate ${d.climate}, pattern ${d.pattern}, calibration table of sweep #${d.sweepId} (table lookup).`;
	const note = clamped ? `Some charges lie outside the sweep's ambient range and take the nearest edge's figures (${clamped} lookups); see the page.` : '';
	return frame({
		subject,
		htmlBody: `<h1 style="${S.h1}">${esc(d.name)}</h1>
<p style="${S.p}">Hello ${esc(recipient)}, a year-of-use evaluation was stored in ${esc(d.programName)}.</p>
<p style="${S.p}">${esc(intro)}</p>
${stackedTables(head, rows)}
${note ? `<p style="${S.note}">${esc(note)}</p>` : ''}
<p style="${S.p}"><a style="${S.button}" href="${esc(link)}">Open the evaluation</a></p>`,
		textBody: `${d.name}\n\nHello ${recipient}, a year-of-use evaluation was stored in ${d.programName}.\n${intro}\n\n${textTable(head, rows)}\n${note ? `\n${note}\n` : ''}\nOpen it: ${link}\n`,
		footer: { html: 'You receive this because you subscribed to digests of this program (Settings).', text: 'You receive this because you subscribed to digests of this program (Settings).' }
	});
}

export async function yearDigestMessages(d: YearDigest): Promise<NewMessage[]> {
	const recipients = await digestRecipients(d.programId);
	return recipients.map((u) => ({
		dedupeKey: `year-digest:${d.evaluationId}:${u.id}`,
		kind: 'year-digest',
		to: { address: u.email, name: u.name, userId: u.id },
		programId: d.programId,
		rendered: renderYearDigest(d, u.name)
	}));
}
