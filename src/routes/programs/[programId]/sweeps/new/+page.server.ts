import { fail, redirect } from '@sveltejs/kit';
import { readForm } from '$lib/server/read-form';
import type { Actions, PageServerLoad } from './$types';
import { requireProgramRole } from '$lib/server/auth/guard';
import { latestInputs } from '$lib/server/inputs';
import { createSweep, SweepInputError } from '$lib/server/sweeps/service';
import { Sweep } from '$lib/server/db/models/index';
import { BUILDER_FIELDS, checkBuilder, fieldForPath, versionsFromForm, type BuilderValues } from './builder';
import { MAX_GRID_POINTS } from '$lib/sweep-builder';

/** Simulations per second from the most recent finished sweeps; a stated default before any ran. */
async function measuredThroughput(programId: number): Promise<{ simsPerSecond: number; measured: boolean }> {
	const done = await Sweep.findAll({ where: { program_id: programId, status: 'done' }, order: [['id', 'DESC']], limit: 5 });
	let sims = 0;
	let seconds = 0;
	for (const s of done) {
		if (!s.started_at || !s.finished_at) continue;
		sims += s.simulation_count;
		seconds += (new Date(s.finished_at).getTime() - new Date(s.started_at).getTime()) / 1000;
	}
	if (sims > 0 && seconds > 0) return { simsPerSecond: sims / seconds, measured: true };
	return { simsPerSecond: 50, measured: false };
}

export const load: PageServerLoad = async ({ locals, params }) => {
	const { program } = await requireProgramRole(locals, params.programId, 'edit');
	const rows = await latestInputs(program.id);
	// Newest version first; the form offers every version and picks the newest by default.
	const pick = (kind: string) =>
		rows
			.filter((r) => r.row.kind === kind)
			.map(({ row, all }) => ({ slug: row.slug, name: row.name, version: row.version, versions: all.map((v) => ({ version: v.version, name: v.name })) }));
	return { cells: pick('cell'), packs: pick('pack'), scenarios: pick('scenario'), throughput: await measuredThroughput(program.id), fields: BUILDER_FIELDS, maxGridPoints: MAX_GRID_POINTS };
};

export const actions: Actions = {
	default: async ({ locals, params, request }) => {
		const { program, user } = await requireProgramRole(locals, params.programId, 'edit');
		const form = await readForm(request);
		const values: BuilderValues = {
			name: String(form.get('name') ?? ''),
			scenarioId: String(form.get('scenarioId') ?? ''),
			scenarioVersion: String(form.get('scenarioVersion') ?? ''),
			cells: form.getAll('cells').map(String),
			packs: form.getAll('packs').map(String),
			cellVersions: versionsFromForm(form, 'cellVersion:'),
			packVersions: versionsFromForm(form, 'packVersion:'),
			ambients: String(form.get('ambients') ?? ''),
			soh: String(form.get('soh') ?? ''),
			socs: String(form.get('socs') ?? ''),
			leadTimes: String(form.get('leadTimes') ?? ''),
			setpoints: String(form.get('setpoints') ?? ''),
			heaterCaps: String(form.get('heaterCaps') ?? ''),
			budget: String(form.get('budget') ?? '')
		};
		// Every problem at once (the page checks the same while the user types).
		const { body, problems } = checkBuilder(values);
		if (!body) return fail(400, { values, field: problems[0].field, message: problems[0].message, problems });
		let sweepId: number;
		try {
			sweepId = (await createSweep(program.id, user.id, body)).id;
		} catch (e) {
			if (e instanceof SweepInputError) {
				const field = fieldForPath(e.field);
				return fail(e.status, { values, field, message: e.message, problems: [{ field: field ?? 'grid', message: e.message }] });
			}
			throw e;
		}
		redirect(303, `/programs/${program.id}/sweeps/${sweepId}`);
	}
};
