import type { PageServerLoad } from './$types';
import { requireProgramRole } from '$lib/server/auth/guard';
import { compareVariants, MAX_VARIANTS, MIN_VARIANTS, variantOptions } from '$lib/server/sweeps/compare';
import { SweepInputError } from '$lib/server/sweeps/request';

export const load: PageServerLoad = async ({ locals, params, url }) => {
	const { program } = await requireProgramRole(locals, params.programId, 'read');
	const options = await variantOptions(program.id);
	const picked = url.searchParams.getAll('v').map((v) => v.slice(0, 300));
	let comparison: Awaited<ReturnType<typeof compareVariants>> | null = null;
	let message: string | null = null;
	if (picked.length > 0) {
		try {
			comparison = await compareVariants(program.id, picked, options);
		} catch (e) {
			if (!(e instanceof SweepInputError)) throw e;
			message = e.message;
		}
	}
	return { options, picked, comparison, message, limits: { min: MIN_VARIANTS, max: MAX_VARIANTS } };
};
