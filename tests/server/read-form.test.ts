/**
 * Form bodies are read by one explicit helper (src/lib/server/read-form.ts) that every action
 * calls: unreadable bodies answer 4xx, file parts only where the action says it takes files, and a
 * NUL character is refused with the field named. Every write of the web process (sweeps and mail)
 * runs in one queue (src/lib/server/db/write-queue.ts). Form encoding: WHATWG HTML, "form
 * submission" (urlencoded and multipart/form-data); common practice, no source for the rest.
 */
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { isHttpError } from '@sveltejs/kit';
import { ROOT, tempDataDir } from '../helpers/app';

process.env.PARETHERM_DATA_DIR = tempDataDir('paretherm-read-form-');

const { readForm } = await import('../../src/lib/server/read-form');
const { ensureDb } = await import('../../src/lib/server/db/index');
const { serialized } = await import('../../src/lib/server/sweeps/service');
const { mailWrite } = await import('../../src/lib/server/mail/outbox');

function post(body: BodyInit, contentType?: string): Request {
	const headers: Record<string, string> = contentType ? { 'content-type': contentType } : {};
	return new Request('http://localhost/form', { method: 'POST', body, headers });
}

async function refusal(p: Promise<unknown>): Promise<{ status: number; message: string }> {
	try {
		await p;
	} catch (e) {
		if (isHttpError(e)) return { status: e.status, message: e.body.message };
		throw e;
	}
	throw new Error('the form was accepted');
}

function multipartWithFile(): FormData {
	const form = new FormData();
	form.set('name', 'Ambient year');
	form.set('file', new File(['a,b\n1,2\n'], 'data.csv', { type: 'text/csv' }));
	return form;
}

describe('readForm', () => {
	it('should give the fields of a urlencoded or multipart form', async () => {
		const a = await readForm(post(new URLSearchParams({ name: 'Cold morning', ambient_C: '-10' })));
		expect(a.get('name')).toBe('Cold morning');
		expect(a.get('ambient_C')).toBe('-10');
		const c = await readForm(post(multipartWithFile()), { files: true });
		expect((c.get('file') as File).name).toBe('data.csv');
	});

	it('should refuse a file part unless the action takes files, naming the field', async () => {
		const r = await refusal(readForm(post(multipartWithFile())));
		expect(r.status).toBe(400);
		expect(r.message).toContain('“file”');
		expect(r.message).toMatch(/takes no files/);
	});

	it('should refuse a NUL character in a field with the field named, in either encoding', async () => {
		const a = await refusal(readForm(post(new URLSearchParams({ name: 'a\u0000b', email: 'x@example.org' }))));
		expect(a.status).toBe(400);
		expect(a.message).toContain('“name”');
		expect(a.message).toContain('U+0000');
		const form = new FormData();
		form.set('title', 'ok');
		form.set('body', 'line\u0000');
		const b = await refusal(readForm(post(form)));
		expect(b.message).toContain('“body”');
		// In a field's name, spelled out so the message stays readable.
		const c = await refusal(readForm(post('x%00y=1', 'application/x-www-form-urlencoded')));
		expect(c.message).toContain('“x\\u0000y”');
	});

	describe('error handling', () => {
		it('should answer 415 for a body that is not a form, and 400 for a malformed multipart body', async () => {
			expect((await refusal(readForm(post('name=x', 'text/plain')))).status).toBe(415);
			expect((await refusal(readForm(post('--x\r\nnonsense', 'multipart/form-data; boundary=x')))).status).toBe(400);
		});
	});
});

describe('form actions', () => {
	const routes = path.join(ROOT, 'src/routes');
	const files = (fs.readdirSync(routes, { recursive: true }) as string[]).filter((f) => f.endsWith('.server.ts')).map((f) => path.join(routes, f));

	it('should read every form body through readForm, never request.formData() directly', () => {
		const direct = files.filter((f) => /request\.formData\(/.test(fs.readFileSync(f, 'utf8'))).map((f) => path.relative(ROOT, f));
		expect(direct).toEqual([]);
		const actions = files.filter((f) => /export const actions/.test(fs.readFileSync(f, 'utf8')) && /\.get(All)?\(/.test(fs.readFileSync(f, 'utf8')));
		expect(actions.length).toBeGreaterThan(5);
		for (const f of actions) expect(fs.readFileSync(f, 'utf8'), path.relative(ROOT, f)).toMatch(/readForm\(request/);
	});

	it('should not patch request.formData in the server hooks', () => {
		const hooks = fs.readFileSync(path.join(ROOT, 'src/hooks.server.ts'), 'utf8');
		expect(hooks).not.toMatch(/request\.formData\s*=/);
	});
});

describe('one write queue', () => {
	it('should run a mail write only after a sweep write queued before it has finished', async () => {
		await ensureDb();
		const order: string[] = [];
		let release!: () => void;
		const held = new Promise<void>((r) => (release = r));
		const first = serialized(async () => {
			order.push('sweep write starts');
			await held;
			order.push('sweep write ends');
		});
		const second = mailWrite(async () => {
			order.push('mail write');
		});
		// Held on purpose: the mail write must wait however long the sweep write takes.
		for (let i = 0; i < 20; i++) await new Promise((r) => setImmediate(r));
		expect(order).toEqual(['sweep write starts']);
		release();
		await Promise.all([first, second]);
		expect(order).toEqual(['sweep write starts', 'sweep write ends', 'mail write']);
	});
});
