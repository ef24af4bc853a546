import { error, fail, redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { readForm } from '$lib/server/read-form';
import { parseId, requireProgramRole } from '$lib/server/auth/guard';
import { roleCan } from '$lib/server/auth/roles';
import { getEvaluation, YearError } from '$lib/server/year';
import { cancelExactRun, evaluationInProgram, latestExactRun, startExactRun } from '$lib/server/year-exact';

export const load: PageServerLoad = async ({ locals, params }) => {
	const { program, role } = await requireProgramRole(locals, params.programId, 'read');
	const id = parseId(params.evaluationId, 'evaluation');
	const evaluation = await getEvaluation(program.id, id);
	if (!evaluation) error(404, `No evaluation with id ${id} in this program.`);
	return { evaluation, exact: await latestExactRun(id), canRunExact: role === 'admin' || roleCan(role, 'edit') };
};

/** The evaluation must be this program's (404 otherwise, before anything else is read). */
async function ownEvaluation(programId: number, raw: string): Promise<number> {
	const id = parseId(raw, 'evaluation');
	if (!(await evaluationInProgram(programId, id))) error(404, `No evaluation with id ${id} in this program.`);
	return id;
}

/** The form names what it asks for, so a stray post changes nothing. */
function wantsExact(form: FormData): boolean {
	return form.get('mode') === 'exact';
}

export const actions: Actions = {
	/** Starts the exact run: every sampled charge simulated in the background, then the lookup's error. */
	exact: async ({ locals, params, request }) => {
		const { user, program } = await requireProgramRole(locals, params.programId, 'edit');
		const id = await ownEvaluation(program.id, params.evaluationId);
		const form = await readForm(request);
		if (!wantsExact(form)) return fail(400, { action: 'exact', field: 'mode', message: 'Say which run to start: the form sends mode “exact”.', values: {} });
		try {
			await startExactRun(program.id, id, user.id);
		} catch (e) {
			if (e instanceof YearError) return fail(e.status, { action: 'exact', field: e.field, message: e.message, values: {} });
			throw e;
		}
		redirect(303, `/programs/${program.id}/year/${id}#exact`);
	},
	/** Cancels the running exact run; results that arrive later are discarded. */
	cancelExact: async ({ locals, params, request }) => {
		const { program } = await requireProgramRole(locals, params.programId, 'edit');
		const id = await ownEvaluation(program.id, params.evaluationId);
		const form = await readForm(request);
		if (!wantsExact(form)) return fail(400, { action: 'cancelExact', field: 'mode', message: 'Say which run to cancel: the form sends mode “exact”.', values: {} });
		try {
			if (!(await cancelExactRun(program.id, id)))
				return fail(409, { action: 'cancelExact', field: 'mode', message: 'This evaluation has no exact run in progress to cancel.', values: {} });
		} catch (e) {
			if (e instanceof YearError) return fail(e.status, { action: 'cancelExact', field: e.field, message: e.message, values: {} });
			throw e;
		}
		redirect(303, `/programs/${program.id}/year/${id}#exact`);
	}
};
