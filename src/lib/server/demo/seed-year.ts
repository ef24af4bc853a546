/**
 * Year-of-use demo: two invented climates (no real place: a cold continental year and a mild
 * coastal year, each from the stated seasonal + daily sinusoid of src/lib/year/climate.ts), a
 * charging pattern for the delivery vans, a small sweep over the climates' ambient range and one
 * evaluation. All invented. Idempotent.
 */
import { Sweep } from '../db/models/index';
import { ChargingPatternRow, Climate, YearEvaluation } from '../db/models/index';
import { climateCsv_C, inventedClimate_C, type InventedClimate } from '../../year/climate';
import { demoCells, demoPack, celsiusToKelvin } from '../../engine/index';
import { createSweep } from '../sweeps/service';
import { runSweepInline } from '../sweeps/inline';
import { createEvaluation, savePattern, storeClimate } from '../year';
import type { ChargingPatternInput } from '../../year/pattern';

export const DEMO_CLIMATES: { name: string; file: string; formula: InventedClimate }[] = [
	{
		name: 'Invented cold continental year',
		file: 'invented-cold-continental.csv',
		// Mean 2 °C, ±17 K over the seasons (coldest 20 January), ±5 K over the day (coldest 05:00).
		formula: { mean_C: 2, seasonalAmplitude_K: 17, dailyAmplitude_K: 5, coldestDay: 20, coldestHour: 5 }
	},
	{
		name: 'Invented mild coastal year',
		file: 'invented-mild-coastal.csv',
		// Mean 11 °C, ±6 K over the seasons (coldest 5 February), ±3 K over the day (coldest 05:00).
		formula: { mean_C: 11, seasonalAmplitude_K: 6, dailyAmplitude_K: 3, coldestDay: 36, coldestHour: 5 }
	}
];

/** Delivery vans: about 6 fast charges a week, mostly late morning and late afternoon, more in winter. */
export const DEMO_PATTERN: { name: string; data: ChargingPatternInput } = {
	name: 'Delivery vans, depot fast charges (invented)',
	data: {
		eventsPerWeek: 6,
		monthWeights: [1.2, 1.2, 1.1, 1, 1, 0.9, 0.8, 0.8, 1, 1, 1.1, 1.3],
		hourWeights: [0, 0, 0, 0, 0, 0.5, 1, 1, 1, 1.5, 2, 2, 1.5, 1, 1, 1.5, 2, 2, 1.5, 1, 0.5, 0, 0, 0],
		arrivalSocs: [
			{ soc: 0.15, weight: 1 },
			{ soc: 0.25, weight: 2 },
			{ soc: 0.4, weight: 1 }
		],
		targetSoc: 0.8,
		scenarioSlug: 'cold-morning-depot',
		energyPrice_per_kWh: 0.32,
		hourValue: 45,
		currency: 'EUR',
		sampling: 'even',
		seed: 1
	}
};

export const DEMO_YEAR_SWEEP_NAME = 'Year-of-use grid: ambient −20…25 °C, arrival 15 and 40 % (demo)';

export async function seedDemoYearInputs(programId: number, userId: string): Promise<void> {
	for (const c of DEMO_CLIMATES) {
		if (await Climate.findOne({ where: { program_id: programId, name: c.name } })) continue;
		const f = c.formula;
		const comment = `INVENTED climate for the Paretherm demo, not measured anywhere.\nT(d,h) = ${f.mean_C} − ${f.seasonalAmplitude_K}·cos(2π(d − ${f.coldestDay})/365) − ${f.dailyAmplitude_K}·cos(2π(h − ${f.coldestHour})/24) °C`;
		const csv = climateCsv_C(inventedClimate_C(f), comment);
		await storeClimate(programId, userId, { bytes: new TextEncoder().encode(csv), fileName: c.file }, c.name, { invented: true });
	}
	if (!(await ChargingPatternRow.findOne({ where: { program_id: programId, name: DEMO_PATTERN.name } })))
		await savePattern(programId, userId, DEMO_PATTERN.name, DEMO_PATTERN.data);
}

/**
 * A sweep over the demo climates' range for one cell: 5 ambients × 2 arrival SOCs × 1 state of
 * health × (1 lead time × 2 set-points + baseline) = 30 simulations, and one evaluation of it.
 */
export async function seedDemoYearSweep(programId: number, userId: string): Promise<{ sweepId: number; evaluationId: number }> {
	let sweep = await Sweep.findOne({ where: { program_id: programId, name: DEMO_YEAR_SWEEP_NAME }, order: [['id', 'ASC']] });
	if (!sweep || (sweep.status !== 'done' && sweep.status !== 'queued' && sweep.status !== 'running')) {
		sweep = await createSweep(programId, userId, {
			name: DEMO_YEAR_SWEEP_NAME,
			scenarioId: 'cold-morning-depot',
			definition: {
				cellIds: [demoCells[0].id],
				packIds: [demoPack.id],
				ambients_K: [-20, -10, 0, 10, 25].map(celsiusToKelvin),
				statesOfHealth: [1],
				arrivalSocs: [0.15, 0.4],
				leadTimes_s: [1800],
				setpoints_K: [20, 30].map(celsiusToKelvin)
			}
		});
	}
	if (sweep.status !== 'done') {
		const report = await runSweepInline(sweep.id);
		if (report.status !== 'done') throw new Error(`The year-of-use demo sweep ended ${report.status}.`);
	}
	const name = 'Cold continental year, delivery vans (demo)';
	const existing = await YearEvaluation.findOne({ where: { program_id: programId, name } });
	if (existing) return { sweepId: sweep.id, evaluationId: existing.id };
	const climate = await Climate.findOne({ where: { program_id: programId, name: DEMO_CLIMATES[0].name }, order: [['version', 'DESC']] });
	const pattern = await ChargingPatternRow.findOne({ where: { program_id: programId, name: DEMO_PATTERN.name }, order: [['version', 'DESC']] });
	const fields: Record<string, string> = {
		name,
		climateId: String(climate!.id),
		patternId: String(pattern!.id),
		sweepId: String(sweep.id),
		fixedLeadTime_min: '30',
		fixedSetpoint_C: '20',
		fixedBelowAmbient_C: '5',
		fleetSize: '120'
	};
	const ev = await createEvaluation(programId, userId, (k) => fields[k] ?? null);
	return { sweepId: sweep.id, evaluationId: ev.id };
}
