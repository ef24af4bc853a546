import { error } from '@sveltejs/kit';
import type { PageServerLoad } from './$types';
import { requireProgramRole } from '$lib/server/auth/guard';
import { listSweeps } from '$lib/server/sweeps/results';

/** Sweeps per page; older ones are a link away (?before=<id>). */
const PAGE = 50;

export const load: PageServerLoad = async ({ locals, params, url }) => {
	const { program } = await requireProgramRole(locals, params.programId, 'read');
	const raw = url.searchParams.get('before');
	if (raw !== null && !/^[1-9][0-9]{0,9}$/.test(raw)) error(400, `“before” must be a sweep number (got “${raw.slice(0, 20)}”).`);
	const before = raw === null ? undefined : Number(raw);
	const rows = await listSweeps(program.id, PAGE + 1, before);
	const sweeps = rows.slice(0, PAGE);
	return { sweeps, before: before ?? null, olderThan: rows.length > PAGE ? sweeps[sweeps.length - 1].id : null };
};
