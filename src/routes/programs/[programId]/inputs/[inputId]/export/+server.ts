import { error, json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { parseId, requireProgramRole } from '$lib/server/auth/guard';
import { getInput, toExchange } from '$lib/server/inputs';

/** Downloads one input version in the Paretherm parameter format. */
export const GET: RequestHandler = async ({ locals, params }) => {
	const { program } = await requireProgramRole(locals, params.programId, 'read');
	const row = await getInput(program.id, parseId(params.inputId, 'input'));
	if (!row) error(404, 'No such input in this program.');
	return json(toExchange(row), {
		headers: { 'content-disposition': `attachment; filename="${row.kind}-${row.slug}-v${row.version}.json"` }
	});
};
