import { error, fail } from '@sveltejs/kit';
import { readForm } from '$lib/server/read-form';
import type { Actions, PageServerLoad } from './$types';
import { parseId, requireProgramRole } from '$lib/server/auth/guard';
import { ParameterSet, Upload, User } from '$lib/server/db/models/index';
import { StrategyError } from '$lib/server/strategies';
import { addCheckComment, chartIndices, checkSeries, checkSummary, checkThread, getCheck, MAX_COMMENT_CHARS, strategiesCiting } from '$lib/server/model-checks';
import { STATE_LABEL } from '$lib/server/strategies';
import { doneMessage, redirectDone } from '$lib/server/after-post';

async function checkOf(programId: number, raw: string) {
	const row = await getCheck(programId, parseId(raw, 'model check'));
	if (!row) error(404, 'No such model check in this program.');
	return row;
}

export const load: PageServerLoad = async ({ locals, params, url }) => {
	const { program } = await requireProgramRole(locals, params.programId, 'read');
	const row = await checkOf(program.id, params.checkId);
	const author = await User.findByPk(row.created_by);
	const s = checkSeries(row);
	// Long logs are thinned for the page, keeping each bucket's worst error; the CSV export has every sample.
	const pick = chartIndices(s.voltage_V, s.simulated_voltage_V, 4000);
	const at = (c: number[] | undefined) => (c ? pick.map((i) => c[i]) : null);
	const upload = await Upload.findOne({ where: { id: row.upload_id, program_id: program.id }, attributes: ['id', 'name', 'sha256', 'row_count'] });
	const cell = await ParameterSet.findOne({ where: { id: row.cell_input_id, program_id: program.id }, attributes: ['id', 'name', 'version'] });
	return {
		check: checkSummary(row, author?.name ?? 'Former member'),
		chart: {
			t_s: at(s.time_s)!,
			current_A: at(s.current_A)!,
			measuredVoltage_V: at(s.voltage_V)!,
			simulatedVoltage_V: at(s.simulated_voltage_V)!,
			measuredTemp_K: at(s.temp_K),
			// With a prescribed (measured) temperature the simulated one is the same curve: draw it once.
			simulatedTemp_K: JSON.parse(row.settings).thermal === 'simulated' ? at(s.simulated_temp_K) : null,
			coolant_K: at(s.coolant_K),
			ambient_K: at(s.ambient_K)
		},
		thinned: pick.length < s.time_s.length ? { shown: pick.length, of: s.time_s.length } : null,
		upload: upload ? { id: upload.id, name: upload.name, sha256: upload.sha256, rows: upload.row_count } : null,
		cell: cell ? { id: cell.id, name: cell.name, version: cell.version } : null,
		thread: await checkThread(row.id),
		citedBy: await strategiesCiting(program.id, row.id),
		stateLabel: STATE_LABEL,
		maxComment: MAX_COMMENT_CHARS,
		done: doneMessage(url, { commented: 'Comment posted.' })
	};
};

export const actions: Actions = {
	comment: async ({ locals, params, request, url }) => {
		const { program, user } = await requireProgramRole(locals, params.programId, 'comment');
		const form = await readForm(request);
		const row = await checkOf(program.id, params.checkId);
		try {
			await addCheckComment(row, user.id, form.get('body'));
		} catch (e) {
			if (e instanceof StrategyError) return fail(e.status, { field: 'comment', message: e.message, body: String(form.get('body') ?? '').slice(0, MAX_COMMENT_CHARS) });
			throw e;
		}
		redirectDone(url, 'commented');
	}
};
