/**
 * Electrolyte transport properties as functions of salt concentration and
 * temperature: conductivity κ(c, T) in S/m and diffusivity D(c, T) in m²/s.
 *
 * Kinds a cell file can give:
 * - constant: the cell's scalar value, times its Arrhenius factor;
 * - nyman2008: the polynomials of Nyman, Behm & Lindbergh, "Electrochemical
 *   characterisation and modelling of the mass transport phenomena in LiPF6–EC–EMC
 *   electrolyte", Electrochim. Acta 53 (2008) 6356 (x = c/1000 mol/m³):
 *     κ = 0.1297·x³ − 2.51·x^1.5 + 3.329·x,  D = 8.794e-11·x² − 3.972e-10·x + 4.862e-10;
 *   measured at 25 °C, so the cell's Arrhenius factor applies on top;
 * - valoen-reimers2005: the correlations of Valøen & Reimers, "Transport
 *   properties of LiPF6-based Li-ion battery electrolytes", J. Electrochem.
 *   Soc. 152 (2005) A882 (c in mol/L, T in K), which carry temperature
 *   themselves (no Arrhenius factor on top):
 *     κ [mS/cm] = c·(−10.5 + 0.0740·T − 6.96e-5·T² + c·(0.668 − 0.0178·T + 2.80e-5·T²) + c²·(0.494 − 8.86e-4·T))²
 *     log10 D [cm²/s] = −4.43 − 54/(T − 229 − 5·c) − 0.22·c;
 * - power-series: Σ a_k·x^p_k with x = c/1000 mol/m³ (any published polynomial);
 * - table: (concentration, value) points, linear between them, end values held.
 *
 * A property that is not positive or not finite where the simulation needs it
 * is an input error (the correlation left its range), never clamped silently.
 */
import { linearInterpolant } from './ocp';
import { arrhenius, REFERENCE_TEMP_K } from './units';

export type TransportModel =
	| { kind: 'constant' }
	| { kind: 'nyman2008' }
	| { kind: 'valoen-reimers2005' }
	| { kind: 'power-series'; terms: { coefficient: number; power: number }[] }
	| { kind: 'table'; concentration_mol_m3: number[]; value: number[] };

export type TransportProperty = 'conductivity' | 'diffusivity';

/** Values in the units of the property: S/m or m²/s. */
export type TransportFunction = (concentration_mol_m3: number, temp_K: number) => number;

const powerSeries =
	(terms: { coefficient: number; power: number }[]) =>
	(c: number): number => {
		const x = c / 1000;
		let s = 0;
		for (const t of terms) s += t.coefficient * Math.pow(x, t.power);
		return s;
	};

/** Published polynomial forms (x = c/1000 mol/m³). */
export const NYMAN_2008 = {
	conductivity: [
		{ coefficient: 0.1297, power: 3 },
		{ coefficient: -2.51, power: 1.5 },
		{ coefficient: 3.329, power: 1 }
	],
	diffusivity: [
		{ coefficient: 8.794e-11, power: 2 },
		{ coefficient: -3.972e-10, power: 1 },
		{ coefficient: 4.862e-10, power: 0 }
	]
} as const;

export function valoenReimersConductivity_S_per_m(c_mol_m3: number, temp_K: number): number {
	const c = c_mol_m3 / 1000;
	const T = temp_K;
	const inner = -10.5 + 0.074 * T - 6.96e-5 * T * T + c * (0.668 - 0.0178 * T + 2.8e-5 * T * T) + c * c * (0.494 - 8.86e-4 * T);
	return 0.1 * c * inner * inner; // mS/cm → S/m
}

export function valoenReimersDiffusivity_m2_s(c_mol_m3: number, temp_K: number): number {
	const c = c_mol_m3 / 1000;
	const glass = temp_K - 229 - 5 * c;
	if (glass <= 0) return NaN; // below the correlation's glass-transition temperature: out of range
	return Math.pow(10, -4.43 - 54 / glass - 0.22 * c) * 1e-4; // cm²/s → m²/s
}

/**
 * Build κ(c, T) or D(c, T) for a model. `scalar` is the constant value (used by the
 * constant kind), `activation_J_per_mol` the Arrhenius activation energy applied to
 * every kind except valoen-reimers2005.
 */
export function makeTransport(
	property: TransportProperty,
	model: TransportModel,
	scalar: number | undefined,
	activation_J_per_mol: number
): TransportFunction {
	const withArrhenius =
		(f: (c: number) => number): TransportFunction =>
		(c, T) =>
			f(c) * arrhenius(activation_J_per_mol, T, REFERENCE_TEMP_K);
	switch (model.kind) {
		case 'constant': {
			const v = scalar ?? NaN;
			return withArrhenius(() => v);
		}
		case 'nyman2008':
			return withArrhenius(powerSeries([...NYMAN_2008[property]]));
		case 'power-series':
			return withArrhenius(powerSeries(model.terms));
		case 'table':
			return withArrhenius(linearInterpolant(model.concentration_mol_m3, model.value));
		case 'valoen-reimers2005':
			return property === 'conductivity' ? valoenReimersConductivity_S_per_m : valoenReimersDiffusivity_m2_s;
	}
}

/**
 * First point of a (concentration × temperature) grid where the property is not
 * positive and finite, or null. Used to refuse a correlation that leaves its range
 * where a cell will operate.
 */
export function firstBadPoint(
	f: TransportFunction,
	from_mol_m3: number,
	to_mol_m3: number,
	temps_K: readonly number[],
	points = 60
): { concentration_mol_m3: number; temp_K: number; value: number } | null {
	for (const T of temps_K) {
		for (let i = 0; i <= points; i++) {
			const c = from_mol_m3 + ((to_mol_m3 - from_mol_m3) * i) / points;
			const v = f(c, T);
			if (!(v > 0) || !Number.isFinite(v)) return { concentration_mol_m3: c, temp_K: T, value: v };
		}
	}
	return null;
}

/**
 * κ or D for the simulation's inner loop: the concentration dependence at the
 * reference temperature is tabulated once per cell (uniform grid, linear
 * interpolation, 2049 points up to 4× the initial concentration) and scaled by
 * the Arrhenius factor of the step's temperature; correlations that carry
 * temperature themselves, and concentrations beyond the table, are evaluated
 * directly.
 */
export class TransportTable {
	private readonly direct: TransportFunction;
	private readonly table: Float64Array | null;
	private readonly perStep: number;
	private readonly top_mol_m3: number;
	private readonly activation_J_per_mol: number;
	private temp_K = REFERENCE_TEMP_K;
	private factor = 1;

	constructor(property: TransportProperty, model: TransportModel, scalar: number | undefined, activation_J_per_mol: number, initial_mol_m3: number) {
		this.direct = makeTransport(property, model, scalar, activation_J_per_mol);
		this.activation_J_per_mol = activation_J_per_mol;
		this.top_mol_m3 = 4 * initial_mol_m3;
		const points = 2048;
		this.perStep = points / this.top_mol_m3;
		if (model.kind === 'valoen-reimers2005') {
			this.table = null;
			return;
		}
		const atRef = makeTransport(property, model, scalar, 0);
		const t = new Float64Array(points + 2);
		for (let i = 0; i <= points; i++) t[i] = atRef(i / this.perStep, REFERENCE_TEMP_K);
		t[points + 1] = t[points];
		this.table = t;
	}

	setTemperature(temp_K: number): void {
		this.temp_K = temp_K;
		this.factor = arrhenius(this.activation_J_per_mol, temp_K, REFERENCE_TEMP_K);
	}

	at(c_mol_m3: number): number {
		const t = this.table;
		if (t === null || !(c_mol_m3 >= 0) || c_mol_m3 >= this.top_mol_m3) return this.direct(c_mol_m3, this.temp_K);
		const u = c_mol_m3 * this.perStep;
		const i = u | 0;
		return (t[i] + (u - i) * (t[i + 1] - t[i])) * this.factor;
	}
}
