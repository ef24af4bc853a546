/**
 * Cell model checked against results derived outside the code.
 *
 * 1. Electrolyte at steady state under a constant current (uniform reaction in each electrode,
 *    Fick's law with constant or concentration-dependent diffusivity): the concentration profile
 *    has a closed form (integrated by hand below), and the electrolyte's share of the anode
 *    potential and of the terminal voltage follows from the modified Ohm's law of concentrated
 *    solution theory, i_e = −κ∇φ_e + (2κRT/F)(1 − t+)·TDF·∇ln c (Newman & Thomas-Alyea,
 *    Electrochemical Systems, 3rd ed., 2004, ch. 12 and 22, from memory; the same terms appear in
 *    the SPMe of Marquis et al., J. Electrochem. Soc. 166 (2019) A3693).
 * 2. Heat: Bernardi, Pawlikowski & Newman, J. Electrochem. Soc. 132 (1985) 5 — the reversible heat
 *    I·T·dU/dT dominates at very low current and changes sign with the current; the irreversible
 *    heat grows with I². First law over a closed isothermal cycle with the heat of mixing counted
 *    (Thomas & Newman, J. Electrochem. Soc. 150 (2003) A176): heat released = electrical energy in.
 * 3. Faraday's law and Butler–Volmer limits for the particles and the state of charge.
 *
 * Every expected value below is computed from the equations named beside it, never from the code.
 */
import { describe, expect, it } from 'vitest';
import { CellModel } from '../../src/lib/engine/cell-model';
import { cellWindow, demoNmcPouch, graphiteOcpChen2020_V, FARADAY_C_per_mol, GAS_CONSTANT_J_per_molK, type CellParams } from '../../src/lib/engine/index';

const F = FARADAY_C_per_mol;
const R = GAS_CONSTANT_J_per_molK;
const T25 = 298.15;
const zeroEntropy = { stoichiometry: [0, 1], dUdT_V_per_K: [0, 0] };

/**
 * A test copy of the demo cell whose electrolyte can be checked in closed form: constant transport
 * properties unless given, no film, contact or solid-phase resistance, no entropic heat, and very
 * fast kinetics (kinetic overpotentials below 1 µV), so that the difference between the full model
 * and the same model with infinite electrolyte transport is the electrolyte alone.
 */
function electrolyteTestCell(electrolyte: Partial<CellParams['electrolyte']> = {}): CellParams {
	const base = demoNmcPouch;
	const electrode = (e: CellParams['negative']) => ({
		...e,
		rateConstant: 1,
		filmResistance_ohm_m2: 0,
		conductivity_S_per_m: undefined,
		entropic: zeroEntropy
	});
	return {
		...base,
		negative: electrode(base.negative),
		positive: electrode(base.positive),
		contactResistance_ohm: 0,
		electrolyte: {
			concentration_mol_m3: 1000,
			diffusivity_m2_s: 3e-10,
			diffusivityActivation_J_per_mol: 0,
			conductivity_S_per_m: 1.0,
			conductivityActivation_J_per_mol: 0,
			diffusivityModel: { kind: 'constant' },
			conductivityModel: { kind: 'constant' },
			cationTransference: 0.26,
			thermodynamicFactor: 1,
			bruggeman: 1.5,
			...electrolyte
		}
	} as CellParams;
}

/** Run a constant current for `steps` steps of dt at fixed temperature; returns the last evaluation. */
function hold(model: CellModel, current_A: number, steps: number, dt_s = 1, temp_K = T25) {
	for (let k = 0; k < steps; k++) {
		model.prepare(dt_s, temp_K);
		model.evaluate(current_A);
		model.commit(current_A);
	}
	model.prepare(dt_s, temp_K);
	return { ...model.evaluate(current_A) };
}

/**
 * Steady electrolyte profile under a uniform reaction in each electrode, by hand. With the salt flux
 * N = −D_eff(c)·dc/dx and the Kirchhoff transform Φ(c) = ∫ D(c) dc, steady state gives
 *   anode      Φ(c(x)) = Φ(c_a) + a·x²/(2·L_n·ε_n^b)
 *   separator  Φ(c(x)) = Φ(c(L_n)) + a·(x − L_n)/ε_s^b
 *   cathode    Φ(c(x)) = Φ(c(L_n + L_s)) + a·(y − y²/(2 L_p))/ε_p^b,  y = x − L_n − L_s,
 * with a = (1 − t+)·i/F (i the current density, > 0 charging: salt is consumed in the anode) and c_a
 * (the concentration at the anode collector) fixed by conservation of salt, Σ ∫ ε·c dx = c0·Σ ε·L.
 */
function steadyProfile(cell: CellParams, current_A: number, D: (c: number) => number) {
	const el = cell.electrolyte;
	const Ln = cell.negative.thickness_m;
	const Ls = cell.separator.thickness_m;
	const Lp = cell.positive.thickness_m;
	const b = el.bruggeman;
	const epsN = cell.negative.porosity;
	const epsS = cell.separator.porosity;
	const epsP = cell.positive.porosity;
	const a = ((1 - el.cationTransference) * current_A) / (cell.electrodeArea_m2 * F);
	// Φ tabulated by the trapezoidal rule on a fine grid of c (1 … 5·c0 mol/m³), inverted by bisection of the table.
	const nTab = 20_000;
	const c0Tab = 1;
	const hTab = (5 * el.concentration_mol_m3 - c0Tab) / nTab;
	const phiTab = new Float64Array(nTab + 1);
	for (let k = 1; k <= nTab; k++) phiTab[k] = phiTab[k - 1] + 0.5 * hTab * (D(c0Tab + (k - 1) * hTab) + D(c0Tab + k * hTab));
	const Phi = (c: number) => {
		const u = Math.min(nTab - 1e-9, Math.max(0, (c - c0Tab) / hTab));
		const k = Math.floor(u);
		return phiTab[k] + (u - k) * (phiTab[k + 1] - phiTab[k]);
	};
	const invPhi = (target: number) => {
		let lo = 0;
		let hi = nTab;
		while (hi - lo > 1) {
			const mid = (lo + hi) >> 1;
			if (phiTab[mid] < target) lo = mid;
			else hi = mid;
		}
		const f = (target - phiTab[lo]) / (phiTab[hi] - phiTab[lo]);
		return c0Tab + (lo + f) * hTab;
	};
	// Φ rise from the anode collector at position x.
	const rise = (x: number) => {
		if (x <= Ln) return (a * x * x) / (2 * Ln * epsN ** b);
		const atLn = (a * Ln) / (2 * epsN ** b);
		if (x <= Ln + Ls) return atLn + (a * (x - Ln)) / epsS ** b;
		const y = x - Ln - Ls;
		return atLn + (a * Ls) / epsS ** b + (a * (y - (y * y) / (2 * Lp))) / epsP ** b;
	};
	const profileFor = (ca: number) => {
		const phiA = Phi(ca);
		return (x: number) => invPhi(phiA + rise(x));
	};
	const eps = (x: number) => (x < Ln ? epsN : x < Ln + Ls ? epsS : epsP);
	const total = Ln + Ls + Lp;
	const salt = (c: (x: number) => number) => {
		const n = 600;
		let s = 0;
		for (let k = 0; k < n; k++) {
			const x = ((k + 0.5) * total) / n;
			s += eps(x) * c(x) * (total / n);
		}
		return s;
	};
	const target = el.concentration_mol_m3 * (epsN * Ln + epsS * Ls + epsP * Lp);
	let lo = 1;
	let hi = el.concentration_mol_m3;
	for (let k = 0; k < 50; k++) {
		const mid = 0.5 * (lo + hi);
		if (salt(profileFor(mid)) < target) lo = mid;
		else hi = mid;
	}
	const c = profileFor(0.5 * (lo + hi));
	return { c, Ln, Ls, Lp, epsN, epsS, epsP, b };
}

/** Mean of f over [x0, x1] by the midpoint rule on n panels. */
function mean(f: (x: number) => number, x0: number, x1: number, n = 400): number {
	let s = 0;
	for (let k = 0; k < n; k++) s += f(x0 + ((k + 0.5) * (x1 - x0)) / n);
	return s / n;
}

describe('electrolyte at steady state under constant current (closed form)', () => {
	// Constant transport: D = 3e-10 m²/s, κ = 1 S/m (round values of the usual magnitude; any positive value will do).
	const cell = electrolyteTestCell();
	const I = 6; // 0.1C for the 60 Ah demo cell: a ≈ 7 % spread of the concentration, far from the floor
	const steps = 400; // slowest electrolyte mode decays as exp(−t/τ), τ = ε·L²/(π²·D_eff) ≈ 20 s
	const i = I / cell.electrodeArea_m2;
	const concFactor = ((2 * R * T25) / F) * (1 - cell.electrolyte.cationTransference) * cell.electrolyte.thermodynamicFactor;
	/** Computed inside each test (not at collection) so that every check runs its own model. */
	const setup = () => {
		const full = new CellModel(cell, 1, { electrolyte: 'full' });
		const ideal = new CellModel(cell, 1, { electrolyte: 'ideal' });
		full.setSoc(0.5);
		ideal.setSoc(0.5);
		const outFull = hold(full, I, steps);
		const outIdeal = hold(ideal, I, steps);
		return { full, outFull, outIdeal, ...steadyProfile(cell, I, () => 3e-10) };
	};

	it('should settle to the closed-form concentration profile (salt consumed in the anode on charge)', () => {
		const { full, outFull, c, Ln, Ls, Lp } = setup();
		const conc = full.electrolyte.c;
		const cells = [20, 10, 20];
		const bounds = [0, Ln, Ln + Ls, Ln + Ls + Lp];
		let k = 0;
		let worst = 0;
		for (let r = 0; r < 3; r++) {
			const h = (bounds[r + 1] - bounds[r]) / cells[r];
			for (let j = 0; j < cells[r]; j++, k++) {
				const exact = mean(c, bounds[r] + j * h, bounds[r] + (j + 1) * h, 20);
				worst = Math.max(worst, Math.abs(conc[k] - exact));
			}
		}
		// Spread of the profile ≈ 70 mol/m³; second-order finite volumes on 20 | 10 | 20 cells: within 1 mol/m³.
		expect(c(Ln + Ls + Lp) - c(0)).toBeGreaterThan(50);
		expect(worst).toBeLessThan(1);
		// The lowest concentration is at the anode collector (first cell).
		expect(outFull.minElectrolyte_mol_m3).toBeCloseTo(conc[0], 6);
		expect(Math.abs(conc[0] - mean(c, 0, Ln / 20, 20))).toBeLessThan(1);
	});

	it("should lower the anode potential at the separator by the electrolyte's ohmic and concentration drops", () => {
		const { outFull, outIdeal, c, Ln, epsN, b } = setup();
		// φ_e(L_n) − ⟨φ_e⟩_n = i·L_n/(3κ_eff) + (2RT/F)(1−t+)·TDF·[ln c(L_n) − ⟨ln c⟩_n]  (uniform reaction, see the header);
		// the anode potential vs Li/Li+ at the separator is lower than the SPM's by exactly this on charge.
		const ohmic = (i * Ln) / (3 * 1.0 * epsN ** b);
		const conc = concFactor * (Math.log(c(Ln)) - mean((x) => Math.log(c(x)), 0, Ln));
		const expected = -(ohmic + conc);
		expect(ohmic).toBeGreaterThan(5e-4);
		expect(conc).toBeGreaterThan(5e-4);
		const got = outFull.anodePotential_V - outIdeal.anodePotential_V;
		expect(Math.abs(got - expected)).toBeLessThan(0.02 * Math.abs(expected));
	});

	it('should raise the charging voltage by the electrolyte drop between the electrode means', () => {
		const { outFull, outIdeal, c, Ln, Ls, Lp, epsN, epsS, epsP, b } = setup();
		// ⟨φ_e⟩_p − ⟨φ_e⟩_n = i·[L_n/(3κ_eff,n) + L_s/κ_eff,s + L_p/(3κ_eff,p)] + (2RT/F)(1−t+)·TDF·[⟨ln c⟩_p − ⟨ln c⟩_n].
		const ohmic = i * (Ln / (3 * epsN ** b) + Ls / epsS ** b + Lp / (3 * epsP ** b));
		const conc = concFactor * (mean((x) => Math.log(c(x)), Ln + Ls, Ln + Ls + Lp) - mean((x) => Math.log(c(x)), 0, Ln));
		const expected = ohmic + conc;
		const got = outFull.voltage_V - outIdeal.voltage_V;
		expect(Math.abs(got - expected)).toBeLessThan(0.02 * expected);
		// The open-circuit voltage at the particle surfaces is the same in both (the particles do not see the electrolyte).
		expect(outFull.ocv_V).toBeCloseTo(outIdeal.ocv_V, 9);
	});

	it('should reverse every electrolyte drop on discharge', () => {
		const { Ln, Ls, Lp, epsN, epsS, epsP, b } = steadyProfile(cell, I, () => 3e-10);
		// Linear response: the same current the other way gives the mirror-image profile and drops.
		const fullD = new CellModel(cell, 1, { electrolyte: 'full' });
		const idealD = new CellModel(cell, 1, { electrolyte: 'ideal' });
		fullD.setSoc(0.5);
		idealD.setSoc(0.5);
		const a = hold(fullD, -I, steps);
		const d = hold(idealD, -I, steps);
		const ohmic = (i * Ln) / (3 * epsN ** b);
		const gotAnode = a.anodePotential_V - d.anodePotential_V;
		expect(gotAnode).toBeGreaterThan(0.9 * ohmic);
		const ohmicV = i * (Ln / (3 * epsN ** b) + Ls / epsS ** b + Lp / (3 * epsP ** b));
		expect(a.voltage_V - d.voltage_V).toBeLessThan(-0.9 * ohmicV);
		// Salt now accumulates in the anode: the lowest concentration moves to the positive collector.
		const conc = fullD.electrolyte.c;
		expect(conc[conc.length - 1]).toBeLessThan(conc[0]);
		expect(a.minElectrolyte_mol_m3).toBeCloseTo(conc[conc.length - 1], 6);
	});
});

describe('electrolyte at steady state with concentration-dependent transport (Nyman et al. 2008)', () => {
	// κ(c) and D(c) of Nyman, Behm & Lindbergh, Electrochim. Acta 53 (2008) 6356, as written in the reference
	// folder's parameter file (fixtures/spme-chen2020/parameters.json, "functions"), x = c/1000 mol/m³:
	//   κ = 0.1297·x³ − 2.51·x^1.5 + 3.329·x  S/m,   D = 8.794e-11·x² − 3.972e-10·x + 4.862e-10  m²/s.
	const kappaNyman = (c: number) => {
		const x = c / 1000;
		return 0.1297 * x ** 3 - 2.51 * x ** 1.5 + 3.329 * x;
	};
	const diffNyman = (c: number) => {
		const x = c / 1000;
		return 8.794e-11 * x * x - 3.972e-10 * x + 4.862e-10;
	};
	const cell = electrolyteTestCell({ diffusivityModel: { kind: 'nyman2008' }, conductivityModel: { kind: 'nyman2008' }, diffusivity_m2_s: undefined, conductivity_S_per_m: undefined });
	const I = 12; // 0.2C: a spread of about a quarter of the initial concentration, where κ and D vary noticeably
	const i = I / cell.electrodeArea_m2;
	const concFactor = ((2 * R * T25) / F) * (1 - cell.electrolyte.cationTransference);

	it('should follow the Kirchhoff-transformed steady profile and its ohmic drops with κ(c)', () => {
		const full = new CellModel(cell, 1, { electrolyte: 'full' });
		const ideal = new CellModel(cell, 1, { electrolyte: 'ideal' });
		full.setSoc(0.5);
		ideal.setSoc(0.5);
		const outFull = hold(full, I, 500);
		const outIdeal = hold(ideal, I, 500);
		const { c, Ln, Ls, Lp, epsN, epsS, epsP, b } = steadyProfile(cell, I, diffNyman);
		expect(c(Ln + Ls + Lp) - c(0)).toBeGreaterThan(150);
		expect(Math.abs(outFull.minElectrolyte_mol_m3 - mean(c, 0, Ln / 20, 20))).toBeLessThan(2);
		// Ohmic parts: i·∫ (i_e/i)² / κ_eff(c(x)) dx over the anode (i_e/i = x/L_n) for φ_e(L_n) − ⟨φ_e⟩_n, and
		// over all three regions for ⟨φ_e⟩_p − ⟨φ_e⟩_n (see the constant-transport case).
		const kEff = (x: number, eps: number) => kappaNyman(c(x)) * eps ** b;
		const anodeOhmic = i * Ln * mean((x) => (x / Ln) ** 2 / kEff(x, epsN), 0, Ln);
		const sepOhmic = i * Ls * mean((x) => 1 / kEff(x, epsS), Ln, Ln + Ls);
		const cathOhmic = i * Lp * mean((x) => ((Ln + Ls + Lp - x) / Lp) ** 2 / kEff(x, epsP), Ln + Ls, Ln + Ls + Lp);
		const lnMeanN = mean((x) => Math.log(c(x)), 0, Ln);
		const lnMeanP = mean((x) => Math.log(c(x)), Ln + Ls, Ln + Ls + Lp);
		const expectedAnode = -(anodeOhmic + concFactor * (Math.log(c(Ln)) - lnMeanN));
		const expectedVoltage = anodeOhmic + sepOhmic + cathOhmic + concFactor * (lnMeanP - lnMeanN);
		const gotAnode = outFull.anodePotential_V - outIdeal.anodePotential_V;
		const gotVoltage = outFull.voltage_V - outIdeal.voltage_V;
		expect(Math.abs(gotAnode - expectedAnode)).toBeLessThan(0.02 * Math.abs(expectedAnode));
		expect(Math.abs(gotVoltage - expectedVoltage)).toBeLessThan(0.02 * expectedVoltage);
	});
});

describe('heat generation (Bernardi et al. 1985)', () => {
	/** The demo cell with a constant entropic coefficient of the cell, dU/dT = dU_p/dT − dU_n/dT = +0.3 mV/K. */
	const entropicCell = (): CellParams => ({
		...demoNmcPouch,
		negative: { ...demoNmcPouch.negative, entropic: { stoichiometry: [0, 1], dUdT_V_per_K: [-1e-4, -1e-4] } },
		positive: { ...demoNmcPouch.positive, entropic: { stoichiometry: [0, 1], dUdT_V_per_K: [2e-4, 2e-4] } }
	});
	const dUdT = 3e-4;

	/** Heat (J) and charge (C) over `duration_s` at constant current and fixed temperature. */
	const heatOver = (cell: CellParams, current_A: number, duration_s: number, dt_s: number, temp_K = T25) => {
		const m = new CellModel(cell, 1);
		m.setSoc(0.5);
		let heat_J = 0;
		let charge_C = 0;
		for (let t = 0; t < duration_s - 1e-9; t += dt_s) {
			m.prepare(dt_s, temp_K);
			heat_J += m.evaluate(current_A).heat_W * dt_s;
			charge_C += current_A * dt_s;
			m.commit(current_A);
		}
		return { heat_J, charge_C };
	};

	it('should approach T·dU/dT·ΔQ at C/100 and below: positive on charge, negative on discharge', () => {
		// Bernardi, Pawlikowski & Newman, J. Electrochem. Soc. 132 (1985) 5: Q = I(V − U) + I·T·dU/dT with I > 0 on
		// charge, where dU/dT of the cell is dU_p/dT − dU_n/dT (here both electrodes carry one; electrolyte-and-heat
		// checks the positive alone). The reversible part is ∝ I, the irreversible one ∝ I²: at C/100 (T·dU/dT ≈ 90 mV against an
		// overpotential of a few mV) the heat is within a few per cent of T·dU/dT·ΔQ, at C/1000 within a few per mille.
		const cell = entropicCell();
		const C1 = cellWindow(cell, 1).capacity_Ah;
		for (const [rate, tol] of [
			[100, 0.05],
			[1000, 0.005]
		]) {
			const charge = heatOver(cell, C1 / rate, 3600, 10);
			const discharge = heatOver(cell, -C1 / rate, 3600, 10);
			const reversible = T25 * dUdT * charge.charge_C;
			expect(charge.heat_J).toBeGreaterThan(0);
			expect(discharge.heat_J).toBeLessThan(0);
			expect(Math.abs(charge.heat_J - reversible)).toBeLessThan(tol * reversible);
			expect(Math.abs(discharge.heat_J + reversible)).toBeLessThan(tol * reversible);
			// Half the difference is the reversible heat alone (the irreversible part is even in I to first order).
			expect(Math.abs((charge.heat_J - discharge.heat_J) / 2 - reversible)).toBeLessThan(0.003 * reversible);
		}
	});

	it('should make the irreversible heat never negative and grow as I² (per coulomb as I) at low rate', () => {
		// Bernardi et al. (1985): I(V − U) ≥ 0; near equilibrium V − U ≈ R·I (linearised Butler–Volmer and Ohm's
		// law), so the irreversible heat per coulomb doubles when the current doubles.
		const cell = { ...demoNmcPouch, negative: { ...demoNmcPouch.negative, entropic: zeroEntropy }, positive: { ...demoNmcPouch.positive, entropic: zeroEntropy } };
		const C1 = cellWindow(cell, 1).capacity_Ah;
		const perCoulomb = (I: number) => {
			const r = heatOver(cell, I, 60, 1);
			return r.heat_J / Math.abs(r.charge_C);
		};
		const low = perCoulomb(C1 / 100);
		const twice = perCoulomb(C1 / 50);
		const lowDis = perCoulomb(-C1 / 100);
		expect(low).toBeGreaterThan(0);
		expect(lowDis).toBeGreaterThan(0);
		expect(twice / low).toBeGreaterThan(1.8);
		expect(twice / low).toBeLessThan(2.2);
	});

	it('should shift the open-circuit voltage by ΔT·dU/dT', () => {
		// Definition of the entropic coefficient: U(T) = U(T_ref) + (T − T_ref)·dU/dT.
		const cell = entropicCell();
		const at = (temp_K: number) => {
			const m = new CellModel(cell, 1);
			m.setSoc(0.5);
			m.prepare(1, temp_K);
			return { surface: m.evaluate(0).ocv_V, rest: m.ocvNow(temp_K) };
		};
		const ref = at(T25);
		const warm = at(T25 + 20);
		expect(warm.surface - ref.surface).toBeCloseTo(20 * dUdT, 9);
		expect(warm.rest - ref.rest).toBeCloseTo(20 * dUdT, 9);
		// At rest the surface and mean stoichiometries coincide.
		expect(ref.rest).toBeCloseTo(ref.surface, 9);
	});

	it('should release as heat all the electrical energy put into a closed isothermal cycle when the heat of mixing is on', () => {
		// First law for a cycle that returns to the same uniform rest state at constant temperature and with no
		// entropic heat: ∮ I·V dt = ∮ Q dt. The surface-OCP Bernardi heat stores the solid-diffusion polarisation
		// as concentration gradients; their relaxation is the heat of mixing (Thomas & Newman, J. Electrochem.
		// Soc. 150 (2003) A176). The quadrature over the particle shells is first order: the gap halves with the mesh.
		const cell = { ...demoNmcPouch, negative: { ...demoNmcPouch.negative, entropic: zeroEntropy }, positive: { ...demoNmcPouch.positive, entropic: zeroEntropy } };
		const cycle = (heatOfMixing: boolean, shells: number) => {
			const m = new CellModel(cell, 1, { heatOfMixing, shells });
			m.setSoc(0.5);
			let work_J = 0;
			let heat_J = 0;
			let restHeat_J = 0;
			const run = (I: number, duration_s: number, dt_s: number) => {
				for (let t = 0; t < duration_s - 1e-9; t += dt_s) {
					m.prepare(dt_s, T25);
					const o = m.evaluate(I);
					work_J += I * o.voltage_V * dt_s;
					heat_J += o.heat_W * dt_s;
					if (I === 0) restHeat_J += o.heat_W * dt_s;
					m.commit(I);
				}
			};
			// 1C for 10 min, rest (slowest particle mode R²/(4.49²·D) ≈ 340 s: rest 12 of them), back, rest.
			run(60, 600, 1);
			run(0, 4000, 5);
			run(-60, 600, 1);
			run(0, 4000, 5);
			expect(Math.abs(m.soc() - 0.5)).toBeLessThan(1e-9);
			return { gap: (work_J - heat_J) / work_J, restHeat_J };
		};
		const without = cycle(false, 20);
		const coarse = cycle(true, 20);
		const fine = cycle(true, 40);
		expect(without.restHeat_J).toBe(0);
		expect(coarse.restHeat_J).toBeGreaterThan(0);
		expect(Math.abs(fine.gap)).toBeLessThan(0.02);
		expect(Math.abs(fine.gap)).toBeLessThan(0.6 * Math.abs(coarse.gap));
		// Without it the cycle releases less heat than the work put in (the relaxation heat is missing).
		expect(without.gap).toBeGreaterThan(0.1);
	});
});

/** The demo cell reduced to one resistive effect at a time (test copies, never the demo library). */
function bareCell(over: { negative?: Partial<CellParams['negative']>; positive?: Partial<CellParams['positive']>; cell?: Partial<CellParams> } = {}): CellParams {
	const base = demoNmcPouch;
	return {
		...base,
		negative: { ...base.negative, filmResistance_ohm_m2: 0, conductivity_S_per_m: undefined, entropic: zeroEntropy, ...over.negative },
		positive: { ...base.positive, filmResistance_ohm_m2: 0, conductivity_S_per_m: undefined, entropic: zeroEntropy, ...over.positive },
		contactResistance_ohm: 0,
		...over.cell
	} as CellParams;
}

/** Particle surface area of an electrode in the cell: a·L·A with a = 3ε_s/R for spheres (Doyle, Fuller & Newman 1993). */
const surface_m2 = (cell: CellParams, e: CellParams['negative'], remaining = 1) => ((3 * e.activeMaterialFraction) / e.particleRadius_m) * e.thickness_m * cell.electrodeArea_m2 * remaining;
const arrheniusFactor = (Ea: number, T: number) => Math.exp((Ea / R) * (1 / T25 - 1 / T));

/** One very short step from rest: surface stoichiometries still those set by the state of charge. */
function firstInstant(cell: CellParams, current_A: number, options: { soh?: number; temp_K?: number; electrolyte?: 'full' | 'ideal' } = {}) {
	const m = new CellModel(cell, options.soh ?? 1, { electrolyte: options.electrolyte ?? 'ideal' });
	m.setSoc(0.5);
	m.prepare(1e-6, options.temp_K ?? T25);
	return { ...m.evaluate(current_A) };
}

describe('kinetics and resistances (definitions and published laws)', () => {
	it('should give the symmetric Butler–Volmer overpotentials with j0 = m·√(c_e·c_s·(c_max − c_s)), rate constants Arrhenius in T', () => {
		// Butler–Volmer with α = ½: η = (2RT/F)·asinh(j/(2 j0)) (Doyle, Fuller & Newman, J. Electrochem. Soc. 140 (1993)
		// 1526); j = I / particle surface; rate constants follow Arrhenius (Ea of the cell file).
		const cell = bareCell();
		const w = cellWindow(cell, 1);
		const thetaN = w.negativeAt0Soc + 0.5 * (w.negativeAt100Soc - w.negativeAt0Soc);
		const thetaP = w.positiveAt0Soc + 0.5 * (w.positiveAt100Soc - w.positiveAt0Soc);
		for (const [I, T] of [
			[60, T25],
			[-60, T25],
			[30, 273.15],
			[120, 318.15]
		]) {
			const o = firstInstant(cell, I, { temp_K: T });
			const eta = (e: CellParams['negative'], theta: number) => {
				const cmax = e.maxConcentration_mol_m3;
				const j0 = e.rateConstant * arrheniusFactor(e.rateActivation_J_per_mol, T) * Math.sqrt(cell.electrolyte.concentration_mol_m3 * theta * cmax * (cmax - theta * cmax));
				return ((2 * R * T) / F) * Math.asinh(I / surface_m2(cell, e) / (2 * j0));
			};
			const expected = eta(cell.negative, thetaN) + eta(cell.positive, thetaP);
			expect(Math.abs(expected)).toBeGreaterThan(0.05);
			// (the surface takes the flux at once: the extrapolated surface concentration moves by ∂c/∂r·h at t = 0+)
			expect(Math.abs(o.voltage_V - o.ocv_V - expected)).toBeLessThan(1e-3 * Math.abs(expected));
			// Anode potential vs Li/Li+: U_n(θ) minus the negative electrode's overpotential on charge (Chen et al. 2020 fit;
			// the engine tabulates it within 0.1 mV).
			const Un = graphiteOcpChen2020_V(thetaN);
			expect(Math.abs(o.anodePotential_V - (Un - eta(cell.negative, thetaN)))).toBeLessThan(2e-4);
		}
	});

	it('should add the film drops I·R_film/S per electrode, grown with the fade and scaled by Arrhenius', () => {
		// A film resistance per unit particle surface (Ω·m²) over the electrode's particle surface S = 3ε_s/R·L·A;
		// growth (1 + g·(1 − SOH)) (format: "2.5 → +50 % at SOH 0.8"); lost anode material takes its surface with it
		// (remaining 1 − anodeLossPerFade·(1 − SOH), cell window); resistance ∝ 1/Arrhenius factor.
		const cell = bareCell({
			negative: { rateConstant: 1, filmResistance_ohm_m2: 0.004, filmActivation_J_per_mol: 30_000 },
			positive: { rateConstant: 1, filmResistance_ohm_m2: 0.002, filmActivation_J_per_mol: 20_000 }
		});
		const I = 60;
		const drop = (soh: number, T: number) => {
			const o = firstInstant(cell, I, { soh, temp_K: T });
			return o.voltage_V - o.ocv_V;
		};
		const fade = 0.2;
		const growth = 1 + cell.ageing.filmGrowthPerFade * fade;
		const remaining = 1 - cell.ageing.anodeLossPerFade * fade;
		const filmN = (soh: number, T: number) => (0.004 * (soh < 1 ? growth : 1)) / arrheniusFactor(30_000, T) / surface_m2(cell, cell.negative, soh < 1 ? remaining : 1);
		const filmP = (soh: number, T: number) => (0.002 * (soh < 1 ? growth : 1)) / arrheniusFactor(20_000, T) / surface_m2(cell, cell.positive);
		for (const [soh, T] of [
			[1, T25],
			[0.8, T25],
			[1, 263.15]
		]) {
			const expected = I * (filmN(soh, T) + filmP(soh, T));
			expect(Math.abs(drop(soh, T) - expected)).toBeLessThan(0.01 * expected);
			// The negative electrode's film lowers the anode potential on charge by I·R_film,n/S_n.
			const o = firstInstant(cell, I, { soh, temp_K: T });
			const w = cellWindow(cell, soh);
			const thetaN = w.negativeAt0Soc + 0.5 * (w.negativeAt100Soc - w.negativeAt0Soc);
			expect(Math.abs(o.anodePotential_V - (graphiteOcpChen2020_V(thetaN) - I * filmN(soh, T)))).toBeLessThan(3e-4);
		}
	});

	it('should add the contact resistance I·R_c, grown with the fade, to the voltage but not to the anode potential', () => {
		// Tabs, collectors and welds are outside the electrode: they raise the terminal voltage only.
		const cell = bareCell({ negative: { rateConstant: 1 }, positive: { rateConstant: 1 }, cell: { contactResistance_ohm: 0.001 } });
		const ref = bareCell({ negative: { rateConstant: 1 }, positive: { rateConstant: 1 } });
		for (const soh of [1, 0.8]) {
			const a = firstInstant(cell, 60, { soh });
			const b = firstInstant(ref, 60, { soh });
			const Rc = 0.001 * (1 + cell.ageing.contactGrowthPerFade * (1 - soh));
			expect(a.voltage_V - b.voltage_V).toBeCloseTo(60 * Rc, 7);
			expect(a.anodePotential_V).toBeCloseTo(b.anodePotential_V, 9);
		}
	});

	it("should add the electrodes' solid-phase drops: I·L/(3σ_eff·A) each to the voltage, −I·L_n/(6σ_eff·A) to the anode's", () => {
		// Ohm's law in the solid with the current falling linearly to zero at the separator (uniform reaction):
		// collector to electrode mean i·L/(3σ_eff), mean to separator face i·L/(6σ_eff), σ_eff = σ·(1 − porosity)^b
		// (format). On charge the solid potential rises toward the separator, so the anode potential there is higher.
		const sigmaN = 1;
		const sigmaP = 0.2;
		const cell = bareCell({
			negative: { rateConstant: 1, conductivity_S_per_m: sigmaN, conductivityBruggeman: 1.5 },
			positive: { rateConstant: 1, conductivity_S_per_m: sigmaP, conductivityBruggeman: 2 }
		});
		const ref = bareCell({ negative: { rateConstant: 1 }, positive: { rateConstant: 1 } });
		const I = 60;
		const i = I / cell.electrodeArea_m2;
		const effN = sigmaN * (1 - cell.negative.porosity) ** 1.5;
		const effP = sigmaP * (1 - cell.positive.porosity) ** 2;
		for (const electrolyte of ['ideal', 'full'] as const) {
			const a = firstInstant(cell, I, { electrolyte });
			const b = firstInstant(ref, I, { electrolyte });
			const dV = i * (cell.negative.thickness_m / (3 * effN) + cell.positive.thickness_m / (3 * effP));
			expect(Math.abs(a.voltage_V - b.voltage_V - dV)).toBeLessThan(1e-3 * dV);
			const dA = (i * cell.negative.thickness_m) / (6 * effN);
			expect(Math.abs(a.anodePotential_V - b.anodePotential_V - dA)).toBeLessThan(1e-3 * dA);
		}
	});
});

describe("Faraday's law, state of charge and the model's guards", () => {
	it('should move the state of charge and the lithium in each electrode by exactly the charge passed', () => {
		// Faraday: ΔSOC = ∫I dt / capacity; lithium into the negative (as charge) = ∫I dt = lithium out of the positive.
		const cell = demoNmcPouch;
		const cap_C = cellWindow(cell, 1).capacity_Ah * 3600;
		for (const electrolyte of ['full', 'ideal'] as const) {
			const m = new CellModel(cell, 1, { electrolyte });
			m.setSoc(0.3);
			expect(m.soc()).toBeCloseTo(0.3, 12);
			const li0 = m.lithiumCharge_C();
			let predicted = NaN;
			for (let k = 0; k < 300; k++) {
				m.prepare(2, T25);
				predicted = m.evaluate(90).soc;
				m.commit(90);
			}
			expect(predicted).toBeCloseTo(m.soc(), 12);
			expect(m.soc() - 0.3).toBeCloseTo((90 * 600) / cap_C, 9);
			const li1 = m.lithiumCharge_C();
			expect(li1.negative_C - li0.negative_C).toBeCloseTo(90 * 600, 4);
			expect(li1.positive_C - li0.positive_C).toBeCloseTo(-90 * 600, 4);
		}
	});

	it('should count a surface stoichiometry held inside 0…1 and stay finite when driven past the window', () => {
		// Every clamp that binds is counted (and reported as a note by the simulation).
		const m = new CellModel(demoNmcPouch, 1);
		m.setSoc(0.97);
		let last = { voltage_V: 0, anodePotential_V: 0 };
		for (let k = 0; k < 120; k++) {
			m.prepare(1, T25);
			last = { ...m.evaluate(300) };
			m.commit(300);
		}
		expect(m.clamps.stoichiometry).toBeGreaterThan(0);
		expect(Number.isFinite(last.voltage_V)).toBe(true);
		expect(Number.isFinite(last.anodePotential_V)).toBe(true);
		const calm = new CellModel(demoNmcPouch, 1);
		calm.setSoc(0.5);
		for (let k = 0; k < 60; k++) {
			calm.prepare(1, T25);
			calm.evaluate(60);
			calm.commit(60);
		}
		expect(calm.clamps).toEqual({ stoichiometry: 0, electrolyteFloor: 0 });
	});

	it('should predict a depleted electrolyte to the controller and hold the floor when a step is forced through', () => {
		// Depletion is a limit on current: evaluate() reports the concentration the step would reach (negative here),
		// and a committed step without a controller (a replayed log) holds the floor and counts it.
		const cell = demoNmcPouch;
		const m = new CellModel(cell, 1);
		m.setSoc(0.5);
		m.prepare(30, T25);
		const o = m.evaluate(3000);
		expect(o.minElectrolyte_mol_m3).toBeLessThan(0);
		expect(Number.isFinite(o.voltage_V)).toBe(true);
		expect(m.electrolyteFloor_mol_m3).toBeCloseTo(0.001 * cell.electrolyte.concentration_mol_m3, 12);
		m.commit(3000);
		expect(m.clamps.electrolyteFloor).toBe(1);
		expect(Math.min(...m.electrolyte.c)).toBeGreaterThanOrEqual(m.electrolyteFloor_mol_m3);
		// A floor given in the cell file is used as given.
		const own = new CellModel({ ...cell, limits: { ...cell.limits, minElectrolyteConcentration_mol_m3: 250 } }, 1);
		expect(own.electrolyteFloor_mol_m3).toBe(250);
	});

	it('should refuse to compute through a transport correlation that leaves its range, naming the field', () => {
		// Bad input is refused with the field named: κ = 1 − 0.5·x (x = c/1000 mol/m³) is negative above 2000 mol/m³,
		// which a long charge reaches in the positive electrode (salt is produced there on charge).
		const cell = { ...demoNmcPouch, electrolyte: { ...demoNmcPouch.electrolyte, conductivityModel: { kind: 'power-series', terms: [{ coefficient: 1, power: 0 }, { coefficient: -0.5, power: 1 }] } } } as CellParams;
		const m = new CellModel(cell, 1);
		m.setSoc(0.3);
		const run = () => {
			for (let k = 0; k < 200; k++) {
				m.prepare(5, T25);
				m.evaluate(400);
				m.commit(400);
			}
		};
		expect(run).toThrowError(/electrolyte conductivity is -?[\d.]+ at \d+ mol\/m³/);
		try {
			run();
		} catch (e) {
			expect((e as { field?: string }).field).toBe('cell.electrolyte.conductivityModel');
		}
	});

	it('should take its mesh from the options: particle shells (also given as a number) and 20 | 10 | 20 electrolyte cells by default', () => {
		expect(new CellModel(demoNmcPouch, 1).negative.shells).toBe(20);
		expect(new CellModel(demoNmcPouch, 1, 12).negative.shells).toBe(12);
		expect(new CellModel(demoNmcPouch, 1, { shells: 8 }).positive.shells).toBe(8);
		expect(new CellModel(demoNmcPouch, 1).electrolyte.n).toBe(50);
		expect(new CellModel(demoNmcPouch, 1, { electrolyteCells: { negative: 4, separator: 3, positive: 5 } }).electrolyte.n).toBe(12);
	});
});
