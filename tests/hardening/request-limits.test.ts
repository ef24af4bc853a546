/**
 * Request bodies and query limits of the built app, on raw keep-alive connections so that what
 * the client sees on the wire is checked, not what a client library smooths over:
 *  - JSON API bodies have their own small limit (413 with a message), deep nesting is refused
 *    before parsing (400), chunked bodies are counted while they arrive;
 *  - an answer sent before the body was read (refused upload, 401/403, 413) leaves the connection
 *    usable: the client finishes sending, reads the answer, and the next request on the same
 *    connection is answered (no reset, no stall);
 *  - `points?limit=` has a largest page; a negative energy budget is refused in the fronts and
 *    calibration queries as in sweep requests.
 * Limits: common practice, no source.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import net from 'node:net';
import { Client, startApp, type RunningApp } from '../helpers/app';
import { databaseChecksum } from '../helpers/db-checksum';
import { DEMO, lookUpIds, seedHardening, signedIn, type Ids } from './helpers';

let app: RunningApp;
let ids: Ids;
let engineer: Client;
let viewer: Client;

beforeAll(async () => {
	app = await startApp({ dataDir: await seedHardening(), seed: false, env: { PARETHERM_NO_RUNTIME: '1' } });
	ids = await lookUpIds(app);
	engineer = await signedIn(app, DEMO.engineer);
	viewer = await signedIn(app, DEMO.viewer);
}, 240_000);

afterAll(async () => {
	await app?.stop();
});

interface Exchange {
	/** Status codes of the answers read on the connection, in order. */
	statuses: number[];
	/** The first answer's body. */
	firstBody: string;
	/** A socket error the client saw (ECONNRESET, EPIPE), or ''. */
	error: string;
}

/**
 * One keep-alive connection: a POST whose body is sent in full (waiting for the socket to take it,
 * as a real client does), then `GET /login` on the same connection. Resolves once both answers are
 * read or the connection ends.
 */
async function exchange(opts: { path: string; headers: Record<string, string>; body: Buffer | ((write: (b: Buffer) => Promise<void>) => Promise<void>) }): Promise<Exchange> {
	const port = Number(new URL(app.url).port);
	const socket = net.connect(port, '127.0.0.1');
	let received = '';
	let error = '';
	socket.on('data', (d) => (received += d.toString('latin1')));
	socket.on('error', (e) => (error = (e as NodeJS.ErrnoException).code ?? e.message));
	const ended = new Promise<void>((r) => socket.on('close', () => r()));
	await new Promise<void>((r) => socket.once('connect', () => r()));
	const write = (b: Buffer) =>
		new Promise<void>((resolve) => {
			if (socket.destroyed) return resolve();
			if (socket.write(b)) resolve();
			else socket.once('drain', () => resolve());
		});
	const head = Object.entries({ host: `localhost:${port}`, origin: app.url, ...opts.headers })
		.map(([k, v]) => `${k}: ${v}\r\n`)
		.join('');
	await write(Buffer.from(`POST ${opts.path} HTTP/1.1\r\n${head}\r\n`, 'latin1'));
	if (typeof opts.body === 'function') await opts.body(write);
	else for (let i = 0; i < opts.body.length; i += 65536) await write(opts.body.subarray(i, i + 65536));
	await write(Buffer.from(`GET /login HTTP/1.1\r\nhost: localhost:${port}\r\n\r\n`, 'latin1'));
	// Both answers, or the end of the connection.
	while (!socket.destroyed && [...received.matchAll(/HTTP\/1\.1 \d{3}/g)].length < 2) await Promise.race([ended, new Promise((r) => socket.once('data', r))]);
	socket.destroy();
	const statuses = [...received.matchAll(/HTTP\/1\.1 (\d{3})/g)].map((m) => Number(m[1]));
	const first = received.split(/HTTP\/1\.1 \d{3}/)[1] ?? '';
	return { statuses, firstBody: first.slice(first.indexOf('\r\n\r\n') + 4), error };
}

const json = (extra: Record<string, string> = {}) => ({ 'content-type': 'application/json', accept: 'application/json', cookie: engineer.cookieHeader(), ...extra });
const sweepsPath = () => `/api/programs/${ids.programId}/sweeps`;

describe('JSON API bodies', () => {
	it('should answer a JSON body over its own limit with 413 and a message, and keep the connection', async () => {
		const before = await databaseChecksum(app.dataDir, ['sessions']);
		const body = Buffer.from('['.repeat(300_000) + ']'.repeat(300_000)); // 600 kB: under the 8 MB form limit
		const r = await exchange({ path: sweepsPath(), headers: { ...json(), 'content-length': String(body.length) }, body });
		expect(r.error).toBe('');
		expect(r.statuses).toEqual([413, 200]);
		const answer = JSON.parse(r.firstBody);
		expect(answer.error).toMatch(/The request body is 586 kB; over the limit of 256 kB for JSON requests/);
		expect(answer.field).toBe('body');
		expect(await databaseChecksum(app.dataDir, ['sessions'])).toBe(before);
	}, 60_000);

	it('should count a chunked body while it arrives and refuse it past the limit', async () => {
		const piece = Buffer.alloc(64 * 1024, 0x20);
		const r = await exchange({
			path: sweepsPath(),
			headers: { ...json(), 'transfer-encoding': 'chunked' },
			body: async (write) => {
				for (let i = 0; i < 8; i++) await write(Buffer.concat([Buffer.from(`${piece.length.toString(16)}\r\n`), piece, Buffer.from('\r\n')]));
				await write(Buffer.from('0\r\n\r\n'));
			}
		});
		expect(r.error).toBe('');
		expect(r.statuses).toEqual([413, 200]);
		expect(JSON.parse(r.firstBody).error).toMatch(/over the limit of 256 kB for JSON requests/);
	}, 60_000);

	it('should refuse deep nesting under the size limit before parsing it', async () => {
		const deep = '['.repeat(100_000) + ']'.repeat(100_000);
		const res = await engineer.request(sweepsPath(), { method: 'POST', headers: { 'content-type': 'application/json', accept: 'application/json' }, body: deep });
		expect(res.status).toBe(400);
		expect(await res.json()).toEqual({ error: expect.stringMatching(/nests arrays or objects deeper than 32 levels/), field: 'body' });
		const shallow = await engineer.json(sweepsPath(), 'POST', { scenarioId: 'cold-morning-depot', definition: { cellIds: [[[[]]]] } });
		expect(shallow.status).toBe(400); // an ordinary validation answer, not the depth refusal
		expect((await shallow.json()).field).toMatch(/^definition/);
	});
});

describe('answers sent before the body was read', () => {
	const boundary = 'paretherm-test-boundary';
	const upload = (size: number) =>
		Buffer.concat([
			Buffer.from(`--${boundary}\r\ncontent-disposition: form-data; name="kind"\r\n\r\ndrive-profile\r\n--${boundary}\r\ncontent-disposition: form-data; name="file"; filename="drive.csv"\r\ncontent-type: text/csv\r\n\r\ntime_s,power_W\r\n`),
			Buffer.alloc(size, 0x31),
			Buffer.from(`\r\n--${boundary}--\r\n`)
		]);

	it('should keep the connection after refusing a 6 MB upload from someone who may not upload', async () => {
		const body = upload(6_000_000);
		const r = await exchange({
			path: `/programs/${ids.programId}/checks?/upload`,
			headers: { 'content-type': `multipart/form-data; boundary=${boundary}`, accept: 'application/json', cookie: viewer.cookieHeader(), 'content-length': String(body.length) },
			body
		});
		expect(r.error).toBe('');
		expect(r.statuses).toEqual([403, 200]);
	}, 60_000);

	it('should keep the connection after a 401 to an anonymous 200 kB JSON post', async () => {
		const body = Buffer.from(JSON.stringify({ name: 'x'.repeat(200_000) }));
		const r = await exchange({ path: sweepsPath(), headers: { 'content-type': 'application/json', accept: 'application/json', 'content-length': String(body.length) }, body });
		expect(r.error).toBe('');
		expect(r.statuses).toEqual([401, 200]);
	}, 60_000);

	it('should answer an upload over the server limit with 413 and keep the connection', async () => {
		const body = upload(9_000_000);
		const r = await exchange({
			path: `/programs/${ids.programId}/checks?/upload`,
			headers: { 'content-type': `multipart/form-data; boundary=${boundary}`, accept: 'application/json', cookie: engineer.cookieHeader(), 'content-length': String(body.length) },
			body
		});
		expect(r.error).toBe('');
		expect(r.statuses).toEqual([413, 200]);
		expect(r.firstBody).toMatch(/exceeds limit of 8388608 bytes/);
	}, 60_000);
});

describe('query limits', () => {
	it('should refuse a points page larger than 5000 and accept 5000', async () => {
		const base = `/api/programs/${ids.programId}/sweeps/${ids.sweepId}/points`;
		const huge = await engineer.get(`${base}?limit=100000000`);
		expect(huge.status).toBe(400);
		expect(await huge.json()).toEqual({ error: 'Query parameter limit must be a whole number from 1 to 5000 (got “100000000”).', field: 'limit' });
		expect((await engineer.get(`${base}?limit=5000`)).status).toBe(200);
	});

	it('should refuse a negative energy budget in the fronts and calibration queries, as sweep requests do', async () => {
		const base = `/api/programs/${ids.programId}/sweeps/${ids.sweepId}`;
		for (const url of [`${base}/fronts?fastestWithinEnergy_Wh=-5`, `${base}/calibration?format=csv&rule=fastest-within&fastestWithinEnergy_Wh=-5`]) {
			const res = await engineer.get(url);
			expect(res.status, url).toBe(400);
			expect(await res.json(), url).toEqual({ error: expect.stringMatching(/fastestWithinEnergy_Wh must be a number of at least 0/), field: 'fastestWithinEnergy_Wh' });
		}
		expect((await engineer.get(`${base}/fronts?fastestWithinEnergy_Wh=0`)).status).toBe(200);
	});
});
