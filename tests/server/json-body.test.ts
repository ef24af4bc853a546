/**
 * Reading JSON API bodies (src/lib/server/json-body.ts): the size limit on the declared length and
 * while streaming, the nesting-depth scan before JSON.parse (brackets inside strings do not count),
 * and the byte-size notation of PARETHERM_JSON_BODY_LIMIT. JSON grammar: RFC 8259.
 */
import { describe, expect, it } from 'vitest';
import { JsonBodyError, jsonBodyLimit, jsonDepth, parseByteSize, readJsonBody } from '../../src/lib/server/json-body';

function post(body: string | ReadableStream<Uint8Array>, headers: Record<string, string> = {}) {
	return new Request('http://localhost/api', { method: 'POST', body, headers: { 'content-type': 'application/json', ...headers }, duplex: 'half' } as RequestInit);
}

async function refusal(p: Promise<unknown>): Promise<JsonBodyError> {
	try {
		await p;
	} catch (e) {
		if (e instanceof JsonBodyError) return e;
		throw e;
	}
	throw new Error('the body was accepted');
}

describe('jsonDepth', () => {
	it('should count nesting of arrays and objects, not brackets inside strings', () => {
		expect(jsonDepth('1')).toBe(0);
		expect(jsonDepth('{"a":[1,{"b":[]}]}')).toBe(4);
		expect(jsonDepth('{"a":"[[[[{{{{","b":"\\"[["}')).toBe(1);
		expect(jsonDepth('['.repeat(1000) + ']'.repeat(1000), 32)).toBe(33); // stops early
	});
});

describe('readJsonBody', () => {
	it('should parse an ordinary body', async () => {
		expect(await readJsonBody(post('{"scenarioId":"x","definition":{"cellIds":["a"]}}'))).toEqual({ scenarioId: 'x', definition: { cellIds: ['a'] } });
	});

	it('should refuse a declared length over the limit without reading, with 413', async () => {
		const e = await refusal(readJsonBody(post('{}', { 'content-length': '999999' }), { limit: 1024 }));
		expect(e.status).toBe(413);
		expect(e.message).toBe('The request body is 977 kB; over the limit of 1 kB for JSON requests. Send a smaller request (a sweep request is a few kilobytes).');
	});

	it('should count a streamed body and refuse it once it passes the limit', async () => {
		let sent = 0;
		const stream = new ReadableStream<Uint8Array>({
			pull(c) {
				if (sent >= 10) return c.close();
				sent++;
				c.enqueue(new TextEncoder().encode(' '.repeat(512)));
			}
		});
		const e = await refusal(readJsonBody(post(stream), { limit: 2048 }));
		expect(e.status).toBe(413);
		expect(sent).toBeLessThan(10); // it stopped reading
	});

	it('should refuse deep nesting with 400 before parsing, and bad JSON with 400', async () => {
		const deep = await refusal(readJsonBody(post('['.repeat(200_000) + ']'.repeat(200_000)), { limit: 1024 * 1024 }));
		expect(deep.status).toBe(400);
		expect(deep.message).toMatch(/deeper than 32 levels/);
		const bad = await refusal(readJsonBody(post('{"a": '), { expected: 'the sweep' }));
		expect(bad.status).toBe(400);
		expect(bad.message).toBe('The request body is not valid JSON; send the sweep.');
	});
});

describe('PARETHERM_JSON_BODY_LIMIT', () => {
	it('should read sizes as BODY_SIZE_LIMIT does and refuse nonsense with its name', () => {
		expect(parseByteSize('256K')).toBe(262_144);
		expect(parseByteSize('1M')).toBe(1_048_576);
		expect(parseByteSize('300000')).toBe(300_000);
		expect(Number.isNaN(parseByteSize('lots'))).toBe(true);
		expect(jsonBodyLimit({})).toBe(262_144);
		expect(jsonBodyLimit({ PARETHERM_JSON_BODY_LIMIT: '64k' })).toBe(65_536);
		expect(() => jsonBodyLimit({ PARETHERM_JSON_BODY_LIMIT: '12' })).toThrow(/PARETHERM_JSON_BODY_LIMIT must be a size of at least 1K/);
	});
});

describe('NUL characters in JSON bodies', () => {
	it('should refuse a string or key holding U+0000 with its path as the field', async () => {
		const e = await refusal(readJsonBody(post(JSON.stringify({ scenarioId: 1, definition: { name: 'a\u0000b' } }))));
		expect(e.status).toBe(400);
		expect(e.field).toBe('definition.name');
		expect(e.message).toContain('U+0000');
		const k = await refusal(readJsonBody(post(JSON.stringify({ list: [1, { ['x\u0000']: 1 }] }))));
		expect(k.field).toBe('list[1].x\\u0000');
		await expect(readJsonBody(post(JSON.stringify({ name: 'plain \\u0000 text as six characters' })))).resolves.toBeTruthy();
	});
});
