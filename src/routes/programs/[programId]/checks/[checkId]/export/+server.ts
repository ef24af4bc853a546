import { error, json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { parseId, requireProgramRole } from '$lib/server/auth/guard';
import { ParameterSet, Upload } from '$lib/server/db/models/index';
import { checkCsv, getCheck } from '$lib/server/model-checks';
import { downloadName } from '$lib/server/uploads';

const CHECK_FORMAT = 'paretherm-model-check/1';

/**
 * A model check as CSV (default: every sample; the measured columns first under their upload names,
 * so the file uploads again as a measured log) or as JSON (?format=json: inputs by id and version,
 * settings and statistics).
 */
export const GET: RequestHandler = async ({ locals, params, url }) => {
	const { program } = await requireProgramRole(locals, params.programId, 'read');
	const row = await getCheck(program.id, parseId(params.checkId, 'model check'));
	if (!row) error(404, 'No such model check in this program.');
	const format = url.searchParams.get('format') ?? 'csv';
	if (format !== 'csv' && format !== 'json') error(400, `Unknown format “${format.slice(0, 20)}”; use csv or json.`);
	if (format === 'json') {
		const upload = await Upload.findByPk(row.upload_id, { attributes: ['id', 'name', 'original_name', 'sha256'] });
		const cell = await ParameterSet.findByPk(row.cell_input_id, { attributes: ['id', 'name', 'slug', 'version'] });
		return json(
			{
				format: CHECK_FORMAT,
				id: row.id,
				title: row.title,
				createdAt: row.created_at.toISOString(),
				upload: upload && { id: upload.id, name: upload.name, originalName: upload.original_name, sha256: upload.sha256 },
				cell: cell && { inputId: cell.id, name: cell.name, slug: cell.slug, version: cell.version },
				settings: JSON.parse(row.settings),
				stats: JSON.parse(row.stats)
			},
			{ headers: { 'content-disposition': `attachment; filename="${downloadName(`check-${row.title}`, row.id, '.json')}"` } }
		);
	}
	return new Response(checkCsv(row), {
		headers: {
			'content-type': 'text/csv; charset=utf-8',
			'content-disposition': `attachment; filename="${downloadName(`check-${row.title}`, row.id, '.csv')}"`
		}
	});
};
