/**
 * Quantities derived from a cell parameter set, for display (capacity,
 * energy, open-circuit curves of the cell and of each electrode).
 */
import type { CellParams } from './schemas';
import { cellWindow } from './cell-window';
import { makeOcp, PUBLISHED_OCP_FITS } from './ocp';

export interface CellDerived {
	/** Usable capacity at the given state of health, Ah. */
	capacity_Ah: number;
	ratedCapacity_Ah: number;
	/** ∫ OCV dQ over the usable window, Wh. */
	nominalEnergy_Wh: number;
	nominalVoltage_V: number;
	usableSocWindow: { negativeAt0Soc: number; negativeAt100Soc: number; positiveAt0Soc: number; positiveAt100Soc: number };
	/** Open-circuit voltage of the cell versus SOC at the reference temperature. */
	ocvCurve: { soc: number[]; ocv_V: number[] };
	/** Electrode open-circuit potentials vs Li/Li+ over stoichiometry 0…1 (sampled). */
	anodeOcp: { stoichiometry: number[]; potential_V: number[]; source: string };
	cathodeOcp: { stoichiometry: number[]; potential_V: number[]; source: string };
}

function sample(f: (x: number) => number, from: number, to: number, n: number): { x: number[]; y: number[] } {
	const x: number[] = [];
	const y: number[] = [];
	for (let i = 0; i < n; i++) {
		const xi = from + ((to - from) * i) / (n - 1);
		x.push(xi);
		y.push(f(xi));
	}
	return { x, y };
}

export function cellDerived(cell: CellParams, stateOfHealth = 1): CellDerived {
	const w = cellWindow(cell, stateOfHealth);
	const Un = makeOcp(cell.negative.ocp);
	const Up = makeOcp(cell.positive.ocp);
	const ocvAt = (soc: number) =>
		Up(w.positiveAt0Soc + soc * (w.positiveAt100Soc - w.positiveAt0Soc)) -
		Un(w.negativeAt0Soc + soc * (w.negativeAt100Soc - w.negativeAt0Soc));
	const curve = sample(ocvAt, 0, 1, 101);
	// Trapezoid rule for ∫ OCV dQ.
	let avg = 0;
	for (let i = 1; i < curve.y.length; i++) avg += (curve.y[i] + curve.y[i - 1]) / 2;
	avg /= curve.y.length - 1;
	const src = (spec: CellParams['negative']['ocp']) => (spec.kind === 'fit' ? PUBLISHED_OCP_FITS[spec.fit].source : 'user table');
	const an = sample(Un, 0.005, 0.995, 100);
	const ca = sample(Up, 0.005, 0.995, 100);
	return {
		capacity_Ah: w.capacity_Ah,
		ratedCapacity_Ah: w.ratedCapacity_Ah,
		nominalEnergy_Wh: w.capacity_Ah * avg,
		nominalVoltage_V: avg,
		usableSocWindow: {
			negativeAt0Soc: w.negativeAt0Soc,
			negativeAt100Soc: w.negativeAt100Soc,
			positiveAt0Soc: w.positiveAt0Soc,
			positiveAt100Soc: w.positiveAt100Soc
		},
		ocvCurve: { soc: curve.x, ocv_V: curve.y },
		anodeOcp: { stoichiometry: an.x, potential_V: an.y, source: src(cell.negative.ocp) },
		cathodeOcp: { stoichiometry: ca.x, potential_V: ca.y, source: src(cell.positive.ocp) }
	};
}
