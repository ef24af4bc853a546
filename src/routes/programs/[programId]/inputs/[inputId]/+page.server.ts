import { error, fail, redirect } from '@sveltejs/kit';
import { readForm } from '$lib/server/read-form';
import type { Actions, PageServerLoad } from './$types';
import { parseId, requireProgramRole } from '$lib/server/auth/guard';
import { getInput, InputError, KIND_LABEL, parseJsonText, saveVersion, versionsOf } from '$lib/server/inputs';
import { SCENARIO_FIELDS, scenarioFromForm, scenarioToForm } from '$lib/server/scenario-form';
import { describeInput } from '$lib/server/input-figures';

export const load: PageServerLoad = async ({ locals, params }) => {
	const { program } = await requireProgramRole(locals, params.programId, 'read');
	const row = await getInput(program.id, parseId(params.inputId, 'input'));
	if (!row) error(404, 'No such input in this program.');
	const data = JSON.parse(row.data);
	const versions = await versionsOf(row);
	return {
		input: { id: row.id, kind: row.kind, name: row.name, slug: row.slug, version: row.version, createdAt: row.created_at.toISOString() },
		kindLabel: KIND_LABEL[row.kind],
		json: JSON.stringify(data, null, 2),
		figures: describeInput(row.kind, data),
		scenarioForm: row.kind === 'scenario' ? scenarioToForm(data) : null,
		scenarioFields: SCENARIO_FIELDS,
		versions: versions.map((v) => ({ id: v.id, version: v.version, name: v.name, createdAt: v.created_at.toISOString() })),
		latestId: versions[0]?.id ?? row.id
	};
};

export const actions: Actions = {
	/** Saves the edit as a new version and opens it. */
	save: async ({ locals, params, request }) => {
		const { program, user } = await requireProgramRole(locals, params.programId, 'edit');
		const row = await getInput(program.id, parseId(params.inputId, 'input'));
		if (!row) return fail(404, { field: null, message: 'This input no longer exists; reload the page.' });
		const form = await readForm(request);
		const name = String(form.get('name') ?? row.name);
		try {
			let data: unknown;
			if (form.get('mode') === 'scenario-form' && row.kind === 'scenario') {
				data = { ...scenarioFromForm(form, JSON.parse(row.data)).scenario, name: name.trim() };
			} else {
				data = parseJsonText(String(form.get('json') ?? ''));
			}
			const next = await saveVersion(row, name, data, user.id);
			redirect(303, `/programs/${program.id}/inputs/${next.id}`);
		} catch (e) {
			if (e instanceof InputError) return fail(400, { field: e.field, message: e.message, json: String(form.get('json') ?? '') });
			throw e;
		}
	}
};
