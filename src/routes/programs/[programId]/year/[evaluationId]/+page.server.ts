import { error } from '@sveltejs/kit';
import type { PageServerLoad } from './$types';
import { parseId, requireProgramRole } from '$lib/server/auth/guard';
import { getEvaluation } from '$lib/server/year';

export const load: PageServerLoad = async ({ locals, params }) => {
	const { program } = await requireProgramRole(locals, params.programId, 'read');
	const id = parseId(params.evaluationId, 'evaluation');
	const evaluation = await getEvaluation(program.id, id);
	if (!evaluation) error(404, `No evaluation with id ${id} in this program.`);
	return { evaluation };
};
