/**
 * Test-side helpers for the mail suites: a real SMTP sink (smtp-server) on loopback that records
 * what it receives and can refuse the first attempts, and a small MIME reader for the messages
 * nodemailer composes (multipart/alternative, quoted-printable or base64, RFC 2047 subjects).
 */
import { SMTPServer } from 'smtp-server';
import type { AddressInfo } from 'node:net';

export interface Received {
	from: string;
	to: string[];
	user: string | null;
	raw: string;
}

export interface SmtpSink {
	port: number;
	received: Received[];
	/** RCPT TO attempts per address, accepted or not. */
	rcptAttempts: Map<string, number>;
	close(): Promise<void>;
}

export async function startSmtpSink(opts: { user?: string; password?: string; refuseFirst?: number } = {}): Promise<SmtpSink> {
	const received: Received[] = [];
	const rcptAttempts = new Map<string, number>();
	const server = new SMTPServer({
		secure: false,
		disabledCommands: opts.user ? ['STARTTLS'] : ['STARTTLS', 'AUTH'],
		authOptional: !opts.user,
		allowInsecureAuth: true,
		logger: false,
		onAuth(auth, _session, cb) {
			if (auth.username === opts.user && auth.password === opts.password) return cb(null, { user: auth.username });
			cb(Object.assign(new Error('Invalid username or password'), { responseCode: 535 }));
		},
		onRcptTo(address, _session, cb) {
			const n = (rcptAttempts.get(address.address) ?? 0) + 1;
			rcptAttempts.set(address.address, n);
			if (n <= (opts.refuseFirst ?? 0)) return cb(Object.assign(new Error('Mailbox busy, try again later'), { responseCode: 451 }));
			cb();
		},
		onData(stream, session, cb) {
			const chunks: Buffer[] = [];
			stream.on('data', (c: Buffer) => chunks.push(c));
			stream.on('end', () => {
				received.push({
					from: session.envelope.mailFrom ? session.envelope.mailFrom.address : '',
					to: session.envelope.rcptTo.map((r) => r.address),
					user: (session.user as string | undefined) ?? null,
					raw: Buffer.concat(chunks).toString('utf8')
				});
				cb();
			});
		}
	});
	await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
	const port = (server.server.address() as AddressInfo).port;
	return { port, received, rcptAttempts, close: () => new Promise<void>((r) => server.close(() => r())) };
}

// ---------------------------------------------------------------------------------------------
// MIME reading

function splitHead(part: string): { headers: Map<string, string>; body: string } {
	const i = part.search(/\r?\n\r?\n/);
	const head = i < 0 ? part : part.slice(0, i);
	const body = i < 0 ? '' : part.slice(i).replace(/^\r?\n\r?\n/, '');
	const headers = new Map<string, string>();
	for (const line of head.replace(/\r?\n[ \t]+/g, ' ').split(/\r?\n/)) {
		const c = line.indexOf(':');
		if (c > 0) headers.set(line.slice(0, c).trim().toLowerCase(), line.slice(c + 1).trim());
	}
	return { headers, body };
}

function decodeQp(s: string): string {
	const bytes: number[] = [];
	const text = s.replace(/=\r?\n/g, '');
	for (let i = 0; i < text.length; i++) {
		if (text[i] === '=' && /^[0-9A-F]{2}$/i.test(text.slice(i + 1, i + 3))) {
			bytes.push(parseInt(text.slice(i + 1, i + 3), 16));
			i += 2;
		} else bytes.push(...Buffer.from(text[i], 'utf8'));
	}
	return Buffer.from(bytes).toString('utf8');
}

function decodeBody(body: string, encoding: string | undefined): string {
	const enc = (encoding ?? '7bit').toLowerCase();
	if (enc === 'base64') return Buffer.from(body.replace(/\s+/g, ''), 'base64').toString('utf8');
	if (enc === 'quoted-printable') return decodeQp(body);
	return body;
}

/** RFC 2047 encoded words (=?UTF-8?Q?…?= / =?UTF-8?B?…?=). */
export function decodeWords(value: string): string {
	return value
		.replace(/\?=\s+=\?/g, '?==?')
		.replace(/=\?([^?]+)\?([QqBb])\?([^?]*)\?=/g, (_m, _charset, kind: string, data: string) =>
			kind.toUpperCase() === 'B' ? Buffer.from(data, 'base64').toString('utf8') : decodeQp(data.replace(/_/g, ' '))
		);
}

export interface ParsedMail {
	headers: Map<string, string>;
	subject: string;
	text: string | null;
	html: string | null;
}

export function parseMail(raw: string): ParsedMail {
	const { headers, body } = splitHead(raw);
	const out: ParsedMail = { headers, subject: decodeWords(headers.get('subject') ?? ''), text: null, html: null };
	const visit = (h: Map<string, string>, b: string) => {
		const type = h.get('content-type') ?? 'text/plain';
		const boundary = /boundary="?([^";]+)"?/i.exec(type)?.[1];
		if (/^multipart\//i.test(type) && boundary) {
			const parts = b.split(`--${boundary}`).slice(1);
			for (const p of parts) {
				if (p.startsWith('--')) break;
				const sub = splitHead(p.replace(/^\r?\n/, ''));
				visit(sub.headers, sub.body.replace(/\r?\n$/, ''));
			}
		} else if (/^text\/plain/i.test(type)) out.text = decodeBody(b, h.get('content-transfer-encoding'));
		else if (/^text\/html/i.test(type)) out.html = decodeBody(b, h.get('content-transfer-encoding'));
	};
	visit(headers, body);
	return out;
}

/** nodemailer normalises line ends to CRLF and may drop a final newline. */
export const sameText = (a: string | null, b: string) => (a ?? '').replace(/\r\n/g, '\n').trimEnd() === b.replace(/\r\n/g, '\n').trimEnd();
