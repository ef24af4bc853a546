/**
 * Comparison of variants across finished sweeps. A variant is one cell version with one pack
 * version as run in one sweep; its fronts are the sweep's per-scenario fronts for that pair.
 * Variants are compared on the scenarios they share: the same ambient, state of health and
 * arrival state of charge. For each shared scenario: every variant's front, its knee, and the
 * time each front saves at equal energies (piecewise-linear on the front, see front-compare.ts)
 * with the difference to the first variant picked.
 */
import { Sweep } from '../db/models/index';
import { frontCurve, sharedEnergies, timeSavedAt, type FrontSample } from '../../engine/front-compare';
import { sweepFronts, sweepStatus, type PointView } from './results';
import { SweepInputError } from './request';

export const MIN_VARIANTS = 2;
export const MAX_VARIANTS = 4;

export interface VariantOption {
	/** `sweepId:cellId:packId`, the value the picker sends. */
	key: string;
	sweepId: number;
	sweepName: string;
	cellId: string;
	packId: string;
	/** Full name: cell name and version · pack name and version (sweep #id). */
	label: string;
	baseScenario: { slug: string; version: number; name: string };
}

export interface ComparedPoint {
	energy_Wh: number;
	timeSaved_s: number;
	leadTime_s: number;
	setpoint_K: number;
}

export interface ComparedVariant {
	key: string;
	label: string;
	baselineTimeToTarget_s: number | null;
	baselineOnFront: boolean;
	front: ComparedPoint[];
	knee: (ComparedPoint & { method: string | null; pointId: number }) | null;
	noStrategyBeatsBaseline: boolean;
	sweepId: number;
}

export interface ComparedScenario {
	key: string;
	ambient_K: number;
	stateOfHealth: number;
	arrivalSoc: number;
	variants: ComparedVariant[];
	/** Energies at which every front is read, and each variant's time saved there (null outside its front). */
	atEnergy: { energy_Wh: number; timeSaved_s: (number | null)[] }[];
}

const scenarioKey = (a: { ambient_K: number; stateOfHealth: number; arrivalSoc: number }) =>
	`${a.ambient_K.toFixed(2)}|${a.stateOfHealth.toFixed(4)}|${a.arrivalSoc.toFixed(4)}`;

/** Every variant of the program's finished sweeps, newest sweep first. */
export async function variantOptions(programId: number, limit = 30): Promise<VariantOption[]> {
	const sweeps = await Sweep.findAll({ where: { program_id: programId, status: 'done' }, order: [['id', 'DESC']], limit });
	const out: VariantOption[] = [];
	for (const sweep of sweeps) {
		const st = sweepStatus(sweep);
		for (const c of st.inputs.cells)
			for (const p of st.inputs.packs)
				out.push({
					key: `${sweep.id}:${c.id}:${p.id}`,
					sweepId: sweep.id,
					sweepName: sweep.name,
					cellId: c.id,
					packId: p.id,
					label: `${c.name} v${c.version} · ${p.name} v${p.version} (sweep #${sweep.id})`,
					baseScenario: { slug: st.inputs.baseScenario.slug, version: st.inputs.baseScenario.version, name: st.inputs.baseScenario.name }
				});
	}
	return out;
}

const point = (p: PointView): ComparedPoint => ({ energy_Wh: p.energy_Wh ?? NaN, timeSaved_s: p.timeSaved_s ?? NaN, leadTime_s: p.leadTime_s ?? NaN, setpoint_K: p.coolantSetpoint_K ?? NaN });

/**
 * Compare the picked variants (2–4 keys from `variantOptions`). Throws SweepInputError naming the
 * problem when the count is wrong or a key is not a variant of a finished sweep of the program.
 */
export async function compareVariants(programId: number, keys: string[], options: VariantOption[]) {
	const unique = [...new Set(keys)];
	if (unique.length < MIN_VARIANTS || unique.length > MAX_VARIANTS)
		throw new SweepInputError(`Pick ${MIN_VARIANTS} to ${MAX_VARIANTS} variants to compare (${unique.length} picked).`, 'v');
	const picked = unique.map((k) => {
		const o = options.find((x) => x.key === k);
		if (!o) throw new SweepInputError(`“${k.slice(0, 60)}” is not a variant of a finished sweep in this program; pick from the list.`, 'v');
		return o;
	});
	const frontsBySweep = new Map<number, Awaited<ReturnType<typeof sweepFronts>>>();
	for (const o of picked) {
		if (frontsBySweep.has(o.sweepId)) continue;
		const sweep = await Sweep.findOne({ where: { id: o.sweepId, program_id: programId } });
		if (!sweep) throw new SweepInputError(`No sweep ${o.sweepId} in this program.`, 'v', 404);
		frontsBySweep.set(o.sweepId, await sweepFronts(sweep));
	}
	// Per variant, its scenarios by ambient | SOH | arrival SOC.
	const perVariant = picked.map((o) => {
		const m = new Map<string, Awaited<ReturnType<typeof sweepFronts>>['scenarios'][number]>();
		for (const sc of frontsBySweep.get(o.sweepId)!.scenarios)
			if (sc.axes.cellId === o.cellId && sc.axes.packId === o.packId) m.set(scenarioKey(sc.axes), sc);
		return m;
	});
	const shared = [...perVariant[0].keys()].filter((k) => perVariant.every((m) => m.has(k)));
	const scenarios: ComparedScenario[] = shared.map((k) => {
		const first = perVariant[0].get(k)!;
		const variants: ComparedVariant[] = picked.map((o, i) => {
			const sc = perVariant[i].get(k)!;
			return {
				key: o.key,
				label: o.label,
				sweepId: o.sweepId,
				baselineTimeToTarget_s: sc.baselineTimeToTarget_s,
				baselineOnFront: sc.baselineOnFront,
				front: sc.front.map(point).filter((p) => Number.isFinite(p.energy_Wh) && Number.isFinite(p.timeSaved_s)),
				knee: sc.knee ? { ...point(sc.knee), method: sc.kneeMethod, pointId: sc.knee.id } : null,
				noStrategyBeatsBaseline: sc.noStrategyBeatsBaseline
			};
		});
		const curves: FrontSample[][] = variants.map((v) => frontCurve(v.front));
		const energies = sharedEnergies(curves, 4);
		return {
			key: k,
			ambient_K: first.axes.ambient_K,
			stateOfHealth: first.axes.stateOfHealth,
			arrivalSoc: first.axes.arrivalSoc,
			variants,
			atEnergy: energies.map((e) => ({ energy_Wh: e, timeSaved_s: curves.map((c) => timeSavedAt(c, e)) }))
		};
	});
	scenarios.sort((a, b) => a.ambient_K - b.ambient_K || b.stateOfHealth - a.stateOfHealth || a.arrivalSoc - b.arrivalSoc);
	const bases = new Set(picked.map((o) => `${o.baseScenario.slug}@${o.baseScenario.version}`));
	return {
		variants: picked,
		scenarios,
		baseScenariosDiffer: bases.size > 1,
		unsharedCount: perVariant.reduce((n, m) => n + m.size, 0) - shared.length * picked.length
	};
}
