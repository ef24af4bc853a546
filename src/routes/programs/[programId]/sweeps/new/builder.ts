/**
 * Server side of the sweep builder: the shared checks (src/lib/sweep-builder.ts) plus reading the
 * chosen versions from the posted form.
 */
import { SweepInputError } from '$lib/server/sweeps/request';
import { checkBuilder, type BuilderValues } from '$lib/sweep-builder';

export { BUILDER_FIELDS, checkBuilder, fieldForPath, parseList, type BuilderValues, type BuilderProblem } from '$lib/sweep-builder';

/** The sweep request for the form, or SweepInputError with the first problem (all of them in `problems`). */
export function builderToRequest(v: BuilderValues) {
	const { body, problems } = checkBuilder(v);
	if (!body) throw new SweepInputError(problems[0]?.message ?? 'The form is incomplete.', problems[0]?.field);
	return body;
}

/** The versions chosen in the form: fields named `<prefix><slug>` (e.g. "cellVersion:demo-nmc-pouch"). */
export function versionsFromForm(form: FormData, prefix: string): Record<string, string> {
	const out: Record<string, string> = {};
	for (const [k, v] of form.entries()) if (k.startsWith(prefix) && typeof v === 'string') out[k.slice(prefix.length)] = v;
	return out;
}
