/**
 * Replay of a measured current through the cell model (the model check).
 *
 * The cell model (cell-model.ts, single particle model with electrolyte
 * correction) is driven by the logged cell current instead of a controller.
 * Between two log samples t_{i−1} → t_i the current is held at the value
 * logged at t_i, the same backward (implicit) step the cell model takes,
 * so the simulated voltage at t_i answers the current measured with it and
 * the ohmic and kinetic drops line up with the measured voltage. Long gaps
 * are split into sub-steps of at most `maxStep_s` (default 10 s) so that the
 * temperature coupling stays accurate.
 *
 * Temperature:
 *  - `thermal: 'prescribed'` (the default when the log has a cell temperature):
 *    the model runs at the measured temperature, interpolated linearly inside
 *    a gap; this isolates the electrochemistry from the thermal path.
 *  - `thermal: 'simulated'` (the default without a measured temperature):
 *    one lumped cell node, C·dT/dt = Q − (T − T_b)·G, stepped by backward
 *    Euler (lumped capacitance, valid for Biot < 0.1: Incropera & DeWitt,
 *    Fundamentals of Heat and Mass Transfer, ch. 5). C = m·c_p from the cell's
 *    thermal parameters, G = 1/(1/UA + R_core) with the cell's core-to-surface
 *    resistance in series with the given surface conductance UA, Q the
 *    Bernardi heat the cell model returns. The boundary T_b is the logged
 *    coolant temperature if there is one, else the logged ambient, else the
 *    initial cell temperature.
 *
 * Initial state: the cell at rest at `initialSoc` (uniform particles), or,
 * when `initialSoc` is null, the SOC whose open-circuit voltage at the first
 * temperature equals the first measured voltage (valid when the log starts
 * after a rest).
 */
import { CellModel } from './cell-model';
import type { CellParams } from './schemas';
import { REFERENCE_TEMP_K } from './units';

export interface ReplayLog {
	t_s: readonly number[];
	/** Cell current, A (> 0 charging). */
	current_A: readonly number[];
	/** Measured cell temperature, K (prescribed in 'prescribed' mode, only a start value otherwise). */
	temp_K?: readonly number[] | null;
	ambient_K?: readonly number[] | null;
	coolant_K?: readonly number[] | null;
}

export interface ReplayOptions {
	thermal?: 'prescribed' | 'simulated';
	/** Cell surface to boundary (coolant or ambient) conductance, W/K (default 1). */
	surfaceConductance_W_per_K?: number;
	/** Longest model step, s (default 10). */
	maxStep_s?: number;
	/** Finite-volume shells per particle (default 20, as in simulate). */
	particleShells?: number;
	/** Start temperature in 'simulated' mode, K (default: the first measured cell, coolant or ambient temperature). */
	initialTemp_K?: number;
}

export interface ReplayResult {
	voltage_V: number[];
	temp_K: number[];
	soc: number[];
	anodePotential_V: number[];
	thermal: 'prescribed' | 'simulated';
	initialSoc: number;
	/** Where the initial SOC came from. */
	initialSocSource: 'given' | 'first-voltage';
	notes: string[];
}

export const DEFAULT_SURFACE_CONDUCTANCE_W_per_K = 1;
const SMALL_STEP_s = 1e-3;

/** SOC of a cell at rest whose open-circuit voltage at temp_K equals voltage_V (bisection; clamped to 0…1). */
export function socFromOcv(cell: CellParams, stateOfHealth: number, voltage_V: number, temp_K: number, shells = 20): number {
	const model = new CellModel(cell, stateOfHealth, shells);
	const ocv = (soc: number) => {
		model.setSoc(soc);
		return model.ocvNow(temp_K);
	};
	let lo = 0;
	let hi = 1;
	if (voltage_V <= ocv(lo)) return 0;
	if (voltage_V >= ocv(hi)) return 1;
	for (let k = 0; k < 60; k++) {
		const mid = 0.5 * (lo + hi);
		if (ocv(mid) < voltage_V) lo = mid;
		else hi = mid;
	}
	return 0.5 * (lo + hi);
}

function lerp(a: number, b: number, f: number): number {
	return a + (b - a) * f;
}

/**
 * Replays a logged cell current through the cell model. `initialSoc` null =
 * estimate it from `firstVoltage_V` (pass the first measured voltage).
 */
export function replayCurrent(
	cell: CellParams,
	stateOfHealth: number,
	log: ReplayLog,
	initialSoc: number | null,
	options: ReplayOptions & { firstVoltage_V?: number } = {}
): ReplayResult {
	const n = log.t_s.length;
	if (n < 2) throw new Error('the log needs at least two samples');
	if (log.current_A.length !== n) throw new Error('the log needs one current per time');
	const measuredT = log.temp_K && log.temp_K.length === n ? log.temp_K : null;
	const ambient = log.ambient_K && log.ambient_K.length === n ? log.ambient_K : null;
	const coolant = log.coolant_K && log.coolant_K.length === n ? log.coolant_K : null;
	const thermal = options.thermal ?? (measuredT ? 'prescribed' : 'simulated');
	if (thermal === 'prescribed' && !measuredT) throw new Error('prescribed temperature needs a measured cell temperature in the log');
	const maxStep = options.maxStep_s ?? 10;
	const shells = options.particleShells ?? 20;
	const notes: string[] = [];

	// In simulated mode a given start temperature wins over the first (noisy) reading.
	const temp0 =
		thermal === 'prescribed'
			? measuredT![0]
			: (options.initialTemp_K ?? measuredT?.[0] ?? coolant?.[0] ?? ambient?.[0] ?? REFERENCE_TEMP_K);
	let soc0: number;
	let socSource: ReplayResult['initialSocSource'];
	if (initialSoc === null) {
		if (options.firstVoltage_V === undefined) throw new Error('give an initial SOC or the first measured voltage');
		soc0 = socFromOcv(cell, stateOfHealth, options.firstVoltage_V, temp0, shells);
		socSource = 'first-voltage';
	} else {
		soc0 = initialSoc;
		socSource = 'given';
	}

	const model = new CellModel(cell, stateOfHealth, shells);
	model.setSoc(soc0);
	const heatCapacity_J_per_K = cell.thermal.mass_kg * cell.thermal.specificHeat_J_per_kgK;
	const ua = options.surfaceConductance_W_per_K ?? DEFAULT_SURFACE_CONDUCTANCE_W_per_K;
	const G = 1 / (1 / ua + cell.thermal.coreToSurfaceResistance_K_per_W);
	const boundary = (i: number) => coolant?.[i] ?? ambient?.[i] ?? temp0;

	const voltage = new Array<number>(n);
	const temp = new Array<number>(n);
	const soc = new Array<number>(n);
	const anode = new Array<number>(n);

	// Sample 0: the instantaneous response to the first current (a vanishing step, not committed).
	model.prepare(SMALL_STEP_s, temp0);
	const first = model.evaluate(log.current_A[0]);
	voltage[0] = first.voltage_V;
	anode[0] = first.anodePotential_V;
	soc[0] = soc0;
	temp[0] = temp0;

	let T = temp0;
	let minSoc = soc0;
	let maxSoc = soc0;
	for (let i = 1; i < n; i++) {
		const dt = log.t_s[i] - log.t_s[i - 1];
		if (!(dt > 0)) throw new Error(`time must increase: sample ${i} is not after sample ${i - 1}`);
		const I = log.current_A[i];
		const subs = Math.max(1, Math.ceil(dt / maxStep - 1e-9));
		const h = dt / subs;
		for (let k = 1; k <= subs; k++) {
			const f = k / subs;
			if (thermal === 'prescribed') {
				T = lerp(measuredT![i - 1], measuredT![i], f);
				model.prepare(h, T);
				model.evaluate(I);
				model.commit(I);
			} else {
				// Operator splitting as in simulate.ts: properties at the start-of-step temperature, then the heat of this step.
				model.prepare(h, T);
				const out = model.evaluate(I);
				const Tb = lerp(boundary(i - 1), boundary(i), f);
				const capDt = heatCapacity_J_per_K / h;
				T = (capDt * T + G * Tb + out.heat_W) / (capDt + G);
				model.commit(I);
			}
		}
		const out = model.out; // evaluation of the last sub-step, committed as is
		voltage[i] = out.voltage_V;
		anode[i] = out.anodePotential_V;
		soc[i] = out.soc;
		temp[i] = T;
		if (out.soc < minSoc) minSoc = out.soc;
		if (out.soc > maxSoc) maxSoc = out.soc;
	}
	if (model.clamps.electrolyteFloor > 0) {
		notes.push(
			`the logged current would have emptied the electrolyte in ${model.clamps.electrolyteFloor} step(s); the model held its concentration at the ${model.electrolyteFloor_mol_m3.toFixed(1)} mol/m³ floor there, so the simulated voltage is unreliable in those stretches`
		);
	}
	if (model.clamps.stoichiometry > 0) {
		notes.push(`a particle's surface stoichiometry was held inside 0…1 in ${model.clamps.stoichiometry} step(s): the log drives the cell past the end of its usable window`);
	}
	if (minSoc < -0.02 || maxSoc > 1.02) {
		notes.push(
			`the replay left the cell's usable window (state of charge ${(minSoc * 100).toFixed(1)} % … ${(maxSoc * 100).toFixed(1)} %): the initial state of charge, the state of health or the cell's capacity does not match the log`
		);
	}
	return { voltage_V: voltage, temp_K: temp, soc, anodePotential_V: anode, thermal, initialSoc: soc0, initialSocSource: socSource, notes };
}
