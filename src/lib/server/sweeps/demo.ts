/**
 * The demo's finished sweep, so a newcomer sees fronts, knees and a calibration table on first
 * sign-in. Computed in-process at seed time (runSweepInline: the same jobs and persistence as the
 * queue, no Redis needed). Idempotent: a finished demo sweep is left as it is; an unfinished one
 * (seed interrupted) is completed.
 */
import { Sweep } from '../db/models/index';
import { demoCells, demoPack, celsiusToKelvin } from '../../engine/index';
import { createSweep } from './service';
import { runSweepInline } from './inline';

export const DEMO_SWEEP_NAME = 'Cold-morning depot stop: pre-conditioning lead time × coolant set-point (demo)';

/**
 * 2 cells × 2 ambients × 2 states of health × 5 lead times × 5 set-points = 200 grid points + 8
 * baselines on the seeded cold-morning scenario (several seconds on two cores). `scenarioId` must name a
 * scenario parameter set of the program (the seed's 'cold-morning-depot').
 */
export async function seedDemoSweep(programId: number, userId: string | null, scenarioId = 'cold-morning-depot'): Promise<number> {
	const existing = await Sweep.findOne({ where: { program_id: programId, name: DEMO_SWEEP_NAME }, order: [['id', 'ASC']] });
	if (existing && existing.status === 'done') return existing.id;
	const sweep =
		existing && (existing.status === 'queued' || existing.status === 'running')
			? existing
			: await createSweep(programId, userId, {
					name: DEMO_SWEEP_NAME,
					scenarioId,
					definition: {
						cellIds: demoCells.map((c) => c.id),
						packIds: [demoPack.id],
						ambients_K: [-20, -10].map(celsiusToKelvin),
						statesOfHealth: [1, 0.85],
						arrivalSocs: [0.2],
						leadTimes_s: [0, 600, 1200, 1800, 2700],
						setpoints_K: [15, 20, 25, 30, 35].map(celsiusToKelvin)
					},
					fastestWithinEnergy_Wh: 1500
				});
	const report = await runSweepInline(sweep.id);
	if (report.status !== 'done') throw new Error(`The demo sweep ended ${report.status}; see the log above.`);
	return sweep.id;
}
