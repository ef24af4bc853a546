import { fail, redirect } from '@sveltejs/kit';
import { readForm } from '$lib/server/read-form';
import type { Actions, PageServerLoad } from './$types';
import { requireProgramRole } from '$lib/server/auth/guard';
import { ParameterSet } from '$lib/server/db/models/index';
import { listUploads, storeUpload } from '$lib/server/uploads';
import { CheckError, checkRequestFromForm, listChecks, runModelCheck } from '$lib/server/model-checks';
import { checkUploadSize, FORM_UNITS, MAX_UPLOAD_BYTES, MAX_UPLOAD_ROWS, UploadError, UPLOAD_KIND_LABEL } from '$lib/uploads/index';
import { uploadOptionsFromForm, VEHICLE_FORM_DEFAULTS } from '$lib/uploads/upload-form';
import { DEFAULT_SURFACE_CONDUCTANCE_W_per_K } from '$lib/engine/replay';

export const load: PageServerLoad = async ({ locals, params }) => {
	const { program } = await requireProgramRole(locals, params.programId, 'read');
	const cells = await ParameterSet.findAll({
		where: { program_id: program.id, kind: 'cell' },
		attributes: ['id', 'name', 'slug', 'version'],
		order: [['slug', 'ASC'], ['version', 'DESC']]
	});
	return {
		uploads: await listUploads(program.id),
		checks: (await listChecks(program.id)).map((c) => ({
			id: c.id,
			title: c.title,
			author: c.author,
			createdAt: c.createdAt,
			cell: `${c.settings.cellName} v${c.cellVersion}`,
			rmse_V: c.stats.overall.rmse_V,
			maxAbs_V: c.stats.overall.maxAbs_V,
			energyError_pct: c.stats.overall.energyError_pct
		})),
		cellVersions: cells.map((c) => ({ id: c.id, label: `${c.name} · v${c.version}` })),
		kindLabel: UPLOAD_KIND_LABEL,
		formUnits: FORM_UNITS,
		vehicleDefaults: VEHICLE_FORM_DEFAULTS,
		defaultConductance: DEFAULT_SURFACE_CONDUCTANCE_W_per_K,
		limits: { bytes: MAX_UPLOAD_BYTES, rows: MAX_UPLOAD_ROWS }
	};
};

/** Form values sent back after a refusal (never the file). */
function echo(form: FormData): Record<string, string> {
	const out: Record<string, string> = {};
	for (const [k, v] of form.entries()) if (typeof v === 'string' && k !== 'file') out[k] = v.slice(0, 200);
	return out;
}

export const actions: Actions = {
	/** Parse, validate and store a CSV upload; a refused file stores nothing. */
	upload: async ({ locals, params, request }) => {
		const { program, user } = await requireProgramRole(locals, params.programId, 'edit');
		const form = await readForm(request, { files: true });
		const file = form.get('file');
		if (!(file instanceof File) || (file.size === 0 && !file.name))
			return fail(400, { action: 'upload', field: 'file', message: 'Choose a CSV file to upload.', issues: [], values: echo(form) });
		try {
			const options = uploadOptionsFromForm((n) => {
				const v = form.get(n);
				return typeof v === 'string' ? v : null;
			});
			checkUploadSize(file.size); // before reading it into memory
			const bytes = new Uint8Array(await file.arrayBuffer());
			const { row } = await storeUpload(program.id, user.id, { bytes, fileName: file.name }, form.get('name'), options);
			redirect(303, `/programs/${program.id}/checks/uploads/${row.id}`);
		} catch (e) {
			if (e instanceof UploadError) return fail(400, { action: 'upload', field: e.field, message: e.message, issues: e.issues.slice(0, 20), values: echo(form) });
			throw e;
		}
	},
	/** Replay a measured log through a cell parameter set version and store the check. */
	run: async ({ locals, params, request }) => {
		const { program, user } = await requireProgramRole(locals, params.programId, 'edit');
		const form = await readForm(request);
		try {
			const req = checkRequestFromForm(form);
			const check = await runModelCheck(program.id, user.id, req);
			redirect(303, `/programs/${program.id}/checks/${check.id}`);
		} catch (e) {
			if (e instanceof CheckError) return fail(e.status, { action: 'run', field: e.field, message: e.message, issues: [], values: echo(form) });
			throw e;
		}
	}
};
