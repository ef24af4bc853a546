/**
 * Admission and ordering of sweep work.
 *
 * Caps: a new sweep is refused (429, saying how much is queued and the cap) when it would take the
 * simulations still to compute in its author's queued and running sweeps past
 * PARETHERM_MAX_QUEUED_PER_USER, or its program's past PARETHERM_MAX_QUEUED_PER_PROGRAM. The check
 * and the insert run in the service's one write queue, so two requests cannot both slip under.
 *
 * Fair order between programs: chunk jobs carry a BullMQ priority equal to their place in their
 * program's own backlog (1 + chunks of the program still to compute ahead of them), so workers
 * take the first chunk of every program, then the second of every program, and so on: a program
 * with one small sweep is not stuck behind another program's thousands of chunks. Within the same
 * priority BullMQ keeps insertion order.
 */
import { Op, fn, literal } from 'sequelize';
import { Sweep } from '../db/models/index';
import { SweepInputError } from './request';
import { config } from '../config';

export interface QueueCaps {
	perUser: number;
	perProgram: number;
}

export function queueCaps(): QueueCaps {
	return { ...config().queueCaps };
}

const WAITING = ['queued', 'running'];

/** Simulations still to compute in queued and running sweeps matching `where`. */
export async function queuedSimulations(where: { program_id?: number; created_by?: string }): Promise<number> {
	const row = (await Sweep.findOne({
		where: { ...where, status: { [Op.in]: WAITING } },
		attributes: [[fn('COALESCE', fn('SUM', literal('simulation_count - simulations_done')), 0), 'remaining']],
		raw: true
	})) as unknown as { remaining: number | string } | null;
	return Number(row?.remaining ?? 0);
}

const n = (v: number) => v.toLocaleString('en-GB');

/**
 * Throws SweepInputError(429) when `adding` more simulations would pass a cap. Call inside the
 * service's write queue, right before the sweep is stored.
 */
export async function assertQueueRoom(programId: number, userId: string | null, adding: number, caps = queueCaps()): Promise<void> {
	const advice = 'Wait for a queued sweep to finish, cancel one you no longer need, or make this sweep smaller.';
	if (userId) {
		const mine = await queuedSimulations({ created_by: userId });
		if (mine + adding > caps.perUser)
			throw new SweepInputError(
				`This sweep adds ${n(adding)} simulations to the ${n(mine)} your sweeps still have queued or running; the limit per person is ${n(caps.perUser)}. ${advice}`,
				'definition',
				429
			);
	}
	const program = await queuedSimulations({ program_id: programId });
	if (program + adding > caps.perProgram)
		throw new SweepInputError(
			`This sweep adds ${n(adding)} simulations to the ${n(program)} this program's sweeps still have queued or running; the limit per program is ${n(caps.perProgram)}. ${advice}`,
			'definition',
			429
		);
}

/** BullMQ's highest priority number (lowest priority). */
export const MAX_JOB_PRIORITY = 2_097_152;

/** Chunks still to compute in the program's other queued and running sweeps created before this one. */
export async function programBacklogChunks(programId: number, sweepId: number): Promise<number> {
	const row = (await Sweep.findOne({
		where: { program_id: programId, id: { [Op.lt]: sweepId }, status: { [Op.in]: WAITING } },
		attributes: [[fn('COALESCE', fn('SUM', literal('chunk_count - chunks_done')), 0), 'remaining']],
		raw: true
	})) as unknown as { remaining: number | string } | null;
	return Number(row?.remaining ?? 0);
}

/** Priority of chunk `chunkIndex` behind `backlog` chunks of the same program (1 = first). */
export function chunkPriority(backlog: number, chunkIndex: number): number {
	return Math.min(MAX_JOB_PRIORITY, backlog + chunkIndex + 1);
}
