import type { PageServerLoad } from './$types';
import { requireProgramRole } from '$lib/server/auth/guard';
import { ParameterSet } from '$lib/server/db/models/index';

export const load: PageServerLoad = async ({ locals, params }) => {
	const { program } = await requireProgramRole(locals, params.programId, 'read');
	const inputs = await ParameterSet.count({ where: { program_id: program.id } });
	return { inputCount: inputs };
};
