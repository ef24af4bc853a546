import { fail, redirect } from '@sveltejs/kit';
import { readForm } from '$lib/server/read-form';
import type { Actions, PageServerLoad } from './$types';
import { requireProgramRole } from '$lib/server/auth/guard';
import { createInput, InputError, KIND_LABEL, latestInputs, parseJsonText, readExchange, isKind, getInput } from '$lib/server/inputs';
import { SCENARIO_FIELDS, scenarioFromForm } from '$lib/server/scenario-form';

export const load: PageServerLoad = async ({ locals, params }) => {
	const { program } = await requireProgramRole(locals, params.programId, 'read');
	const rows = await latestInputs(program.id);
	const list = rows.map(({ row, versions }) => ({
		id: row.id,
		kind: row.kind,
		name: row.name,
		version: row.version,
		versions,
		createdAt: row.created_at.toISOString()
	}));
	return { inputs: list, kindLabel: KIND_LABEL, scenarioFields: SCENARIO_FIELDS };
};

export const actions: Actions = {
	/** Import a parameter file in our exchange format (uploaded or pasted). */
	import: async ({ locals, params, request }) => {
		const { program, user } = await requireProgramRole(locals, params.programId, 'edit');
		const form = await readForm(request, { files: true });
		const file = form.get('file');
		let text = String(form.get('json') ?? '');
		if (file instanceof File && file.size > 0) {
			if (file.size > 512 * 1024) return fail(400, { action: 'import', field: 'file', message: 'The file is larger than 512 kB; is this the right file?' });
			text = await file.text();
		}
		if (!text.trim()) return fail(400, { action: 'import', field: 'file', message: 'Choose a JSON file or paste its content.' });
		try {
			const doc = readExchange(parseJsonText(text));
			const name = String(form.get('name') ?? '').trim() || doc.name;
			const row = await createInput(program.id, doc.kind, name, doc.data, user.id);
			redirect(303, `/programs/${program.id}/inputs/${row.id}`);
		} catch (e) {
			if (e instanceof InputError) return fail(400, { action: 'import', field: e.field, message: e.message });
			throw e;
		}
	},
	/** A new scenario from the form, starting from an existing one for the fields the form does not show. */
	createScenario: async ({ locals, params, request }) => {
		const { program, user } = await requireProgramRole(locals, params.programId, 'edit');
		const form = await readForm(request);
		const name = String(form.get('name') ?? '');
		const fromRaw = String(form.get('from') ?? '');
		let base: Record<string, unknown> = {};
		if (/^\d{1,10}$/.test(fromRaw)) {
			const from = await getInput(program.id, Number(fromRaw));
			if (from && from.kind === 'scenario') base = JSON.parse(from.data);
		}
		let values: Record<string, string> = {};
		try {
			const parsed = scenarioFromForm(form, base);
			values = parsed.values;
			const row = await createInput(program.id, 'scenario', name, { ...parsed.scenario, name: name.trim() }, user.id);
			redirect(303, `/programs/${program.id}/inputs/${row.id}`);
		} catch (e) {
			if (e instanceof InputError)
				return fail(400, { action: 'createScenario', field: e.field, message: e.message, values: { ...values, name } });
			throw e;
		}
	},
	/** Copy an existing input under a new name (a new slug, version 1). */
	duplicate: async ({ locals, params, request }) => {
		const { program, user } = await requireProgramRole(locals, params.programId, 'edit');
		const form = await readForm(request);
		const raw = String(form.get('inputId') ?? '');
		if (!/^\d{1,10}$/.test(raw)) return fail(400, { action: 'duplicate', field: 'inputId', message: 'Choose the input to duplicate.' });
		const src = await getInput(program.id, Number(raw));
		if (!src || !isKind(src.kind)) return fail(404, { action: 'duplicate', field: null, message: 'That input does not exist in this program; reload the page.' });
		try {
			const row = await createInput(program.id, src.kind, `${src.name} (copy)`, JSON.parse(src.data), user.id);
			redirect(303, `/programs/${program.id}/inputs/${row.id}`);
		} catch (e) {
			if (e instanceof InputError) return fail(400, { action: 'duplicate', field: e.field, message: e.message });
			throw e;
		}
	}
};
