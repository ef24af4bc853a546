import { error } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { parseId, requireProgramRole } from '$lib/server/auth/guard';
import { getEvaluation, MAX_FLEET_SIZE } from '$lib/server/year';
import { yearCsv } from '$lib/year/export';
import { latestExactRun } from '$lib/server/year-exact';

/** The evaluation's figures as CSV (with the exact run's figures once it is done); `?fleet=N` overrides the stored fleet size. */
export const GET: RequestHandler = async ({ locals, params, url }) => {
	const { program } = await requireProgramRole(locals, params.programId, 'read');
	const id = parseId(params.evaluationId, 'evaluation');
	const ev = await getEvaluation(program.id, id);
	if (!ev || !ev.result || !ev.pattern) error(404, `No evaluation with id ${id} in this program.`);
	const raw = url.searchParams.get('fleet');
	let fleet = ev.settings.fleetSize;
	if (raw !== null) {
		if (!/^[1-9][0-9]{0,6}$/.test(raw) || Number(raw) > MAX_FLEET_SIZE) error(400, `fleet must be a whole number of vehicles from 1 to ${MAX_FLEET_SIZE}.`);
		fleet = Number(raw);
	}
	const exact = await latestExactRun(id);
	const csv = yearCsv(ev.result, { ...ev.pattern.data, currency: ev.pattern.data.currency }, fleet, exact?.status === 'done' ? exact.result : null);
	return new Response(csv, {
		headers: {
			'content-type': 'text/csv; charset=utf-8',
			'content-disposition': `attachment; filename="paretherm-year-${id}.csv"`
		}
	});
};
