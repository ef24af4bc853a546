import { fail } from '@sveltejs/kit';
import { readForm } from '$lib/server/read-form';
import type { Actions, PageServerLoad } from './$types';
import { requireProgramRole } from '$lib/server/auth/guard';
import { getProgramSweep, sweepStatus } from '$lib/server/sweeps/results';
import { cancelSweep, SweepInputError } from '$lib/server/sweeps/service';
import { apiError } from '$lib/server/page-errors';
import { doneMessage, redirectDone } from '$lib/server/after-post';
import { ParameterSet } from '$lib/server/db/models/index';

/** For each input the sweep ran (by parameter-set id): the newest version of the same input now. */
async function newestVersions(programId: number, status: ReturnType<typeof sweepStatus>) {
	const refs = [
		{ kind: 'scenario', ...status.inputs.baseScenario },
		...status.inputs.cells.map((c) => ({ kind: 'cell', ...c })),
		...status.inputs.packs.map((p) => ({ kind: 'pack', ...p }))
	];
	const out: Record<number, { id: number; version: number; name: string }> = {};
	for (const r of refs) {
		const row = await ParameterSet.findOne({ where: { program_id: programId, kind: r.kind, slug: r.slug }, order: [['version', 'DESC']], attributes: ['id', 'version', 'name'] });
		if (row) out[r.parameterSetId] = { id: row.id, version: row.version, name: row.name };
	}
	return out;
}

export const load: PageServerLoad = async ({ locals, params, url }) => {
	const { program } = await requireProgramRole(locals, params.programId, 'read');
	const sweep = await apiError(() => getProgramSweep(program.id, params.sweepId));
	const status = sweepStatus(sweep);
	return { sweep: status, newest: await newestVersions(program.id, status), done: doneMessage(url, { cancelled: 'Sweep cancelled. Results already stored are kept.' }) };
};

export const actions: Actions = {
	/** Cancels a queued or running sweep; the form asks first and sends confirm=yes. */
	cancel: async ({ locals, params, request, url }) => {
		const { program } = await requireProgramRole(locals, params.programId, 'edit');
		try {
			const sweep = await getProgramSweep(program.id, params.sweepId);
			if (sweep.status !== 'queued' && sweep.status !== 'running') return fail(409, { message: `This sweep has already ended (${sweep.status}); nothing to cancel.` });
			const form = await readForm(request);
			if (form.get('confirm') !== 'yes') return fail(400, { field: 'confirm', message: 'Confirm that you want to cancel this sweep (“Yes, cancel the sweep”).' });
			if (!(await cancelSweep(sweep.id))) return fail(409, { message: 'This sweep ended before it could be cancelled; nothing to cancel.' });
		} catch (e) {
			if (e instanceof SweepInputError) return fail(e.status, { message: e.message });
			throw e;
		}
		redirectDone(url, 'cancelled');
	}
};
