import type { LayoutServerLoad } from './$types';
import { requireProgramRole } from '$lib/server/auth/guard';
import { roleCan } from '$lib/server/auth/roles';

export const load: LayoutServerLoad = async ({ locals, params }) => {
	const { program, role } = await requireProgramRole(locals, params.programId, 'read');
	const can = (need: 'edit' | 'decide' | 'comment') => role === 'admin' || roleCan(role, need);
	return {
		program: { id: program.id, name: program.name, description: program.description },
		role,
		can: { edit: can('edit'), decide: can('decide'), comment: can('comment') }
	};
};
