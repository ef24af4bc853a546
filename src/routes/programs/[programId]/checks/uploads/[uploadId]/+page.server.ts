import { error, fail, redirect } from '@sveltejs/kit';
import { readForm } from '$lib/server/read-form';
import type { Actions, PageServerLoad } from './$types';
import { parseId, requireProgramRole } from '$lib/server/auth/guard';
import { ModelCheck, User } from '$lib/server/db/models/index';
import { InputError, latestInputs } from '$lib/server/inputs';
import { getUpload, summary, uploadColumns, useDriveProfile, useOcpTable } from '$lib/server/uploads';

async function uploadOf(programId: number, raw: string) {
	const row = await getUpload(programId, parseId(raw, 'upload'));
	if (!row) error(404, 'No such upload in this program.');
	return row;
}

export const load: PageServerLoad = async ({ locals, params }) => {
	const { program } = await requireProgramRole(locals, params.programId, 'read');
	const row = await uploadOf(program.id, params.uploadId);
	const uploader = await User.findByPk(row.created_by);
	const cols = uploadColumns(row);
	// Long tables are thinned for the page (every k-th row); the export has every row.
	const first = Object.values(cols)[0] ?? [];
	const stride = Math.max(1, Math.ceil(first.length / 4000));
	const preview: Record<string, number[]> = {};
	for (const [name, c] of Object.entries(cols)) preview[name] = stride === 1 ? c : c.filter((_, i) => i % stride === 0 || i === c.length - 1);
	const inputs = row.kind === 'drive-profile' ? await latestInputs(program.id, 'scenario') : row.kind === 'ocp-table' ? await latestInputs(program.id, 'cell') : [];
	const checks = await ModelCheck.findAll({ where: { program_id: program.id, upload_id: row.id }, attributes: ['id', 'title'], order: [['id', 'DESC']] });
	return {
		upload: summary(row, uploader?.name ?? 'Former member'),
		preview,
		previewNote: stride > 1 ? `Showing every ${stride}th of ${first.length.toLocaleString('en-GB')} rows; the CSV export has all of them.` : null,
		targets: inputs.map(({ row: r }) => ({ id: r.id, label: `${r.name} · v${r.version}` })),
		checks: checks.map((c) => ({ id: c.id, title: c.title }))
	};
};

export const actions: Actions = {
	/** A new scenario version whose drive follows this profile. */
	useInScenario: async ({ locals, params, request }) => {
		const { program, user } = await requireProgramRole(locals, params.programId, 'edit');
		const form = await readForm(request);
		const row = await uploadOf(program.id, params.uploadId);
		try {
			const next = await useDriveProfile(row, program.id, form.get('inputId'), user.id);
			redirect(303, `/programs/${program.id}/inputs/${next.id}`);
		} catch (e) {
			if (e instanceof InputError) return fail(400, { action: 'useInScenario', field: e.field, message: e.message });
			throw e;
		}
	},
	/** A new cell parameter set version whose chosen electrode uses this OCP table. */
	useInCell: async ({ locals, params, request }) => {
		const { program, user } = await requireProgramRole(locals, params.programId, 'edit');
		const form = await readForm(request);
		const row = await uploadOf(program.id, params.uploadId);
		try {
			const next = await useOcpTable(row, program.id, form.get('inputId'), form.get('electrode'), user.id);
			redirect(303, `/programs/${program.id}/inputs/${next.id}`);
		} catch (e) {
			if (e instanceof InputError) return fail(400, { action: 'useInCell', field: e.field, message: e.message });
			throw e;
		}
	}
};
