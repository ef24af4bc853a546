import { error } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { parseId, requireProgramRole } from '$lib/server/auth/guard';
import { downloadName, getUpload, uploadCsv } from '$lib/server/uploads';

/** The stored columns as CSV in SI units (time_s, power_W, …): uploading it again gives the same data. */
export const GET: RequestHandler = async ({ locals, params }) => {
	const { program } = await requireProgramRole(locals, params.programId, 'read');
	const row = await getUpload(program.id, parseId(params.uploadId, 'upload'));
	if (!row) error(404, 'No such upload in this program.');
	return new Response(uploadCsv(row), {
		headers: {
			'content-type': 'text/csv; charset=utf-8',
			'content-disposition': `attachment; filename="${downloadName(row.name, row.id, '.csv')}"`
		}
	});
};
