/**
 * The usable stoichiometry window of a cell and its capacity, new and aged.
 *
 * Capacity of an electrode over its full stoichiometry range:
 *   Q_full = A·L·ε_s·c_max·F / 3600   (Ah)
 * The rated window is set by the negative electrode's stoichiometries at 0 %
 * and 100 % SOC; the positive electrode's 0 % stoichiometry follows from
 * charge balance, so the two electrodes can never disagree.
 *
 * Ageing (state of health s = aged capacity / rated capacity; end of life at
 * s = 0.8 is common practice, no source). The fade 1 − s is split into
 *  - loss of lithium inventory: the top of charge stays where the positive
 *    electrode's voltage puts it (positiveAt100Soc), the bottom moves up;
 *  - loss of negative active material: Q_full,n shrinks by
 *    anodeLossPerFade·(1 − s), so the negative electrode is filled further at
 *    100 % SOC (less headroom, lower anode potential: more plating risk);
 * film and contact resistances grow in cell-model.ts. This follows the
 * usual LLI/LAM degradation-mode picture (Birkl et al., J. Power Sources 341
 * (2017) 373).
 */
import type { CellParams } from './schemas';
import { FARADAY_C_per_mol, SECONDS_PER_HOUR } from './units';

export interface CellWindow {
	negativeAt0Soc: number;
	negativeAt100Soc: number;
	positiveAt0Soc: number;
	positiveAt100Soc: number;
	/** Usable capacity at this state of health, Ah. */
	capacity_Ah: number;
	/** Rated (new) capacity, Ah. */
	ratedCapacity_Ah: number;
	/** Capacity of each electrode over stoichiometry 0…1 (aged), Ah. */
	negativeFull_Ah: number;
	positiveFull_Ah: number;
	/** Remaining fraction of negative active material (1 = new). */
	negativeActiveRemaining: number;
}

type WindowInputs = Pick<CellParams, 'electrodeArea_m2' | 'negative' | 'positive' | 'stoichiometry'> & {
	ageing?: CellParams['ageing'];
};

export function electrodeFullCapacity_Ah(
	area_m2: number,
	e: { thickness_m: number; activeMaterialFraction: number; maxConcentration_mol_m3: number }
): number {
	return (area_m2 * e.thickness_m * e.activeMaterialFraction * e.maxConcentration_mol_m3 * FARADAY_C_per_mol) / SECONDS_PER_HOUR;
}

export function cellWindow(cell: WindowInputs, stateOfHealth: number): CellWindow {
	const st = cell.stoichiometry;
	const qn0 = electrodeFullCapacity_Ah(cell.electrodeArea_m2, cell.negative);
	const qp = electrodeFullCapacity_Ah(cell.electrodeArea_m2, cell.positive);
	const rated = qn0 * (st.negativeAt100Soc - st.negativeAt0Soc);
	const fade = 1 - stateOfHealth;
	const remaining = Math.max(0.3, 1 - (cell.ageing?.anodeLossPerFade ?? 0) * fade);
	const qn = qn0 * remaining;
	const capacity = rated * stateOfHealth;
	return {
		negativeAt0Soc: st.negativeAt0Soc,
		negativeAt100Soc: Math.min(0.999, st.negativeAt0Soc + capacity / qn),
		positiveAt100Soc: st.positiveAt100Soc,
		positiveAt0Soc: st.positiveAt100Soc + capacity / qp,
		capacity_Ah: capacity,
		ratedCapacity_Ah: rated,
		negativeFull_Ah: qn,
		positiveFull_Ah: qp,
		negativeActiveRemaining: remaining
	};
}
