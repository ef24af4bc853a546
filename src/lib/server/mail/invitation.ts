/** The invitation e-mail: the one-time link an administrator created for a new person. */
import crypto from 'node:crypto';
import { User } from '../db/models/index';
import { enqueue, mailWrite } from './outbox';
import { S, esc, frame } from './render';

export function renderInvitation(opts: { name: string; email: string; link: string; invitedBy: string; expiresDays: number }) {
	const subject = 'Your Paretherm invitation';
	const text = [
		`Hello ${opts.name},`,
		'',
		`${opts.invitedBy} has invited you to Paretherm, where the battery-thermal team compares pre-conditioning strategies for fast charging.`,
		'',
		'Choose your password with this one-time link (it works once and expires in ' + `${opts.expiresDays} days):`,
		opts.link,
		'',
		`You will sign in as ${opts.email}. If you did not expect this invitation, ignore this message.`
	].join('\n');
	const html = `<h1 style="${S.h1}">You are invited to Paretherm</h1>
<p style="${S.p}">Hello ${esc(opts.name)},</p>
<p style="${S.p}">${esc(opts.invitedBy)} has invited you to Paretherm, where the battery-thermal team compares pre-conditioning strategies for fast charging.</p>
<p style="${S.p}"><a style="${S.button}" href="${esc(opts.link)}">Choose your password</a></p>
<p style="${S.p};${S.muted}">The link works once and expires in ${opts.expiresDays} days: <a href="${esc(opts.link)}">${esc(opts.link)}</a></p>
<p style="${S.p};${S.muted}">You will sign in as ${esc(opts.email)}. If you did not expect this invitation, ignore this message.</p>`;
	return frame({ subject, htmlBody: html, textBody: text, caution: false });
}

/**
 * Queue the invitation for `userId`. `link` carries the raw token; it is stored only inside the
 * message (which administrators can already see) and never logged.
 */
export async function sendInvitationMail(userId: string, link: string, invitedBy: string, expiresDays = 7): Promise<void> {
	const user = await User.findByPk(userId);
	if (!user) throw new Error(`No user ${userId}.`);
	// One message per invitation link: the key hashes the link, never stores it in clear.
	const h = crypto.createHash('sha256').update(link).digest('hex').slice(0, 24);
	await mailWrite((transaction) =>
		enqueue(
			[
				{
					dedupeKey: `invitation:${user.id}:${h}`,
					kind: 'invitation',
					to: { address: user.email, name: user.name, userId: user.id },
					rendered: renderInvitation({ name: user.name, email: user.email, link, invitedBy, expiresDays })
				}
			],
			transaction
		)
	);
}
