/**
 * Cell model: single particle model with electrolyte (SPMe-style) correction.
 *
 * Published method: single particle model with electrolyte, Marquis et al.,
 * "An asymptotic derivation of a single particle model with electrolyte",
 * J. Electrochem. Soc. 166 (2019) A3693. One representative spherical
 * particle per electrode (finite volumes, diffusion.ts), reaction spread
 * uniformly through each electrode's thickness, and a 1-D electrolyte
 * (anode | separator | cathode) with its own diffusion, whose concentration
 * and ohmic potential drops correct the terminal voltage.
 *
 * Kinetics: symmetric Butler–Volmer, η = (2RT/F)·asinh(j/(2 j0)),
 * j0 = m·√(c_e·c_s·(c_max − c_s)) (Doyle–Fuller–Newman lineage; Doyle,
 * Fuller & Newman, J. Electrochem. Soc. 140 (1993) 1526).
 *
 * Temperature: Arrhenius factors on the solid diffusivities, rate constants,
 * electrolyte diffusivity and conductivity, and the film resistances; the OCPs
 * shift with their entropic coefficients. Parameters are frozen at the
 * temperature at the start of each step (operator splitting with the thermal
 * network, which is stepped right after with this step's heat).
 *
 * Anode potential versus Li/Li+ at the anode/separator interface, the plating
 * criterion of Arora, Doyle & White, J. Electrochem. Soc. 146 (1999) 3543
 * (plating when it falls below 0 V):
 *   φ_an = U_n(θ_surf) + η_n − j_n·R_film − [φ_e(L_n) − ⟨φ_e⟩_n]
 * where the last term is the electrolyte potential rise from the anode's mean
 * to its separator face (ohmic: i·L_n/(3κ_eff) for uniform reaction, plus the
 * concentration term 2RT(1−t+)/F·[ln c_e(L_n) − ⟨ln c_e⟩_n], thermodynamic
 * factor taken as 1).
 *
 * Heat: Bernardi, Pawlikowski & Newman, J. Electrochem. Soc. 132 (1985) 5.
 * With I > 0 on charge:  Q = I·(V − U_ocv) + I·T·dU_ocv/dT,  the first term is
 * never negative; U_ocv from the particles' mean stoichiometries so that solid
 * diffusion polarisation counts as irreversible heat.
 *
 * Ageing (see cell-window.ts): loss of lithium inventory and of negative
 * active material (which also lowers the negative electrode's reactive area),
 * and growth of film and contact resistances with the fade 1 − SOH.
 */
import type { CellParams } from './schemas';
import { ImplicitDiffusion, SphericalParticle } from './diffusion';
import { cellWindow, type CellWindow } from './cell-window';
import { makeEntropic, makeOcp, tabulateUnit } from './ocp';
import { arrhenius, FARADAY_C_per_mol, GAS_CONSTANT_J_per_molK, REFERENCE_TEMP_K } from './units';

const ELECTROLYTE_CELLS = { negative: 3, separator: 2, positive: 3 } as const;
const STO_EPS = 1e-6;

export interface CellEvaluation {
	voltage_V: number;
	anodePotential_V: number;
	/** Heat generated in one cell, W (Bernardi). */
	heat_W: number;
	/** Open-circuit voltage at the mean stoichiometries after the step, V. */
	ocv_V: number;
	/** SOC after the step. */
	soc: number;
}

export class CellModel {
	readonly cell: CellParams;
	readonly window: CellWindow;
	readonly negative: SphericalParticle;
	readonly positive: SphericalParticle;
	readonly electrolyte: ImplicitDiffusion;
	private readonly Un: (sto: number) => number;
	private readonly Up: (sto: number) => number;
	private readonly dUn: (sto: number) => number;
	private readonly dUp: (sto: number) => number;
	// geometry
	private readonly area_m2: number;
	private readonly cmaxN: number;
	private readonly cmaxP: number;
	/** Particle surface area in the whole cell, m². */
	private readonly surfN_m2: number;
	private readonly surfP_m2: number;
	private readonly filmN0: number;
	private readonly filmP0: number;
	private readonly contact_ohm: number;
	private readonly ohmicGeom: { n: number; s: number; p: number };
	private readonly tPlus: number;
	private readonly nE: number;
	private readonly nEn: number;
	private readonly nEp: number;
	private readonly faceWL: number;
	private readonly faceWR: number;
	// per-step (frozen at the start-of-step temperature)
	private temp_K = REFERENCE_TEMP_K;
	private twoRTF = 0;
	private mN = 0;
	private mP = 0;
	private filmN = 0;
	private filmP = 0;
	private ohmic_ohm = 0;
	private surfHomN = 0;
	private surfRespN = 0;
	private surfHomP = 0;
	private surfRespP = 0;
	private meanN0 = 0;
	private meanP0 = 0;
	private meanRespN = 0;
	private meanRespP = 0;
	private dtFluxN = 0;
	private dtFluxP = 0;
	/** Result of the last evaluate(). */
	readonly out: CellEvaluation = { voltage_V: 0, anodePotential_V: 0, heat_W: 0, ocv_V: 0, soc: 0 };

	constructor(cell: CellParams, stateOfHealth: number, shells = 20) {
		this.cell = cell;
		this.window = cellWindow(cell, stateOfHealth);
		const fade = 1 - stateOfHealth;
		const n = cell.negative;
		const p = cell.positive;
		this.negative = new SphericalParticle(n.particleRadius_m, shells);
		this.positive = new SphericalParticle(p.particleRadius_m, shells);
		// Tabulated for speed (see tabulateUnit); stoichiometries are clamped to [0, 1] here anyway.
		this.Un = tabulateUnit(makeOcp(n.ocp));
		this.Up = tabulateUnit(makeOcp(p.ocp));
		this.dUn = tabulateUnit(makeEntropic(n.entropic), 1025);
		this.dUp = tabulateUnit(makeEntropic(p.entropic), 1025);
		this.area_m2 = cell.electrodeArea_m2;
		this.cmaxN = n.maxConcentration_mol_m3;
		this.cmaxP = p.maxConcentration_mol_m3;
		// Specific surface a = 3 ε_s / R; lost negative active material takes its surface with it.
		this.surfN_m2 = ((3 * n.activeMaterialFraction) / n.particleRadius_m) * n.thickness_m * this.area_m2 * this.window.negativeActiveRemaining;
		this.surfP_m2 = ((3 * p.activeMaterialFraction) / p.particleRadius_m) * p.thickness_m * this.area_m2;
		const filmGrowth = 1 + cell.ageing.filmGrowthPerFade * fade;
		this.filmN0 = n.filmResistance_ohm_m2 * filmGrowth;
		this.filmP0 = p.filmResistance_ohm_m2 * filmGrowth;
		this.contact_ohm = cell.contactResistance_ohm * (1 + cell.ageing.contactGrowthPerFade * fade);
		const b = cell.electrolyte.bruggeman;
		// Ohmic electrolyte resistance per unit conductivity (Ω·S), uniform reaction:
		// L_n/(3κ_n) + L_s/κ_s + L_p/(3κ_p) over the electrode area.
		this.ohmicGeom = {
			n: n.thickness_m / (3 * n.porosity ** b) / this.area_m2,
			s: cell.separator.thickness_m / cell.separator.porosity ** b / this.area_m2,
			p: p.thickness_m / (3 * p.porosity ** b) / this.area_m2
		};
		this.tPlus = cell.electrolyte.cationTransference;
		// Electrolyte grid, per unit electrode area.
		const counts = [ELECTROLYTE_CELLS.negative, ELECTROLYTE_CELLS.separator, ELECTROLYTE_CELLS.positive];
		const L = [n.thickness_m, cell.separator.thickness_m, p.thickness_m];
		const eps = [n.porosity, cell.separator.porosity, p.porosity];
		const perAmp = [
			-(1 - this.tPlus) / (FARADAY_C_per_mol * this.area_m2 * n.thickness_m),
			0,
			(1 - this.tPlus) / (FARADAY_C_per_mol * this.area_m2 * p.thickness_m)
		];
		const nE = counts[0] + counts[1] + counts[2];
		const cap = new Float64Array(nE);
		const dx = new Float64Array(nE);
		const deff = new Float64Array(nE);
		const src = new Float64Array(nE);
		let k = 0;
		for (let r = 0; r < 3; r++) {
			for (let i = 0; i < counts[r]; i++, k++) {
				dx[k] = L[r] / counts[r];
				cap[k] = eps[r] * dx[k];
				deff[k] = eps[r] ** b; // × D_e(T) via the step factor
				src[k] = perAmp[r] * dx[k];
			}
		}
		const g0 = new Float64Array(nE - 1);
		for (let i = 0; i < nE - 1; i++) g0[i] = 1 / (dx[i] / (2 * deff[i]) + dx[i + 1] / (2 * deff[i + 1]));
		this.electrolyte = new ImplicitDiffusion(cap, g0, src);
		this.nE = nE;
		this.nEn = counts[0];
		this.nEp = counts[2];
		const wl = deff[counts[0] - 1] / dx[counts[0] - 1];
		const wr = deff[counts[0]] / dx[counts[0]];
		this.faceWL = wl / (wl + wr);
		this.faceWR = wr / (wl + wr);
		this.setSoc(0.5);
	}

	/** Reset to rest at the given SOC: uniform particles, electrolyte at its initial concentration. */
	setSoc(soc: number): void {
		const w = this.window;
		this.negative.grid.fill(this.cmaxN * (w.negativeAt0Soc + soc * (w.negativeAt100Soc - w.negativeAt0Soc)));
		this.positive.grid.fill(this.cmaxP * (w.positiveAt0Soc + soc * (w.positiveAt100Soc - w.positiveAt0Soc)));
		this.electrolyte.fill(this.cell.electrolyte.concentration_mol_m3);
	}

	/** SOC from the negative electrode's lithium content (coulomb counting is implied by conservation). */
	soc(): number {
		const w = this.window;
		return (this.negative.mean() / this.cmaxN - w.negativeAt0Soc) / (w.negativeAt100Soc - w.negativeAt0Soc);
	}

	/** Lithium in both electrodes' particles expressed as charge, C (for the charge-balance check). */
	lithiumCharge_C(): { negative_C: number; positive_C: number } {
		const n = this.cell.negative;
		const p = this.cell.positive;
		const volN = this.area_m2 * n.thickness_m * n.activeMaterialFraction * this.window.negativeActiveRemaining;
		const volP = this.area_m2 * p.thickness_m * p.activeMaterialFraction;
		return {
			negative_C: this.negative.mean() * volN * FARADAY_C_per_mol,
			positive_C: this.positive.mean() * volP * FARADAY_C_per_mol
		};
	}

	/** Open-circuit voltage at the current mean stoichiometries, at temperature T. */
	ocvNow(temp_K: number): number {
		const sn = this.negative.mean() / this.cmaxN;
		const sp = this.positive.mean() / this.cmaxP;
		const dT = temp_K - REFERENCE_TEMP_K;
		return this.Up(sp) + dT * this.dUp(sp) - this.Un(sn) - dT * this.dUn(sn);
	}

	/** Freeze temperature-dependent properties and factor one step of length dt_s. */
	prepare(dt_s: number, temp_K: number): void {
		const c = this.cell;
		this.temp_K = temp_K;
		this.twoRTF = (2 * GAS_CONSTANT_J_per_molK * temp_K) / FARADAY_C_per_mol;
		const Tref = REFERENCE_TEMP_K;
		const Dn = c.negative.diffusivity_m2_s * arrhenius(c.negative.diffusivityActivation_J_per_mol, temp_K, Tref);
		const Dp = c.positive.diffusivity_m2_s * arrhenius(c.positive.diffusivityActivation_J_per_mol, temp_K, Tref);
		this.mN = c.negative.rateConstant * arrhenius(c.negative.rateActivation_J_per_mol, temp_K, Tref);
		this.mP = c.positive.rateConstant * arrhenius(c.positive.rateActivation_J_per_mol, temp_K, Tref);
		this.filmN = this.filmN0 / arrhenius(c.negative.filmActivation_J_per_mol, temp_K, Tref);
		this.filmP = this.filmP0 / arrhenius(c.positive.filmActivation_J_per_mol, temp_K, Tref);
		const kappa = c.electrolyte.conductivity_S_per_m * arrhenius(c.electrolyte.conductivityActivation_J_per_mol, temp_K, Tref);
		const g = this.ohmicGeom;
		this.ohmic_ohm = (g.n + g.s + g.p) / kappa + this.contact_ohm;
		this.ohmicN_ohm = g.n / kappa;
		const De = c.electrolyte.diffusivity_m2_s * arrhenius(c.electrolyte.diffusivityActivation_J_per_mol, temp_K, Tref);

		this.negative.prepare(dt_s, Dn);
		this.positive.prepare(dt_s, Dp);
		this.electrolyte.prepare(dt_s, De);
		// Flux into a particle per ampere of cell current (mol/(m²·s·A)).
		this.dtFluxN = 1 / (FARADAY_C_per_mol * this.surfN_m2);
		this.dtFluxP = -1 / (FARADAY_C_per_mol * this.surfP_m2);
		this.surfHomN = this.negative.surfaceHom();
		this.surfRespN = this.negative.surfaceResp() * this.dtFluxN;
		this.surfHomP = this.positive.surfaceHom();
		this.surfRespP = this.positive.surfaceResp() * this.dtFluxP;
		this.meanN0 = this.negative.meanAfter(0);
		this.meanP0 = this.positive.meanAfter(0);
		this.meanRespN = this.negative.meanAfter(this.dtFluxN) - this.meanN0;
		this.meanRespP = this.positive.meanAfter(this.dtFluxP) - this.meanP0;
	}
	private ohmicN_ohm = 0;

	/**
	 * Predict the end of the prepared step for cell current I_A (> 0 charging).
	 * Allocation-free; writes into `this.out` and returns it.
	 */
	evaluate(I_A: number): CellEvaluation {
		const T = this.temp_K;
		const dT = T - REFERENCE_TEMP_K;
		const cmaxN = this.cmaxN;
		const cmaxP = this.cmaxP;
		let sn = (this.surfHomN + I_A * this.surfRespN) / cmaxN;
		let sp = (this.surfHomP + I_A * this.surfRespP) / cmaxP;
		if (sn < STO_EPS) sn = STO_EPS;
		else if (sn > 1 - STO_EPS) sn = 1 - STO_EPS;
		if (sp < STO_EPS) sp = STO_EPS;
		else if (sp > 1 - STO_EPS) sp = 1 - STO_EPS;
		// Electrolyte after the step.
		const { hom, resp } = this.electrolyte;
		const nE = this.nE;
		const nEn = this.nEn;
		const nEp = this.nEp;
		let lnN = 0;
		let ceN = 0;
		for (let i = 0; i < nEn; i++) {
			let ce = hom[i] + I_A * resp[i];
			if (ce < 1) ce = 1;
			lnN += Math.log(ce);
			ceN += ce;
		}
		lnN /= nEn;
		ceN /= nEn;
		let lnP = 0;
		let ceP = 0;
		for (let i = nE - nEp; i < nE; i++) {
			let ce = hom[i] + I_A * resp[i];
			if (ce < 1) ce = 1;
			lnP += Math.log(ce);
			ceP += ce;
		}
		lnP /= nEp;
		ceP /= nEp;
		let ceFace = this.faceWL * (hom[nEn - 1] + I_A * resp[nEn - 1]) + this.faceWR * (hom[nEn] + I_A * resp[nEn]);
		if (ceFace < 1) ceFace = 1;

		const twoRTF = this.twoRTF;
		const jn = I_A / this.surfN_m2; // A/m² of particle surface, > 0 = insertion into the negative
		const jp = I_A / this.surfP_m2; // > 0 = extraction from the positive (charging)
		const j0n = this.mN * Math.sqrt(ceN * sn * (1 - sn)) * cmaxN;
		const j0p = this.mP * Math.sqrt(ceP * sp * (1 - sp)) * cmaxP;
		const etaN = -twoRTF * Math.asinh(jn / (2 * j0n));
		const etaP = twoRTF * Math.asinh(jp / (2 * j0p));
		const Un = this.Un(sn) + dT * this.dUn(sn);
		const Up = this.Up(sp) + dT * this.dUp(sp);
		const concFactor = twoRTF * (1 - this.tPlus);
		const voltage =
			Up - Un + etaP - etaN + jp * this.filmP + jn * this.filmN + I_A * this.ohmic_ohm + concFactor * (lnP - lnN);
		const anode = Un + etaN - jn * this.filmN - I_A * this.ohmicN_ohm - concFactor * (Math.log(ceFace) - lnN);

		// Bernardi heat with the OCV at the mean stoichiometries after the step.
		const mn = (this.meanN0 + I_A * this.meanRespN) / cmaxN;
		const mp = (this.meanP0 + I_A * this.meanRespP) / cmaxP;
		const dUdT = this.dUp(mp) - this.dUn(mn);
		const ocv = this.Up(mp) - this.Un(mn) + dT * dUdT;
		const out = this.out;
		out.voltage_V = voltage;
		out.anodePotential_V = anode;
		out.ocv_V = ocv;
		out.heat_W = I_A * (voltage - ocv) + I_A * T * dUdT;
		const w = this.window;
		out.soc = (mn - w.negativeAt0Soc) / (w.negativeAt100Soc - w.negativeAt0Soc);
		return out;
	}

	/** Apply the prepared step with current I_A. */
	commit(I_A: number): void {
		this.negative.commit(I_A * this.dtFluxN);
		this.positive.commit(I_A * this.dtFluxP);
		this.electrolyte.commit(I_A);
	}
}
