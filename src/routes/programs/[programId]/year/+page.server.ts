import { fail, redirect } from '@sveltejs/kit';
import { readForm } from '$lib/server/read-form';
import type { Actions, PageServerLoad } from './$types';
import { requireProgramRole } from '$lib/server/auth/guard';
import { ParameterSet, Sweep } from '$lib/server/db/models/index';
import { createEvaluation, listClimates, listEvaluations, listPatterns, savePattern, storeClimate, sweepChoices, YearError } from '$lib/server/year';
import { checkUploadSize, UploadError } from '$lib/uploads/csv-reader';
import { parseJsonText, InputError } from '$lib/server/inputs';
import { readPatternDocument, PatternError } from '$lib/year/pattern';

export const load: PageServerLoad = async ({ locals, params }) => {
	const { program } = await requireProgramRole(locals, params.programId, 'read');
	const sweeps = await Sweep.findAll({ where: { program_id: program.id, status: 'done' }, order: [['id', 'DESC']], limit: 50 });
	const scenarios = await ParameterSet.findAll({ where: { program_id: program.id, kind: 'scenario' }, attributes: ['slug', 'name', 'version'], order: [['name', 'ASC'], ['version', 'DESC']] });
	const seen = new Set<string>();
	return {
		evaluations: await listEvaluations(program.id),
		climates: await listClimates(program.id),
		patterns: await listPatterns(program.id),
		sweeps: sweeps.map(sweepChoices),
		scenarios: scenarios.filter((s) => !seen.has(s.slug) && seen.add(s.slug)).map((s) => ({ slug: s.slug, name: s.name }))
	};
};

function echo(form: FormData): Record<string, string> {
	const out: Record<string, string> = {};
	for (const [k, v] of form.entries()) if (typeof v === 'string' && k !== 'csv') out[k] = v.slice(0, 4000);
	return out;
}

const str = (form: FormData, k: string) => {
	const v = form.get(k);
	return typeof v === 'string' ? v : null;
};

/** "0.3, 1, 2" → numbers; a word names the field and the position. */
function numberList(raw: string | null, field: string): number[] {
	const parts = (raw ?? '').split(/[\s,;]+/).filter(Boolean);
	return parts.map((p, i) => {
		const v = Number(p);
		if (!Number.isFinite(v)) throw new YearError(`${field}: item ${i + 1} (“${p.slice(0, 20)}”) is not a number.`, field);
		return v;
	});
}

function optionalNumber(raw: string | null, field: string): number | null {
	const t = (raw ?? '').trim();
	if (!t) return null;
	const v = Number(t);
	if (!Number.isFinite(v)) throw new YearError(`${field}: “${t.slice(0, 20)}” is not a number.`, field);
	return v;
}

/** Pattern from the form's fields (percentages and lists), or from pasted / uploaded JSON. */
function patternFromForm(form: FormData): { name: unknown; data: unknown } {
	const json = str(form, 'json')?.trim() ?? '';
	if (json) {
		try {
			const doc = readPatternDocument(parseJsonText(json));
			return { name: str(form, 'name')?.trim() || doc.name, data: doc.data };
		} catch (e) {
			if (e instanceof InputError) throw new YearError(e.message, 'json');
			if (e instanceof PatternError) throw new YearError(e.message, e.field);
			throw e;
		}
	}
	const socs = (str(form, 'arrivalSocs_pct') ?? '').split(/[,;]+/).map((s) => s.trim()).filter(Boolean).map((item, i) => {
		const [soc, weight = '1'] = item.split(':').map((x) => x.trim());
		const s = Number(soc);
		const w = Number(weight);
		if (!Number.isFinite(s) || !Number.isFinite(w)) throw new YearError(`arrivalSocs: item ${i + 1} (“${item.slice(0, 20)}”) should read “percent:weight”, e.g. 25:2.`, 'arrivalSocs');
		return { soc: s / 100, weight: w };
	});
	const num = (k: string) => {
		const t = (str(form, k) ?? '').trim();
		if (t === '') return undefined;
		const v = Number(t);
		return Number.isFinite(v) ? v : (t as unknown as number);
	};
	const target = num('targetSoc_pct');
	return {
		name: str(form, 'name'),
		data: {
			eventsPerWeek: num('eventsPerWeek'),
			monthWeights: numberList(str(form, 'monthWeights'), 'monthWeights'),
			hourWeights: numberList(str(form, 'hourWeights'), 'hourWeights'),
			arrivalSocs: socs,
			targetSoc: typeof target === 'number' ? target / 100 : target,
			scenarioSlug: str(form, 'scenarioSlug') ?? '',
			energyPrice_per_kWh: optionalNumber(str(form, 'energyPrice_per_kWh'), 'energyPrice_per_kWh'),
			hourValue: optionalNumber(str(form, 'hourValue'), 'hourValue'),
			currency: str(form, 'currency') ?? 'EUR',
			sampling: str(form, 'sampling') ?? 'even',
			seed: num('seed') ?? 1
		}
	};
}

export const actions: Actions = {
	/**
	 * An hourly ambient year. The CSV text arrives as a form field (the page reads the chosen file
	 * into it; it can also be pasted), so the form carries no file part. A refused file stores nothing.
	 */
	uploadClimate: async ({ locals, params, request }) => {
		const { program, user } = await requireProgramRole(locals, params.programId, 'edit');
		const form = await readForm(request);
		const csv = str(form, 'csv') ?? '';
		if (!csv.trim())
			return fail(400, { action: 'uploadClimate', field: 'csv', message: 'Choose the CSV file of the hourly ambient year (or paste its text).', issues: [], values: echo(form) });
		try {
			const bytes = new TextEncoder().encode(csv);
			checkUploadSize(bytes.length);
			const slug = str(form, 'slug')?.trim() || null;
			await storeClimate(program.id, user.id, { bytes, fileName: str(form, 'fileName')?.trim() || 'climate.csv' }, form.get('name'), { slug });
		} catch (e) {
			if (e instanceof UploadError) return fail(400, { action: 'uploadClimate', field: e.field === 'file' ? 'csv' : e.field, message: e.message, issues: e.issues.slice(0, 20), values: echo(form) });
			if (e instanceof YearError) return fail(e.status === 404 ? 404 : 400, { action: 'uploadClimate', field: e.field, message: e.message, issues: [], values: echo(form) });
			throw e;
		}
		redirect(303, `/programs/${program.id}/year#climates`);
	},
	/** A charging pattern from the form or from JSON; nothing stored when refused. */
	savePattern: async ({ locals, params, request }) => {
		const { program, user } = await requireProgramRole(locals, params.programId, 'edit');
		const form = await readForm(request);
		try {
			const { name, data } = patternFromForm(form);
			await savePattern(program.id, user.id, name, data, str(form, 'slug')?.trim() || null);
		} catch (e) {
			if (e instanceof YearError) return fail(e.status === 404 ? 404 : 400, { action: 'savePattern', field: e.field, message: e.message, issues: [], values: echo(form) });
			throw e;
		}
		redirect(303, `/programs/${program.id}/year#patterns`);
	},
	/** Evaluate a sweep's calibration table over a climate and a pattern (lookup mode). */
	evaluate: async ({ locals, params, request }) => {
		// Engineers, architects and managers may evaluate (the roles that take part in decisions).
		const { program, user } = await requireProgramRole(locals, params.programId, 'comment');
		const form = await readForm(request);
		let id: number;
		try {
			id = (await createEvaluation(program.id, user.id, (k) => str(form, k))).id;
		} catch (e) {
			if (e instanceof YearError) return fail(400, { action: 'evaluate', field: e.field, message: e.message, issues: [], values: echo(form) });
			throw e;
		}
		redirect(303, `/programs/${program.id}/year/${id}`);
	}
};
