/**
 * Shared plumbing of the sweep JSON API (`src/routes/api/programs/[programId]/sweeps/**`): every
 * failure becomes `{ error, field? }` with its 4xx status, including the auth guard's 401/403/404.
 * (Only the routes import this module; it is the one place here that depends on SvelteKit.)
 */
import { isHttpError, isRedirect, json } from '@sveltejs/kit';
import { SweepInputError } from './request';
import { JsonBodyError } from '../json-body';

export async function apiHandler(fn: () => Promise<Response>): Promise<Response> {
	try {
		return await fn();
	} catch (e) {
		if (e instanceof SweepInputError) return json({ error: e.message, ...(e.field ? { field: e.field } : {}) }, { status: e.status });
		if (e instanceof JsonBodyError) return json({ error: e.message, field: e.field }, { status: e.status });
		if (isHttpError(e)) return json({ error: e.body.message }, { status: e.status });
		if (isRedirect(e)) throw e;
		throw e;
	}
}

/** Optional number query parameter; 400 naming the parameter when it is not a finite number in range. */
export function numberParam(url: URL, name: string, opts: { integer?: boolean; min?: number; max?: number } = {}): number | undefined {
	const raw = url.searchParams.get(name);
	if (raw === null || raw === '') return undefined;
	const v = Number(raw);
	if (!Number.isFinite(v) || (opts.integer && !Number.isInteger(v)) || (opts.min !== undefined && v < opts.min) || (opts.max !== undefined && v > opts.max)) {
		const range =
			opts.min !== undefined && opts.max !== undefined
				? ` from ${opts.min} to ${opts.max}`
				: opts.min !== undefined
					? ` of at least ${opts.min}`
					: opts.max !== undefined
						? ` of at most ${opts.max}`
						: '';
		throw new SweepInputError(`Query parameter ${name} must be ${opts.integer ? 'a whole number' : 'a number'}${range} (got “${raw.slice(0, 40)}”).`, name);
	}
	return v;
}
