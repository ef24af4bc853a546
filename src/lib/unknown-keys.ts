/**
 * Unknown keys in a JSON document checked against a zod schema. Zod objects drop keys they do not
 * know, so a typo ("anodeMargin_V") would be saved as nothing at all; this walks the document
 * beside its schema and reports every key the schema has no place for, with the closest known key
 * as a suggestion. Unions are followed into the option the value fits (or, failing that, the one
 * sharing most keys with it).
 */
import { z, type ZodTypeAny } from 'zod';

export interface UnknownKey {
	/** Dotted path with [i] for array items, e.g. "limits.anodeMargin_V" or "drive.profile.points[2].t_s". */
	path: string;
	key: string;
	/** Closest known key at that place, when one is close enough to be a likely typo. */
	suggestion: string | null;
}

function unwrap(schema: ZodTypeAny): ZodTypeAny {
	let s = schema;
	for (let i = 0; i < 20; i++) {
		if (s instanceof z.ZodEffects) s = s._def.schema;
		else if (s instanceof z.ZodOptional || s instanceof z.ZodNullable || s instanceof z.ZodDefault || s instanceof z.ZodReadonly) s = s._def.innerType;
		else if (s instanceof z.ZodCatch) s = s._def.innerType;
		else if (s instanceof z.ZodBranded) s = s._def.type;
		else if (s instanceof z.ZodLazy) s = s._def.getter();
		else if (s instanceof z.ZodPipeline) s = s._def.in;
		else return s;
	}
	return s;
}

const isPlainObject = (v: unknown): v is Record<string, unknown> => v !== null && typeof v === 'object' && !Array.isArray(v);

function pickOption(options: readonly ZodTypeAny[], value: unknown): ZodTypeAny | null {
	const fits = options.find((o) => o.safeParse(value).success);
	if (fits) return fits;
	if (!isPlainObject(value)) return null;
	let best: ZodTypeAny | null = null;
	let bestShared = -1;
	for (const o of options) {
		const u = unwrap(o);
		if (!(u instanceof z.ZodObject)) continue;
		const shape = u.shape as Record<string, ZodTypeAny>;
		// A discriminator that matches counts most.
		let shared = 0;
		for (const [k, v] of Object.entries(value)) {
			if (!(k in shape)) continue;
			const lit = unwrap(shape[k]);
			shared += lit instanceof z.ZodLiteral ? (lit.value === v ? 100 : -100) : 1;
		}
		if (shared > bestShared) {
			best = o;
			bestShared = shared;
		}
	}
	return best;
}

/** Levenshtein distance (Wagner–Fischer dynamic programme, common practice). */
export function editDistance(a: string, b: string): number {
	const m = a.length;
	const n = b.length;
	let prev = Array.from({ length: n + 1 }, (_, j) => j);
	for (let i = 1; i <= m; i++) {
		const cur = [i];
		for (let j = 1; j <= n; j++) cur[j] = Math.min(prev[j] + 1, cur[j - 1] + 1, prev[j - 1] + (a[i - 1] === b[j - 1] ? 0 : 1));
		prev = cur;
	}
	return prev[n];
}

/**
 * The known key a typo most likely meant: same letters in another case, the same name with another
 * unit suffix ("margin_mV" for "margin_V"), or within a small edit distance (about a third of its
 * length, at least 2). Null when nothing is that close.
 */
export function closestKey(key: string, known: readonly string[]): string | null {
	const lower = key.toLowerCase();
	const stem = (k: string) => k.toLowerCase().replace(/_[a-z0-9]+$/i, '');
	let best: string | null = null;
	let bestScore = Infinity;
	for (const k of known) {
		let score: number;
		if (k.toLowerCase() === lower) score = 0;
		else if (stem(k) === stem(key) && k.includes('_') && key.includes('_')) score = 0.5;
		else score = editDistance(lower, k.toLowerCase());
		if (score < bestScore) {
			best = k;
			bestScore = score;
		}
	}
	const limit = Math.max(2, Math.floor(key.length / 3));
	return best !== null && bestScore <= limit ? best : null;
}

/** Every key of `value` that `schema` has no place for (empty when there is none). */
export function unknownKeys(schema: ZodTypeAny, value: unknown, path = ''): UnknownKey[] {
	const out: UnknownKey[] = [];
	const s = unwrap(schema);
	if (s instanceof z.ZodObject) {
		if (!isPlainObject(value)) return out;
		const shape = s.shape as Record<string, ZodTypeAny>;
		const catchall = s._def.catchall as ZodTypeAny | undefined;
		const open = s._def.unknownKeys === 'passthrough' || (catchall !== undefined && !(catchall instanceof z.ZodNever));
		for (const [k, v] of Object.entries(value)) {
			const p = path ? `${path}.${k}` : k;
			if (k in shape) out.push(...unknownKeys(shape[k], v, p));
			else if (!open) out.push({ path: p, key: k, suggestion: closestKey(k, Object.keys(shape)) });
		}
	} else if (s instanceof z.ZodArray) {
		if (Array.isArray(value)) value.forEach((v, i) => out.push(...unknownKeys(s._def.type, v, `${path}[${i}]`)));
	} else if (s instanceof z.ZodUnion || s instanceof z.ZodDiscriminatedUnion) {
		const option = pickOption(s.options as ZodTypeAny[], value);
		if (option) out.push(...unknownKeys(option, value, path));
	} else if (s instanceof z.ZodRecord) {
		if (isPlainObject(value)) for (const [k, v] of Object.entries(value)) out.push(...unknownKeys(s._def.valueType, v, path ? `${path}.${k}` : k));
	} else if (s instanceof z.ZodTuple) {
		if (Array.isArray(value)) (s._def.items as ZodTypeAny[]).forEach((item, i) => out.push(...unknownKeys(item, value[i], `${path}[${i}]`)));
	} else if (s instanceof z.ZodIntersection) {
		// Keys may belong to either side; only report what neither side knows.
		const left = unknownKeys(s._def.left, value, path);
		const right = new Set(unknownKeys(s._def.right, value, path).map((u) => u.path));
		out.push(...left.filter((u) => right.has(u.path)));
	}
	return out;
}

/** "Unknown key “limits.anodeMargin_V” (did you mean “anodePotentialMargin_V”?)" for each, joined. */
export function unknownKeysMessage(found: readonly UnknownKey[]): string {
	const words = found.slice(0, 8).map((u) => `“${u.path}”${u.suggestion ? ` (did you mean “${u.suggestion}”?)` : ''}`);
	const more = found.length > 8 ? ` and ${found.length - 8} more` : '';
	return `Unknown key${found.length === 1 ? '' : 's'} ${words.join(', ')}${more}; nothing was saved. Fix or remove ${found.length === 1 ? 'it' : 'them'} and save again.`;
}
