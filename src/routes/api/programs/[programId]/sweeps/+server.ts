/**
 * GET  /api/programs/:programId/sweeps  → { sweeps: SweepStatusView[] } (newest first; read access)
 * POST /api/programs/:programId/sweeps  → 201 { id, status, url } | 400 { error, field }
 *      body: see src/lib/server/sweeps/request.ts (scenarioId, definition, …); needs the edit role.
 *      413 over the JSON body limit (PARETHERM_JSON_BODY_LIMIT), 429 over a queued-simulation cap.
 */
import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { requireProgramRole } from '$lib/server/auth/guard';
import { apiHandler } from '$lib/server/sweeps/api';
import { readJsonBody } from '$lib/server/json-body';
import { createSweep } from '$lib/server/sweeps/service';
import { listSweeps } from '$lib/server/sweeps/results';

export const GET: RequestHandler = ({ locals, params }) =>
	apiHandler(async () => {
		const { program } = await requireProgramRole(locals, params.programId, 'read');
		return json({ sweeps: await listSweeps(program.id) });
	});

export const POST: RequestHandler = ({ locals, params, request }) =>
	apiHandler(async () => {
		const { program, user } = await requireProgramRole(locals, params.programId, 'edit');
		const body = await readJsonBody(request, { expected: 'the sweep as a JSON object with scenarioId and definition' });
		const sweep = await createSweep(program.id, user.id, body);
		return json(
			{ id: sweep.id, status: sweep.status, url: `/api/programs/${program.id}/sweeps/${sweep.id}` },
			{ status: 201, headers: { location: `/api/programs/${program.id}/sweeps/${sweep.id}` } }
		);
	});
