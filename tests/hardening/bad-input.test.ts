/**
 * Generated bad input for every form action and JSON POST the product accepts, read from the route
 * tree (tests/helpers/routes.ts). Each endpoint gets a few hundred malformed requests built with
 * fast-check — wrong types, missing and extra fields, huge numbers, NaN/Infinity, very long
 * strings, Unicode edge cases (lone surrogates, bidi overrides, NUL), prototype-pollution keys,
 * deeply nested JSON, broken encodings — sent by a caller whose role MAY use the endpoint, so the
 * answer comes from validation, not from the guard. Every answer must be a 4xx that carries a
 * message, never a 5xx, and nothing may be stored: a change detector (SQLite's data_version, which
 * moves whenever another connection commits) is read after every request, and a checksum of every
 * table is compared after each endpoint.
 *
 * No table is skipped in the checksum. The one table that legitimately changes on plain requests
 * is `sessions` (Lucia extends a session's expiry once it is past half its 7-day life); sessions
 * signed in by this suite are minutes old, so no refresh can happen while it runs.
 *
 * The app runs without its background runtime (PARETHERM_NO_RUNTIME=1): no sweep computes and no
 * mail is dispatched, so any commit during the run came from a request.
 *
 * Bounded: PARETHERM_FUZZ_RUNS requests per endpoint (default 60, which keeps this file near two
 * minutes so the whole suite fits its time budget; raise it, e.g. to 500, for a deeper search before
 * a release; path-parameter fuzz uses a third). Seeded: the seed is printed at the start; replay with PARETHERM_FUZZ_SEED=<seed>. Each
 * endpoint derives its own seed from it and its route key, so adding a route does not change the
 * inputs of the others.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import fc from 'fast-check';
import fs from 'node:fs';
import path from 'node:path';
import crypto from 'node:crypto';
import sqlite3 from 'sqlite3';
import { Client, ROOT, type RunningApp } from '../helpers/app';
import { databaseChecksum, queryDb } from '../helpers/db-checksum';
import { listRoutes } from '../helpers/routes';
import { DEMO, OUTSIDER, fillRoute, lookUpIds, signedIn, startHardenedApp, type Ids } from './helpers';

// CI replays one fixed seed so a run is reproducible; PARETHERM_FUZZ_SEED=random explores new inputs.
const SEED_ENV = process.env.PARETHERM_FUZZ_SEED ?? '20261201';
const SEED = SEED_ENV === 'random' ? Math.floor(Math.random() * 2 ** 31) : Number(SEED_ENV);
const RUNS = Math.max(1, Number(process.env.PARETHERM_FUZZ_RUNS ?? 60));
console.log(`[bad-input] seed ${SEED}, ${RUNS} runs per endpoint — replay with PARETHERM_FUZZ_SEED=${SEED}`);

function seedFor(key: string): number {
	return (SEED ^ crypto.createHash('sha256').update(key).digest().readInt32LE(0)) | 0;
}

// ---------------------------------------------------------------------------------------------
// Requests

type FieldValue = string | { file: string | Uint8Array; name: string; type: string };
type Field = [string, FieldValue];
type BadRequest =
	| { kind: 'form'; encoding: 'urlencoded' | 'multipart'; fields: Field[] }
	| { kind: 'raw'; contentType: string | null; body: string }
	| { kind: 'json'; body: string; contentType: string | null };

function describeRequest(r: BadRequest): string {
	const s = JSON.stringify(r, (_k, v) => (v instanceof Uint8Array ? `<${v.length} bytes>` : typeof v === 'string' && v.length > 200 ? `${v.slice(0, 200)}…(${v.length} chars)` : v));
	return s.length > 1500 ? `${s.slice(0, 1500)}…` : s;
}

/** adapter-node's default BODY_SIZE_LIMIT: larger bodies are refused (413, or the connection is closed unread). */
const BODY_LIMIT = 512 * 1024;

function bodySize(r: BadRequest): number {
	if (r.kind !== 'form') return Buffer.byteLength(r.body);
	return r.fields.reduce((n, [k, v]) => n + k.length + (typeof v === 'string' ? Buffer.byteLength(v) : typeof v.file === 'string' ? Buffer.byteLength(v.file) : v.file.length), 0);
}

/** The answer, or 'closed' when the server closed the connection on an oversized body it would not read. */
async function sendOrClosed(c: Client, url: string, r: BadRequest): Promise<Response | 'closed'> {
	try {
		return await send(c, url, r);
	} catch (e) {
		if (bodySize(r) > BODY_LIMIT && /fetch failed/.test(String(e))) return 'closed';
		throw new Error(`${e} (${(e as { cause?: unknown }).cause}) for ${describeRequest(r)} (${bodySize(r)} bytes)`);
	}
}

async function send(c: Client, url: string, r: BadRequest): Promise<Response> {
	const accept = r.kind === 'json' ? 'application/json' : 'text/html';
	if (r.kind === 'form' && r.encoding === 'multipart') {
		const fd = new FormData();
		for (const [k, v] of r.fields) {
			if (typeof v === 'string') fd.append(k, v);
			else fd.append(k, new Blob([typeof v.file === 'string' ? v.file : Buffer.from(v.file)], { type: v.type }), v.name);
		}
		return c.request(url, { method: 'POST', body: fd, headers: { accept } });
	}
	if (r.kind === 'form') {
		const p = new URLSearchParams();
		for (const [k, v] of r.fields) p.append(k, typeof v === 'string' ? v : typeof v.file === 'string' ? v.file : Buffer.from(v.file).toString('latin1'));
		return c.request(url, { method: 'POST', body: p.toString(), headers: { accept, 'content-type': 'application/x-www-form-urlencoded' } });
	}
	const headers: Record<string, string> = { accept };
	if (r.contentType) headers['content-type'] = r.contentType;
	return c.request(url, { method: 'POST', body: r.body, headers });
}

/** The message a refused request carries: JSON `error`, a form's `message`, an error page's message, or plain text. */
function messageOf(res: Response, text: string): string | null {
	const type = res.headers.get('content-type') ?? '';
	if (type.includes('application/json')) {
		try {
			const body = JSON.parse(text);
			return typeof body?.error === 'string' && body.error.trim() ? body.error : typeof body?.error?.message === 'string' ? body.error.message : null;
		} catch {
			return null;
		}
	}
	if (type.includes('text/html')) {
		// SvelteKit puts the action's fail() data (form) or the error (error) into the page payload.
		const m = /\bform:\s*\{[^\n]*?\bmessage:"((?:[^"\\]|\\.)+)"/.exec(text) ?? /\berror:\s*\{message:"((?:[^"\\]|\\.)+)"/.exec(text);
		if (m) return m[1];
		// A value used twice (say the message and the first of its problems) is hoisted by the
		// serialiser into a parameter: form: (function(a){return {…message:a…}}("the text")).
		const hoisted = /\bform:\s*\(function\(([\w$,]*)\)\{return \{[^\n]*?\bmessage:([\w$]+)[,}][^\n]*?\}\}\(([^\n]*?)\)\)/.exec(text);
		if (hoisted) {
			const params = hoisted[1].split(',');
			const args = [...hoisted[3].matchAll(/"((?:[^"\\]|\\.)*)"|([^,"]+)/g)].map((a) => a[1] ?? a[2]);
			const value = args[params.indexOf(hoisted[2])];
			if (typeof value === 'string' && value.trim()) return value;
		}
		return null;
	}
	return text.trim() ? text.trim().slice(0, 200) : null;
}

// ---------------------------------------------------------------------------------------------
// Values

const NASTY = [
	'', ' ', '\t\n', 'NaN', 'nan', 'Infinity', '-Infinity', '1e309', '-1e309', '1e-400', '0', '-0', '-1', '1.5', '0x10', '1_000', '٣', '１２', // Arabic-Indic and full-width digits
	'9'.repeat(400), 'null', 'undefined', 'true', '[]', '{}', '[object Object]', '__proto__', 'constructor', 'prototype', 'toString', 'hasOwnProperty',
	'<script>alert(1)</script>', '"><img src=x onerror=alert(1)>', "' OR 1=1 --", '"; DROP TABLE users; --', '../../../etc/passwd', '%00', '%', '\u0000', 'a\u0000b',
	'\u202eevil', '\u200b', '\ufeff', '\ud800', 'x\udfffy', '\uffff', 'A\u0301\u0301\u0301', '🔋⚡', '𝟘𝟙', 'ß'.repeat(300), '\r\n\r\n--boundary--', '${7*7}', '{{7*7}}'
];

const loneSurrogates = fc.array(fc.integer({ min: 0xd800, max: 0xdfff }), { minLength: 1, maxLength: 4 }).map((a) => String.fromCharCode(...a));

/** Any string a client could send, weighted toward the edge cases above. */
const nastyString: fc.Arbitrary<string> = fc.oneof(
	{ weight: 4, arbitrary: fc.constantFrom(...NASTY) },
	{ weight: 2, arbitrary: fc.string({ maxLength: 40 }) },
	{ weight: 2, arbitrary: fc.string({ unit: 'binary', maxLength: 40 }) },
	{ weight: 1, arbitrary: loneSurrogates },
	{ weight: 1, arbitrary: fc.tuple(fc.string({ minLength: 1, maxLength: 8 }), fc.integer({ min: 500, max: 9000 })).map(([s, n]) => s.repeat(n).slice(0, 70_000)) },
	{ weight: 2, arbitrary: fc.double().map(String) },
	{ weight: 1, arbitrary: fc.bigInt({ min: -(10n ** 40n), max: 10n ** 40n }).map(String) },
	{ weight: 1, arbitrary: fc.integer().map(String) }
);

const fileValue: fc.Arbitrary<FieldValue> = fc.record({
	file: fc.oneof(nastyString, fc.uint8Array({ maxLength: 2048 }), fc.constant('x'.repeat(600 * 1024))),
	// A part with an empty file name arrives as a plain text field, so the name is never empty.
	name: fc.oneof(fc.constant('data.json'), nastyString.map((s) => s.slice(0, 200)).filter((s) => s.trim().length > 0)),
	type: fc.constantFrom('application/json', 'text/csv', 'application/octet-stream', 'text/html', '')
});

/** Extra fields a request may carry besides the endpoint's own (never one of `known`). */
function extraFields(known: string[]): fc.Arbitrary<Field[]> {
	const name = fc.oneof(fc.constantFrom('__proto__', 'constructor', 'prototype', '__proto__[polluted]', 'constructor[prototype][polluted]', 'a[]', '', ' ', '\u0000'), fc.string({ maxLength: 20 }));
	return fc.array(fc.tuple(name.filter((n) => !known.includes(n)), fc.oneof(nastyString, fileValue)), { maxLength: 4 });
}

/**
 * A form request: `fields` hold the endpoint's own fields (already made invalid by the spec),
 * mixed with unrelated extra fields, sent urlencoded or multipart (where a value may be a file).
 */
function formRequest(fields: fc.Arbitrary<Field[]>, known: string[]): fc.Arbitrary<BadRequest> {
	return fc
		.tuple(fields, extraFields(known), fc.constantFrom<'urlencoded' | 'multipart'>('urlencoded', 'multipart'), fc.boolean())
		// A file part exists only in multipart; urlencoded would turn it into its text, which may be valid.
		.map(([own, extra, encoding, extraFirst]) => ({
			kind: 'form' as const,
			encoding: own.some(([, v]) => typeof v !== 'string') ? ('multipart' as const) : encoding,
			fields: extraFirst ? [...extra, ...own] : [...own, ...extra]
		}));
}

/** Bodies that are not a readable form at all: wrong content type, broken multipart, invalid percent-escapes without the needed fields. */
function brokenForm(known: string[]): fc.Arbitrary<BadRequest> {
	const junkBody = fc.oneof(nastyString, fc.constantFrom('%', '%%', '%zz=%', '=&&==&', 'a=%ff%fe', '%E0%A4%A', '--x\r\nContent-Disposition: form-data\r\n\r\nv'));
	return fc.oneof(
		fc.record({ kind: fc.constant('raw' as const), contentType: fc.constantFrom('text/plain', 'multipart/form-data; boundary=xyz', 'multipart/form-data', 'application/json', 'application/xml', null), body: junkBody }),
		// A urlencoded body of junk that (decoded) names none of the endpoint's fields.
		fc
			.record({ kind: fc.constant('raw' as const), contentType: fc.constant('application/x-www-form-urlencoded'), body: junkBody })
			.filter((r) => [...new URLSearchParams(r.body).keys()].every((k) => !known.includes(k)))
	);
}

/** JSON values of every shape (bounded depth, so printing a counterexample cannot overflow the stack). */
const anyJson: fc.Arbitrary<unknown> = fc.oneof(
	{ weight: 4, arbitrary: fc.jsonValue({ maxDepth: 4 }) },
	{ weight: 1, arbitrary: fc.constant(JSON.parse('{"__proto__":{"polluted":true},"constructor":{"prototype":{"polluted":true}}}')) }
);
/** JSON text: any value, deeply nested arrays and objects (written as text), prototype-pollution keys. */
const anyJsonText: fc.Arbitrary<string> = fc.oneof(
	{ weight: 4, arbitrary: anyJson.map((v) => JSON.stringify(v) ?? 'null') },
	{ weight: 1, arbitrary: fc.integer({ min: 10, max: 50_000 }).map((n) => '['.repeat(n) + ']'.repeat(n)) },
	{ weight: 1, arbitrary: fc.integer({ min: 10, max: 20_000 }).map((n) => '{"a":'.repeat(n) + '1' + '}'.repeat(n)) }
);
/** A number where one is expected, but not an acceptable one. */
const badNumber: fc.Arbitrary<unknown> = fc.oneof(
	// Numbers below every axis' minimum (heater caps have no maximum, lead times accept 0), or not numbers.
	fc.constantFrom('NaN', 'Infinity', '-Infinity', '1e309', null, true, [], {}, '12', -1e308, -273.15, -1),
	nastyString
);

// ---------------------------------------------------------------------------------------------
// Specs: who calls, which fields, and how to make them certainly invalid

interface Spec {
	/** Signed-in caller that may use the endpoint (null = anonymous). */
	as: keyof typeof DEMO | 'outsider' | null;
	/** The request generator; every request it yields must be one the endpoint refuses. */
	requests: (ids: Ids) => fc.Arbitrary<BadRequest>;
	/** Statuses that count as correct (default: any 4xx). */
	expect?: (status: number) => boolean;
	/**
	 * The endpoint answers without reading the body (sign-out, cancel, an unknown invitation), so
	 * Node closes the connection while a large body is still arriving and the client sees a reset:
	 * a property of the HTTP stack, not of the endpoint. Such endpoints get bodies under 8 kB.
	 */
	unread?: boolean;
}

const is4xx = (s: number) => s >= 400 && s < 500;

/** Own fields where at least one of the `broken` alternatives is certainly present. */
function fieldsWith(parts: Record<string, fc.Arbitrary<FieldValue | undefined>>): fc.Arbitrary<Field[]> {
	return fc.record(parts).map((o) => Object.entries(o).filter((e): e is Field => e[1] !== undefined));
}
const maybe = <T>(a: fc.Arbitrary<T>) => fc.option(a, { nil: undefined });
const anyValue: fc.Arbitrary<FieldValue> = fc.oneof({ weight: 5, arbitrary: nastyString }, { weight: 1, arbitrary: fileValue });

/** A spec for actions whose own fields are `broken` (one certainly-invalid assignment at a time). */
function formSpec(as: Spec['as'], known: string[], broken: (ids: Ids) => fc.Arbitrary<Field[]>, expect?: Spec['expect']): Spec {
	return {
		as,
		expect,
		requests: (ids) => fc.oneof({ weight: 6, arbitrary: formRequest(broken(ids), known) }, { weight: 1, arbitrary: brokenForm(known) })
	};
}

/** Text that a free-text field refuses: empty, over `max` characters, or with control characters. */
function badText(max: number, required = true): fc.Arbitrary<FieldValue> {
	const control = fc.tuple(fc.string({ maxLength: 20 }), fc.constantFrom('\u0000', '\u0001', '\u0008', '\u000e', '\u001f', '\u007f'), fc.string({ maxLength: 20 })).map(([a, c, b]) => `${a}${c}${b}`);
	const long = fc.tuple(fc.string({ minLength: 1, maxLength: 5 }), fc.constantFrom('a', '🔋', '\u0301')).map(([s, pad]) => (s.replace(/\s/g, 'x') + pad.repeat(max + 1)).slice(0, max * 3 + 10)).filter((s) => s.trim().length > max);
	return required ? fc.oneof(fc.constantFrom('', ' ', '\n\t '), control, long) : fc.oneof(control, long);
}

const notOneOf = (values: readonly string[]) => nastyString.filter((s) => !values.includes(s));
/** Strings Number() does not read as a whole number in 1…max (ids that cannot exist). */
const notAnId = (max: number) => nastyString.filter((s) => !(Number.isInteger(Number(s)) && Number(s) >= 1 && Number(s) <= max + 1000));

const STRATEGY_STATES = ['proposed', 'endorsed', 'declined', 'superseded', 'withdrawn'];
const SCENARIO_FIELDS = ['ambient_C', 'initialPackTemp_C', 'stateOfHealth_pct', 'arrivalSoc_pct', 'driveDuration_min', 'drivePower_kW', 'dwell_min', 'chargerPower_kW', 'chargerCurrent_A', 'targetSoc_pct', 'timeCap_min'];
const GOOD_SCENARIO: Record<string, string> = { ambient_C: '-10', initialPackTemp_C: '', stateOfHealth_pct: '100', arrivalSoc_pct: '20', driveDuration_min: '30', drivePower_kW: '20', dwell_min: '2', chargerPower_kW: '150', chargerCurrent_A: '400', targetSoc_pct: '80', timeCap_min: '120' };
/** Values no scenario field accepts: not a finite number, or outside every field's range. */
const badScenarioValue = fc.oneof(fc.constantFrom('NaN', 'Infinity', '-Infinity', '1e309', 'abc', '12abc', '1e6', '-1e6', '99999', '-99999', '１２'), nastyString.filter((s) => !Number.isFinite(Number(s.trim().replace(',', '.'))) && s.trim() !== ''));

/** A scenario form with every field good except at least one bad one (and maybe a blank name). */
function badScenarioFields(extra: Record<string, fc.Arbitrary<FieldValue | undefined>> = {}): fc.Arbitrary<Field[]> {
	return fc
		.tuple(fc.subarray(SCENARIO_FIELDS.filter((f) => f !== 'initialPackTemp_C'), { minLength: 1 }), fc.array(badScenarioValue, { minLength: 11, maxLength: 11 }), fc.record(extra))
		.map(([bad, values, rest]) => [
			...SCENARIO_FIELDS.map((f, i): Field => [f, bad.includes(f) ? values[i] : GOOD_SCENARIO[f]]),
			...Object.entries(rest).filter((e): e is Field => e[1] !== undefined)
		]);
}

/** A sweep-builder form that is certainly refused: an unknown scenario, no cells/packs, or an unreadable list. */
function badBuilder(): fc.Arbitrary<Field[]> {
	const good: Record<string, string> = { name: 'x', scenarioId: 'cold-morning-depot', ambients: '-10', soh: '100', socs: '20', leadTimes: '0, 10', setpoints: '25', heaterCaps: '', budget: '' };
	const unreadable = fc.oneof(fc.constantFrom('abc', 'NaN', 'Infinity', '1e309', '-Infinity', '1,,x', '--5', '5-'), nastyString.filter((s) => s.replace(/\u2212/g, '-').trim().split(/[,;\s]+/).filter(Boolean).some((p) => !Number.isFinite(Number(p)))));
	return fc.oneof(
		// Unknown scenario: never a real slug.
		fc.record({ s: nastyString.filter((s) => !['cold-morning-depot', 'deep-cold-hub-run', 'hot-afternoon-return'].includes(s.trim()) && !/^(cold-morning-depot|deep-cold-hub-run|hot-afternoon-return)@/.test(s.trim())), rest: fc.array(fc.tuple(fc.constantFrom(...Object.keys(good)), nastyString), { maxLength: 6 }) }).map(({ s, rest }): Field[] => [['scenarioId', s], ['cells', 'demo-nmc-pouch'], ['packs', 'demo-van-pack'], ...rest.filter(([k]) => k !== 'scenarioId')]),
		// Good scenario, but no cell or no pack ticked, or unknown ones.
		fc.record({ which: fc.constantFrom('cells', 'packs'), v: fc.option(nastyString.filter((s) => !['demo-nmc-pouch', 'demo-lfp-prismatic', 'demo-van-pack'].includes(s)), { nil: undefined }) }).map(({ which, v }): Field[] => [
			...Object.entries(good),
			...(which === 'cells' ? [] : ([['cells', 'demo-nmc-pouch']] as Field[])),
			...(which === 'packs' ? [] : ([['packs', 'demo-van-pack']] as Field[])),
			...(v !== undefined ? ([[which, v]] as Field[]) : [])
		]),
		// Good everything, but one list (or the budget) unreadable.
		fc.record({ f: fc.constantFrom('ambients', 'soh', 'socs', 'leadTimes', 'setpoints', 'heaterCaps', 'budget'), v: unreadable }).map(({ f, v }): Field[] => [
			...Object.entries({ ...good, [f]: f === 'budget' ? `x${v}` : v }),
			['cells', 'demo-nmc-pouch'],
			['packs', 'demo-van-pack']
		])
	);
}

/** A valid sweep request body, the starting point for single breaking mutations. */
function goodSweep(): Record<string, any> {
	return {
		name: 'fuzz',
		scenarioId: 'cold-morning-depot',
		definition: { cellIds: ['demo-nmc-pouch'], packIds: ['demo-van-pack'], ambients_K: [263.15], statesOfHealth: [1], arrivalSocs: [0.2], leadTimes_s: [0, 600], setpoints_K: [298.15] }
	};
}
const REQUIRED_PATHS = ['scenarioId', 'definition', 'definition.cellIds', 'definition.packIds', 'definition.ambients_K', 'definition.statesOfHealth', 'definition.arrivalSocs', 'definition.leadTimes_s', 'definition.setpoints_K'];
const NUMBER_AXES = ['ambients_K', 'statesOfHealth', 'arrivalSocs', 'leadTimes_s', 'setpoints_K', 'heaterPowerCaps_W'];

/** JSON bodies the sweep API must refuse: not JSON, not an object, or a good request with one certain breakage. */
function badSweepBody(): fc.Arbitrary<BadRequest> {
	const setPath = (o: any, p: string, v: unknown) => {
		const parts = p.split('.');
		let cur = o;
		for (const k of parts.slice(0, -1)) cur = cur[k];
		if (v === undefined) delete cur[parts.at(-1)!];
		else cur[parts.at(-1)!] = v;
		return o;
	};
	const mutated = fc.oneof(
		// A required field missing, or of the wrong type.
		fc.record({ p: fc.constantFrom(...REQUIRED_PATHS), v: fc.oneof(fc.constant(undefined), fc.constantFrom(null, 1, -1, true, 'text', '', {}, 1e308), anyJson.filter((v) => typeof v !== 'string' && !Array.isArray(v) && !(typeof v === 'object' && v !== null))) }).map(({ p, v }) => setPath(goodSweep(), p, v)),
		// An axis that is empty, or holds a value no axis accepts.
		fc.record({ axis: fc.constantFrom(...NUMBER_AXES), bad: badNumber, empty: fc.boolean() }).map(({ axis, bad, empty }) => setPath(goodSweep(), `definition.${axis}`, empty ? [] : [bad])),
		// Unknown cell/pack/scenario ids.
		fc.record({ p: fc.constantFrom('definition.cellIds', 'definition.packIds'), v: nastyString.filter((s) => !['demo-nmc-pouch', 'demo-lfp-prismatic', 'demo-van-pack'].includes(s.trim())) }).map(({ p, v }) => setPath(goodSweep(), p, [v])),
		nastyString.filter((s) => !['cold-morning-depot', 'deep-cold-hub-run', 'hot-afternoon-return'].includes(s.trim()) && !/@/.test(s)).map((s) => setPath(goodSweep(), 'scenarioId', s.trim() === '' ? s : `${s}-unknown`)),
		// An unknown top-level field (the request is strict), prototype keys included.
		fc.record({ k: fc.oneof(fc.constantFrom('__proto__', 'constructor', 'prototype', 'status', 'program_id', 'queue_token'), fc.string({ minLength: 1, maxLength: 20 })), v: anyJson }).filter(({ k }) => !['name', 'scenarioId', 'definition', 'fastestWithinEnergy_Wh', 'chunkSize'].includes(k)).map(({ k, v }) => JSON.parse(JSON.stringify(goodSweep()).replace(/^\{/, `{${JSON.stringify(k)}:${JSON.stringify(v ?? null)},`))),
		// Out-of-range options and a grid far beyond the limit.
		fc.record({ k: fc.constantFrom('chunkSize', 'fastestWithinEnergy_Wh', 'name'), v: fc.constantFrom(0, -1, 65, 1.5, 1e308, -1e-9, 'NaN', '', ' ', 'x'.repeat(121), null, [], {}) })
			.filter(({ k, v }) => !(k === 'name' && typeof v === 'string' && v.trim().length >= 1 && v.trim().length <= 120))
			.filter(({ k, v }) => !(k === 'fastestWithinEnergy_Wh' && typeof v === 'number' && v >= 0 && Number.isFinite(v)) && !(k === 'chunkSize' && typeof v === 'number' && Number.isInteger(v) && v >= 1 && v <= 64))
			.map(({ k, v }) => ({ ...goodSweep(), [k]: v })),
		// More grid points than the limit of 20 000.
		fc.integer({ min: 20_001, max: 30_000 }).map((n) => setPath(goodSweep(), 'definition.leadTimes_s', Array.from({ length: n }, (_, i) => (i * 7200) / n)))
	);
	return fc.oneof(
		{ weight: 6, arbitrary: mutated.map((b) => ({ kind: 'json' as const, contentType: 'application/json', body: JSON.stringify(b) })) },
		{ weight: 2, arbitrary: anyJsonText.map((body) => ({ kind: 'json' as const, contentType: 'application/json', body })) },
		{ weight: 2, arbitrary: fc.record({ kind: fc.constant('json' as const), contentType: fc.constantFrom('application/json', 'text/plain', 'application/x-www-form-urlencoded', null), body: fc.oneof(nastyString, fc.constantFrom('{', '{"a":1,}', "{'a':1}", '[1,2', '\u0000', '{"scenarioId":NaN}', '{"x":1e999}')) }) }
	);
}

/** Every form action and JSON POST, keyed like the authorisation matrix. */
function makeSpecs(users: { leaverId: string; adminId: string }): Record<string, Spec> {
	return {
		'POST /login?/default': formSpec(null, ['email', 'password'], () =>
			fc.oneof(
				fieldsWith({ email: maybe(fc.oneof(fc.constantFrom('', ' '), anyValue)), password: fc.constant(undefined) }),
				fieldsWith({ email: fc.constantFrom('', ' \t', undefined), password: maybe(anyValue) }),
				// A real account with a wrong password (throttling answers 429 after a few).
				fieldsWith({ email: fc.constantFrom(DEMO.viewer, DEMO.manager.toUpperCase(), ` ${DEMO.engineer} `), password: nastyString.filter((p) => p !== 'demo-paretherm-2026') })
			)
		),
		// Sign-out reads no input: any body from an anonymous caller is a redirect to /login, nothing stored.
		'POST /logout?/default': { as: null, unread: true, expect: (s) => s === 303, requests: () => formRequest(fc.constant([]), []) },
		// An unknown invitation token is 404 whatever is posted (open tokens are fuzzed below).
		'POST /invite/[token]?/default': { ...formSpec(null, ['password', 'confirm'], () => fieldsWith({ password: maybe(anyValue), confirm: maybe(anyValue) }), (s) => s === 404 || s === 415), unread: true },
		'POST /settings?/default': formSpec('engineer', ['strategyMode', 'digest'], (ids) =>
			fc.oneof(
				fieldsWith({ strategyMode: maybe(notOneOf(['default', 'immediately', 'daily', 'off'])), digest: maybe(anyValue) }),
				fc.record({ mode: fc.constantFrom('default', 'immediately', 'daily', 'off'), stranger: fc.oneof(fc.constant(String(ids.otherProgramId)), notAnId(ids.otherProgramId).filter((s) => s !== '')) }).map(({ mode, stranger }): Field[] => [['strategyMode', mode], ['digest', String(ids.programId)], ['digest', stranger]])
			)
		),
		'POST /admin?/create': formSpec('admin', ['name', 'email', 'isAdmin', 'mode'], () =>
			fc.oneof(
				fieldsWith({ name: fc.oneof(fc.constantFrom('', '   ', undefined), fc.string({ minLength: 1, maxLength: 3 }).map((s) => s.replace(/\s/g, 'x').repeat(121))), email: maybe(anyValue), isAdmin: maybe(fc.constantFrom('on', 'true')), mode: maybe(fc.constantFrom('password', 'invite', 'x')) }),
				fieldsWith({ name: fc.constant('Fuzz Person'), email: fc.oneof(fc.constantFrom('', 'no-at-sign', 'a@b', '@x.org', 'a b@c.de', 'a@b c.de', `${'x'.repeat(65)}@x.org`, DEMO.engineer, DEMO.admin.toUpperCase()), nastyString.filter((s) => !s.includes('@'))), mode: maybe(fc.constantFrom('password', 'invite')) })
			)
		),
		'POST /admin?/setActive': formSpec('admin', ['userId', 'active'], () =>
			fc.oneof(
				fieldsWith({ userId: maybe(nastyString), active: maybe(anyValue) }),
				// Deactivating oneself is refused.
				fc.constant<Field[]>([['userId', users.adminId], ['active', 'false']])
			)
		),
		'POST /admin?/invite': formSpec('admin', ['userId'], () => fieldsWith({ userId: maybe(nastyString) })),
		'POST /admin/programs?/createProgram': formSpec('admin', ['name', 'description'], () =>
			fc.oneof(
				fieldsWith({ name: fc.oneof(fc.constantFrom('', '  ', undefined), fc.string({ minLength: 1, maxLength: 3 }).map((s) => s.replace(/\s/g, 'x').repeat(121))), description: maybe(anyValue) }),
				fieldsWith({ name: fc.constantFrom('Fuzz program', OTHER_NAME), description: fc.string({ minLength: 1, maxLength: 3 }).map((s) => s.replace(/\s/g, 'x').repeat(2001)) }),
				fieldsWith({ name: fc.constant(OTHER_NAME), description: maybe(nastyString) })
			)
		),
		'POST /admin/programs?/addMember': formSpec('admin', ['programId', 'email', 'role'], (ids) =>
			fc.oneof(
				fieldsWith({ programId: maybe(notAnId(ids.otherProgramId)), email: maybe(anyValue), role: maybe(anyValue) }),
				fieldsWith({ programId: fc.constant(String(ids.programId)), email: fc.constant(OUTSIDER), role: maybe(notOneOf(['engineer', 'architect', 'manager', 'viewer'])) }),
				fieldsWith({ programId: fc.constant(String(ids.programId)), email: nastyString.filter((s) => !s.includes('@')), role: fc.constantFrom('engineer', 'viewer') })
			)
		),
		'POST /admin/programs?/removeMember': formSpec('admin', ['programId', 'userId'], (ids) =>
			fc.oneof(fieldsWith({ programId: maybe(notAnId(ids.otherProgramId)), userId: maybe(anyValue) }), fieldsWith({ programId: fc.constant(String(ids.programId)), userId: maybe(nastyString) }))
		),
		'POST /admin/outbox?/retry': formSpec('admin', ['messageId'], () => fieldsWith({ messageId: maybe(fc.oneof(notAnId(100_000), fileValue)) })),
		// Retrying "all failed" takes no input; with no failed message it is a 200 that changes nothing.
		'POST /admin/outbox?/retryFailed': { as: 'admin', unread: true, expect: (s) => s === 303, requests: () => formRequest(fc.constant([]), []) },
		'POST /programs/[programId]/inputs?/import': formSpec('engineer', ['file', 'json', 'name'], () =>
			fc.oneof(
				fieldsWith({ json: maybe(fc.oneof(nastyString, anyJsonText)), name: maybe(anyValue) }),
				fieldsWith({ file: fileValue, name: maybe(anyValue) }),
				// Almost an exchange document: right envelope, wrong content.
				fc.record({ kind: fc.oneof(fc.constantFrom('cell', 'pack', 'scenario'), nastyString), data: anyJson }).map(({ kind, data }): Field[] => [['json', JSON.stringify({ format: 'paretherm-parameters/1', kind, name: 'x', data })]])
			)
		),
		'POST /programs/[programId]/inputs?/createScenario': formSpec('engineer', ['name', 'from', ...SCENARIO_FIELDS], (ids) => badScenarioFields({ name: maybe(anyValue), from: maybe(fc.oneof(fc.constant(String(ids.inputId)), fc.constant(String(ids.otherInputId)), nastyString)) })),
		'POST /programs/[programId]/inputs?/duplicate': formSpec('engineer', ['inputId'], (ids) => fieldsWith({ inputId: maybe(fc.oneof(notAnId(ids.otherInputId + 50), fc.constant(String(ids.otherInputId)))) })),
		'POST /programs/[programId]/inputs/[inputId]?/save': formSpec('engineer', ['name', 'mode', 'json', ...SCENARIO_FIELDS], () =>
			fc.oneof(
				fieldsWith({ name: maybe(anyValue), json: maybe(fc.oneof(nastyString, anyJsonText)), mode: maybe(notOneOf(['scenario-form'])) }),
				badScenarioFields({ mode: fc.constant('scenario-form'), name: maybe(anyValue) })
			)
		),
		'POST /programs/[programId]/strategies/[strategyId]?/comment': formSpec('architect', ['body'], () => fieldsWith({ body: fc.oneof(badText(4000), fc.constant(undefined), fileValue) })),
		'POST /programs/[programId]/strategies/[strategyId]?/move': formSpec('architect', ['to', 'note'], () =>
			fc.oneof(
				fieldsWith({ to: maybe(notOneOf(STRATEGY_STATES)), note: maybe(anyValue) }),
				// Moves a proposed strategy cannot make.
				fieldsWith({ to: fc.constantFrom('proposed', 'superseded'), note: maybe(anyValue) }),
				// An allowed move with a note that is refused.
				fieldsWith({ to: fc.constantFrom('endorsed', 'declined'), note: badText(4000, false) })
			)
		),
		'POST /programs/[programId]/sweeps/new?/default': formSpec('engineer', ['name', 'scenarioId', 'cells', 'packs', 'ambients', 'soh', 'socs', 'leadTimes', 'setpoints', 'heaterCaps', 'budget'], () => badBuilder()),
		// The seeded sweep has finished: cancelling it is a 409 whatever the body.
		'POST /programs/[programId]/sweeps/[sweepId]?/cancel': { as: 'engineer', unread: true, expect: (s) => s === 409, requests: () => formRequest(fc.constant([]), []) },
		'POST /programs/[programId]/sweeps/[sweepId]/points/[pointId]?/promote': formSpec('engineer', ['title', 'rationale'], () =>
			fc.oneof(fieldsWith({ title: fc.oneof(badText(120), fc.constant(undefined), fileValue), rationale: maybe(anyValue) }), fieldsWith({ title: fc.constant('Fine title'), rationale: badText(4000, false) }))
		),
		'POST /api/programs/[programId]/sweeps': { as: 'engineer', requests: () => badSweepBody() },
		// Finished sweep: 409 whatever the body.
		'POST /api/programs/[programId]/sweeps/[sweepId]/cancel': { as: 'engineer', unread: true, expect: (s) => s === 409, requests: () => fc.record({ kind: fc.constant('json' as const), contentType: fc.constantFrom('application/json', null), body: anyJsonText }) }
	};
}
const OTHER_NAME = 'Other program (hardening)';

/** Form field names an action reads, from its source — for routes without a spec yet. */
function fieldsInSource(routeId: string): string[] {
	const dir = path.join(ROOT, 'src/routes', routeId);
	const names = new Set<string>();
	for (const f of ['+page.server.ts', '+server.ts']) {
		const file = path.join(dir, f);
		if (!fs.existsSync(file)) continue;
		for (const m of fs.readFileSync(file, 'utf8').matchAll(/\.get(?:All)?\(\s*['"]([^'"]+)['"]\s*\)/g)) names.add(m[1]);
	}
	return [...names];
}

/** Every POST key in the route tree: form actions and +server.ts POST handlers. */
function postKeys(): { key: string; routeId: string; action: string | null }[] {
	const out: { key: string; routeId: string; action: string | null }[] = [];
	for (const r of listRoutes()) {
		if (r.kind === 'endpoint') {
			for (const m of r.methods) if (m !== 'GET') out.push({ key: `${m} ${r.id}`, routeId: r.id, action: null });
		} else for (const a of r.actions) out.push({ key: `POST ${r.id}?/${a}`, routeId: r.id, action: a });
	}
	return out;
}

// ---------------------------------------------------------------------------------------------

let app: RunningApp;
let ids: Ids;
const clients = new Map<string, Client>();
let specs: Record<string, Spec>;
let watcher: sqlite3.Database;

/** SQLite's data_version on a connection of our own: it changes whenever another connection commits. */
function dataVersion(): Promise<number> {
	return new Promise((resolve, reject) => watcher.get('PRAGMA data_version', (err, row: { data_version: number }) => (err ? reject(err) : resolve(row.data_version))));
}

beforeAll(async () => {
	app = await startHardenedApp({ env: { PARETHERM_NO_RUNTIME: '1' } });
	ids = await lookUpIds(app);
	for (const who of ['engineer', 'architect', 'manager', 'viewer', 'admin'] as const) clients.set(who, await signedIn(app, DEMO[who]));
	clients.set('outsider', await signedIn(app, OUTSIDER));
	clients.set('anonymous', new Client(app.url));
	const adminId = (await queryDb<{ id: string }>(app.dataDir, 'SELECT id FROM users WHERE email = ?', [DEMO.admin]))[0].id;
	specs = makeSpecs({ leaverId: '', adminId });
	watcher = new sqlite3.Database(path.join(app.dataDir, 'paretherm.sqlite'), sqlite3.OPEN_READONLY);
}, 240_000);

afterAll(async () => {
	await new Promise<void>((r) => (watcher ? watcher.close(() => r()) : r()));
	await app?.stop();
});

function clientFor(as: Spec['as']): Client {
	return clients.get(as ?? 'anonymous')!;
}

/** Runs `requests` against `url`; returns the problems found (empty = all refused properly). */
async function fuzz(key: string, url: string | ((r: BadRequest) => string), as: Spec['as'], requests: fc.Arbitrary<BadRequest>, expectStatus: (s: number) => boolean, runs: number, checkDb = true, checkMessage = true) {
	const c = clientFor(as);
	const before = checkDb ? await databaseChecksum(app.dataDir) : '';
	let version = await dataVersion();
	let sent = 0;
	const result = await fc.check(
		fc.asyncProperty(requests, async (r) => {
			sent++;
			const target = typeof url === 'string' ? url : url(r);
			const res = await sendOrClosed(c, target, r);
			if (res === 'closed') return;
			const text = await res.text();
			if (res.status >= 500) throw new Error(`${res.status} for ${describeRequest(r)}`);
			if (!expectStatus(res.status)) throw new Error(`unexpected ${res.status} for ${describeRequest(r)}: ${text.slice(0, 300)}`);
			if (checkMessage && is4xx(res.status) && !messageOf(res, text)) throw new Error(`${res.status} without a message for ${describeRequest(r)}: ${text.slice(0, 300)}`);
			const now = await dataVersion();
			if (checkDb && now !== version) {
				version = now;
				throw new Error(`the database changed after ${describeRequest(r)} (answered ${res.status})`);
			}
		}),
		// No shrinking: the app is stateful (a stored row changes later answers), so the first failing input is the one to report.
		{ seed: seedFor(key), numRuns: runs, endOnFailure: true, interruptAfterTimeLimit: 120_000, markInterruptAsFailure: true }
	);
	const problems: string[] = [];
	if (result.failed) problems.push(`${key} (seed ${seedFor(key)}, PARETHERM_FUZZ_SEED=${SEED}): ${String(result.errorInstance).slice(0, 2000)}`);
	if (checkDb && (await databaseChecksum(app.dataDir)) !== before) problems.push(`${key}: the table checksum changed during the run`);
	return { problems, sent };
}

describe('bad input', () => {
	it('should know every POST of the route tree, and have no spec for a route that is gone', () => {
		// A route without a spec is still fuzzed below (junk in the fields its source reads, as an
		// administrator), but only "never a 5xx" can be asserted; a spec adds the message and
		// database checks. They are listed so that they are not forgotten.
		const generic = postKeys()
			.map((p) => p.key)
			.filter((k) => !(k in specs));
		if (generic.length) console.warn(`[bad-input] only generic fuzzing (no spec in makeSpecs()) for:\n  ${generic.join('\n  ')}`);
		expect(postKeys().length).toBeGreaterThan(0);
		expect(Object.keys(specs).filter((k) => !postKeys().some((p) => p.key === k))).toEqual([]);
	});

	for (const { key, routeId, action } of postKeys()) {
		it(`should refuse generated bad input to ${key} with a 4xx and a message, storing nothing`, async () => {
			const spec = specs[key];
			const url = fillRoute(routeId, ids) + (action && action !== 'default' ? `?/${action}` : '');
			if (!spec) {
				// Not specified yet: fields read from the source get junk, as an administrator (who may call anything); only "no 5xx" is asserted.
				const known = fieldsInSource(routeId);
				const generic = action === null ? badSweepBody() : formRequest(fc.array(fc.tuple(fc.constantFrom(...(known.length ? known : ['x'])), anyValue), { maxLength: 8 }), known);
				const { problems } = await fuzz(key, url, 'admin', generic, (s) => s < 500, RUNS, false, false);
				expect(problems).toEqual([]);
				return;
			}
			const requests = spec.unread ? spec.requests(ids).filter((r) => bodySize(r) < 8192) : spec.requests(ids);
			const { problems, sent } = await fuzz(key, url, spec.as, requests, spec.expect ?? is4xx, RUNS);
			expect(sent).toBeGreaterThan(0);
			expect(problems).toEqual([]);
		}, 300_000);
	}

	it('should refuse malformed passwords on an open invitation and keep it open', async () => {
		const admin = clientFor('admin');
		const made = await admin.form('/admin?/create', { name: 'Invited Fuzz', email: 'invited.fuzz@paretherm.test', mode: 'invite' });
		const token = /\/invite\/([a-z0-9]+)/.exec(await (await admin.follow(made)).text())?.[1];
		expect(token).toBeTruthy();
		const good = (s: string) => s.length >= 10 && Buffer.byteLength(s, 'utf8') <= 72;
		const requests = formRequest(
			fc.oneof(
				// Too short or too long, typed twice the same.
				nastyString.filter((s) => !good(s)).map((p): Field[] => [['password', p], ['confirm', p]]),
				// Acceptable, but the confirmation differs.
				fc.tuple(fc.string({ minLength: 10, maxLength: 30 }), nastyString).filter(([p, c]) => good(p) && p !== c).map(([p, c]): Field[] => [['password', p], ['confirm', c]]),
				fieldsWith({ password: maybe(fileValue), confirm: maybe(anyValue) })
			),
			['password', 'confirm']
		);
		const { problems } = await fuzz('invite-open', `/invite/${token}`, null, requests, is4xx, RUNS);
		expect(problems).toEqual([]);
		expect((await fetch(`${app.url}/invite/${token}`)).status).toBe(200); // still open
	}, 300_000);

	it('should answer junk in route parameters with a 4xx, for every route', async () => {
		const junk = fc.oneof(fc.constantFrom('0', '-1', '1.5', '1e3', '01', '0x1', '99999999999999999999', 'abc', '%00', '%2F', '١', '1%20OR%201%3D1', '%F0%9F%94%8B', 'x'.repeat(3000), String(2 ** 31), String(2 ** 53 + 1)), // Dot segments are resolved by the URL parser into another route, and a plain number may be a real id: neither is junk.
			nastyString.filter((s) => s.length > 0 && !/^\.+$/.test(s) && s.isWellFormed() && !/^[1-9][0-9]{0,9}$/.test(s)).map((s) => encodeURIComponent(s).slice(0, 4000)));
		const keys: { key: string; route: string; method: string; action: string | null }[] = [];
		for (const r of listRoutes()) {
			if (!r.id.includes('[')) continue;
			if (r.kind === 'endpoint') for (const m of r.methods) keys.push({ key: `${m} ${r.id}`, route: r.id, method: m, action: null });
			else {
				keys.push({ key: `GET ${r.id}`, route: r.id, method: 'GET', action: null });
				for (const a of r.actions) keys.push({ key: `POST ${r.id}?/${a}`, route: r.id, method: 'POST', action: a });
			}
		}
		const problems: string[] = [];
		for (const k of keys) {
			const params = [...k.route.matchAll(/\[(\w+)\]/g)].map((m) => m[1]);
			const requests = fc.record({ param: fc.constantFrom(...params), value: junk });
			const result = await fc.check(
				fc.asyncProperty(requests, async ({ param, value }) => {
					// Only one parameter is junk; the others are real, so the junk is what is judged.
					const url = fillRoute(k.route.replace(`[${param}]`, value), ids) + (k.action && k.action !== 'default' ? `?/${k.action}` : '');
					const c = clientFor('admin');
					const res = k.method === 'GET' ? await c.get(url) : await c.form(url, {});
					const text = await res.text();
					if (res.status >= 500 || (res.status < 400 && !(param === 'token' && res.status === 200))) throw new Error(`${k.method} ${url.slice(0, 300)} answered ${res.status}: ${text.slice(0, 200)}`);
				}),
				{ seed: seedFor(`params ${k.key}`), numRuns: Math.max(5, Math.round(RUNS / 3)), endOnFailure: true }
			);
			if (result.failed) problems.push(`${k.key}: ${String(result.errorInstance).slice(0, 600)}`);
		}
		expect(problems).toEqual([]);
	}, 300_000);

	it('should have stored nothing and logged no unexpected error during the whole run', async () => {
		expect(app.log()).not.toMatch(/unexpected error/);
		const strays = await queryDb<{ n: number }>(app.dataDir, "SELECT COUNT(*) AS n FROM users WHERE email LIKE '%fuzz%' AND email <> 'invited.fuzz@paretherm.test'");
		expect(strays[0].n).toBe(0);
	});
});
