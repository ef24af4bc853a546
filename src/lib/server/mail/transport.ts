/**
 * The two transports, both nodemailer, both handed the same compiled RFC 5322 message:
 * - local outbox (SMTP_URL unset): nodemailer's stream transport; the message is "delivered" into
 *   the outbox row, whose stored raw source is what the admin page shows;
 * - SMTP (SMTP_URL set): nodemailer's SMTP transport to that server.
 * Compiling once (MailComposer) means the stored raw source is byte for byte what was sent.
 */
import crypto from 'node:crypto';
import nodemailer from 'nodemailer';
import MailComposer from 'nodemailer/lib/mail-composer';
import { describeSmtp, mailConfig, type MailConfig } from './config';

export interface Envelope {
	from: string;
	to: string[];
}

export interface MailTransport {
	/** 'outbox' or 'smtp://host:port' — never credentials. */
	name: string;
	send(envelope: Envelope, raw: Buffer): Promise<{ response: string }>;
	close(): void;
}

export function localOutboxTransport(): MailTransport {
	const t = nodemailer.createTransport({ streamTransport: true, buffer: true });
	return {
		name: 'outbox',
		async send(envelope, raw) {
			const info = (await t.sendMail({ envelope: envelope as never, raw })) as unknown as { message?: Buffer };
			const size = Buffer.isBuffer(info.message) ? info.message.length : raw.length;
			return { response: `stored in the local outbox (${size} bytes)` };
		},
		close: () => t.close()
	};
}

export function smtpTransport(url: string): MailTransport {
	// A fresh connection per message keeps a dead connection from stalling the queue; timeouts
	// make an unreachable server a retryable failure instead of a hang.
	const t = nodemailer.createTransport({ url, connectionTimeout: 15_000, greetingTimeout: 10_000, socketTimeout: 30_000 } as never);
	return {
		name: describeSmtp(url),
		async send(envelope, raw) {
			const info = (await t.sendMail({ envelope: envelope as never, raw })) as unknown as { response?: string; rejected?: unknown[] };
			if (Array.isArray(info.rejected) && info.rejected.length)
				throw Object.assign(new Error(`The SMTP server refused ${info.rejected.join(', ')}: ${info.response ?? ''}`), { responseCode: 550 });
			return { response: String(info.response ?? 'accepted') };
		},
		close: () => t.close()
	};
}

export function transportFromConfig(cfg: MailConfig = mailConfig()): MailTransport {
	return cfg.smtpUrl ? smtpTransport(cfg.smtpUrl) : localOutboxTransport();
}

export function addressOf(from: string): string {
	const m = /<([^>]+)>/.exec(from);
	return (m ? m[1] : from).trim();
}

/** Stable per outbox row, so a receiver can drop a duplicate if a retry follows a lost reply. */
export function messageIdFor(rowId: number, dedupeKey: string, from: string): string {
	const domain = addressOf(from).split('@')[1] || 'localhost';
	const h = crypto.createHash('sha256').update(dedupeKey).digest('hex').slice(0, 16);
	return `<paretherm.${rowId}.${h}@${domain}>`;
}

export async function compose(m: {
	from: string;
	to: { name: string; address: string };
	subject: string;
	text: string;
	html: string;
	messageId: string;
	date: Date;
	kind: string;
}): Promise<Buffer> {
	const mail = new MailComposer({
		from: m.from,
		to: m.to.name ? { name: m.to.name, address: m.to.address } : m.to.address,
		subject: m.subject,
		text: m.text,
		html: m.html,
		messageId: m.messageId,
		date: m.date,
		headers: { 'Auto-Submitted': 'auto-generated', 'X-Paretherm-Kind': m.kind }
	});
	return mail.compile().build();
}
