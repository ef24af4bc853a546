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
 * Temperature: Arrhenius factors on the solid diffusivities, rate constants
 * and film resistances; electrolyte conductivity κ(c, T) and diffusivity
 * D(c, T) follow the cell's correlation (electrolyte-transport.ts); the OCPs
 * shift with their entropic coefficients. Parameters are frozen at the
 * temperature and electrolyte concentrations at the start of each step
 * (linearly implicit step; operator splitting with the thermal network, which
 * is stepped right after with this step's heat).
 *
 * Electrolyte: 1-D finite volumes through anode | separator | cathode
 * (default 20 | 10 | 20 cells; a test doubles the mesh and shows < 1 % change
 * at 2C), face conductances from D(c) at the neighbouring cells. Backward
 * Euler keeps the concentration positive without forcing; the reaction sink
 * can still empty a region at high current, so the predicted minimum
 * concentration after the step is an output the charging controller keeps
 * above a floor (limits.minElectrolyteConcentration_mol_m3): depletion is a
 * limit on current, never computed through. The "ideal" electrolyte option is
 * the same equations with infinite electrolyte transport (uniform
 * concentration, no electrolyte potential drop): the single particle model.
 *
 * Anode potential versus Li/Li+ at the anode/separator interface, the plating
 * criterion of Arora, Doyle & White, J. Electrochem. Soc. 146 (1999) 3543
 * (plating when it falls below 0 V):
 *   φ_an = U_n(θ_surf) + η_n − j_n·R_film + [φ_s(L_n) − ⟨φ_s⟩_n] − [φ_e(L_n) − ⟨φ_e⟩_n]
 * With uniform reaction the electrolyte current grows linearly through the
 * anode, so the electrolyte potential rises from the anode's mean to its
 * separator face by i·∫ x²/(L_n²·κ_eff(x)) dx (= i·L_n/(3κ_eff) for constant κ)
 * plus the concentration term 2RT(1−t+)·TDF/F·[ln c_e(L_n) − ⟨ln c_e⟩_n]; the
 * solid current falls linearly to zero at the separator, so the solid
 * potential there is i·L_n/(6σ_eff) above its mean. The terminal voltage
 * holds both electrodes' collector-to-mean solid drops i·L/(3σ_eff), the
 * electrolyte drop between the electrodes' means, and the tab/contact
 * resistance (kept separate from the electrodes' conductivity).
 *
 * Heat: Bernardi, Pawlikowski & Newman, J. Electrochem. Soc. 132 (1985) 5,
 * in its usual form with the particles' SURFACE open-circuit potentials.
 * With I > 0 on charge:
 *   Q = I·(V − U_surf) + I·T·dU_surf/dT
 * (irreversible: never negative; reversible: the entropic term). Solid
 * diffusion polarisation is then stored as concentration gradients, not heat;
 * it is released as the heat of mixing when the gradients relax. The heat of
 * mixing is an explicit option (off by default, as usual):
 *   Q_mix = −F·Σ_electrodes ∫ D_s·(∂U/∂c)·|∇c|² dV
 * (Thomas & Newman, J. Electrochem. Soc. 150 (2003) A176; the entropic part of
 * the enthalpy potential is neglected), computed from the profiles at the
 * start of each step. docs/cell-model.md says the same.
 *
 * Ageing (see cell-window.ts): loss of lithium inventory and of negative
 * active material (which also lowers the negative electrode's reactive area),
 * and growth of film and contact resistances with the fade 1 − SOH.
 */
import type { CellParams } from './schemas';
import { EngineInputError } from './schemas';
import { ImplicitDiffusion, SphericalParticle } from './diffusion';
import { cellWindow, type CellWindow } from './cell-window';
import { TransportTable } from './electrolyte-transport';
import { makeEntropic, makeOcp, tabulateUnit } from './ocp';
import { arrhenius, fmt, FARADAY_C_per_mol, GAS_CONSTANT_J_per_molK, REFERENCE_TEMP_K } from './units';

export const DEFAULT_ELECTROLYTE_CELLS = { negative: 20, separator: 10, positive: 20 } as const;
const STO_EPS = 1e-6;
/** Default depletion floor as a fraction of the initial electrolyte concentration (modelling choice, no source). */
export const DEFAULT_DEPLETION_FRACTION = 0.001;

export interface CellModelOptions {
	shells?: number;
	electrolyteCells?: { negative: number; separator: number; positive: number };
	/** 'ideal' = infinite electrolyte transport (single particle model). */
	electrolyte?: 'full' | 'ideal';
	heatOfMixing?: boolean;
}

export interface CellEvaluation {
	voltage_V: number;
	anodePotential_V: number;
	/** Heat generated in one cell, W (Bernardi with surface OCPs, plus heat of mixing when enabled). */
	heat_W: number;
	/** Open-circuit voltage at the particles' surface stoichiometries after the step, V. */
	ocv_V: number;
	/** SOC after the step. */
	soc: number;
	/** Lowest electrolyte concentration anywhere after the step, mol/m³. */
	minElectrolyte_mol_m3: number;
}

/** Counts of clamps that bound in committed steps (reported as notes). */
export interface CellClampCounts {
	stoichiometry: number;
	electrolyteFloor: number;
}

export class CellModel {
	readonly cell: CellParams;
	readonly window: CellWindow;
	readonly negative: SphericalParticle;
	readonly positive: SphericalParticle;
	readonly electrolyte: ImplicitDiffusion;
	/** Depletion floor the controller keeps, mol/m³. */
	readonly electrolyteFloor_mol_m3: number;
	readonly clamps: CellClampCounts = { stoichiometry: 0, electrolyteFloor: 0 };
	private readonly idealElectrolyte: boolean;
	private readonly heatOfMixing: boolean;
	private readonly Un: (sto: number) => number;
	private readonly Up: (sto: number) => number;
	private readonly dUn: (sto: number) => number;
	private readonly dUp: (sto: number) => number;
	private readonly kappa: TransportTable;
	private readonly diffusivity: TransportTable;
	private readonly area_m2: number;
	private readonly cmaxN: number;
	private readonly cmaxP: number;
	/** Particle surface area in the whole cell, m². */
	private readonly surfN_m2: number;
	private readonly surfP_m2: number;
	/** Active-material volume in the whole cell, m³ (for the heat of mixing). */
	private readonly volN_m3: number;
	private readonly volP_m3: number;
	private readonly filmN0: number;
	private readonly filmP0: number;
	private readonly contact_ohm: number;
	/** Solid-phase drops per ampere: collector to mean (both electrodes), and anode mean to separator face, Ω. */
	private readonly solidVoltage_ohm: number;
	private readonly solidAnodeSep_ohm: number;
	private readonly tPlus: number;
	private readonly thermoFactor: number;
	// electrolyte grid (per unit electrode area)
	private readonly nE: number;
	private readonly nEn: number;
	private readonly nEp: number;
	private readonly dx: Float64Array;
	private readonly brug: Float64Array;
	/** Ohmic weights per cell: multiply by 1/κ_eff(c) and sum (see prepare). */
	private readonly wAnodeSep: Float64Array;
	private readonly wVoltage: Float64Array;
	private readonly faceG: Float64Array;
	private readonly cellD: Float64Array;
	private readonly c0: number;
	// per-step (frozen at the start-of-step temperature and concentrations)
	private temp_K = REFERENCE_TEMP_K;
	private twoRTF = 0;
	private mN = 0;
	private mP = 0;
	private filmN = 0;
	private filmP = 0;
	private ohmic_ohm = 0;
	private ohmicAnodeSep_ohm = 0;
	private faceWL = 0.5;
	private faceWR = 0.5;
	private surfHomN = 0;
	private surfRespN = 0;
	private surfHomP = 0;
	private surfRespP = 0;
	private meanN0 = 0;
	private dtFluxN = 0;
	private dtFluxP = 0;
	private meanRespN = 0;
	private mixing_W = 0;
	/** Result of the last evaluate(). */
	readonly out: CellEvaluation = { voltage_V: 0, anodePotential_V: 0, heat_W: 0, ocv_V: 0, soc: 0, minElectrolyte_mol_m3: 0 };

	constructor(cell: CellParams, stateOfHealth: number, options: CellModelOptions | number = {}) {
		const opts: CellModelOptions = typeof options === 'number' ? { shells: options } : options;
		const shells = opts.shells ?? 20;
		this.cell = cell;
		this.window = cellWindow(cell, stateOfHealth);
		this.idealElectrolyte = opts.electrolyte === 'ideal';
		this.heatOfMixing = opts.heatOfMixing ?? false;
		const fade = 1 - stateOfHealth;
		const n = cell.negative;
		const p = cell.positive;
		const el = cell.electrolyte;
		this.negative = new SphericalParticle(n.particleRadius_m, shells);
		this.positive = new SphericalParticle(p.particleRadius_m, shells);
		// Tabulated for speed (see tabulateUnit); stoichiometries are clamped to [0, 1] here anyway.
		this.Un = tabulateUnit(makeOcp(n.ocp));
		this.Up = tabulateUnit(makeOcp(p.ocp));
		this.dUn = tabulateUnit(makeEntropic(n.entropic), 1025);
		this.dUp = tabulateUnit(makeEntropic(p.entropic), 1025);
		const c0 = el.concentration_mol_m3;
		this.kappa = new TransportTable('conductivity', el.conductivityModel ?? { kind: 'constant' }, el.conductivity_S_per_m, el.conductivityActivation_J_per_mol, c0);
		this.diffusivity = new TransportTable('diffusivity', el.diffusivityModel ?? { kind: 'constant' }, el.diffusivity_m2_s, el.diffusivityActivation_J_per_mol, c0);
		this.area_m2 = cell.electrodeArea_m2;
		this.cmaxN = n.maxConcentration_mol_m3;
		this.cmaxP = p.maxConcentration_mol_m3;
		// Specific surface a = 3 ε_s / R; lost negative active material takes its surface with it.
		this.volN_m3 = n.activeMaterialFraction * n.thickness_m * this.area_m2 * this.window.negativeActiveRemaining;
		this.volP_m3 = p.activeMaterialFraction * p.thickness_m * this.area_m2;
		this.surfN_m2 = (3 / n.particleRadius_m) * this.volN_m3;
		this.surfP_m2 = (3 / p.particleRadius_m) * this.volP_m3;
		const filmGrowth = 1 + cell.ageing.filmGrowthPerFade * fade;
		this.filmN0 = n.filmResistance_ohm_m2 * filmGrowth;
		this.filmP0 = p.filmResistance_ohm_m2 * filmGrowth;
		this.contact_ohm = cell.contactResistance_ohm * (1 + cell.ageing.contactGrowthPerFade * fade);
		// Solid phase, σ_eff = σ·(1 − porosity)^b; absent conductivity = no drop.
		const solid = (e: typeof n) => (e.conductivity_S_per_m === undefined ? 0 : e.thickness_m / (e.conductivity_S_per_m * (1 - e.porosity) ** e.conductivityBruggeman) / this.area_m2);
		this.solidVoltage_ohm = (solid(n) + solid(p)) / 3;
		this.solidAnodeSep_ohm = solid(n) / 6;
		this.tPlus = el.cationTransference;
		this.thermoFactor = el.thermodynamicFactor;
		this.c0 = el.concentration_mol_m3;
		this.electrolyteFloor_mol_m3 = cell.limits.minElectrolyteConcentration_mol_m3 ?? DEFAULT_DEPLETION_FRACTION * this.c0;

		// Electrolyte grid, per unit electrode area.
		const cells = opts.electrolyteCells ?? DEFAULT_ELECTROLYTE_CELLS;
		const counts = [cells.negative, cells.separator, cells.positive];
		const L = [n.thickness_m, cell.separator.thickness_m, p.thickness_m];
		const eps = [n.porosity, cell.separator.porosity, p.porosity];
		const perAmp = [
			-(1 - this.tPlus) / (FARADAY_C_per_mol * this.area_m2 * n.thickness_m),
			0,
			(1 - this.tPlus) / (FARADAY_C_per_mol * this.area_m2 * p.thickness_m)
		];
		const nE = counts[0] + counts[1] + counts[2];
		const cap = new Float64Array(nE);
		this.dx = new Float64Array(nE);
		this.brug = new Float64Array(nE);
		this.wAnodeSep = new Float64Array(nE);
		this.wVoltage = new Float64Array(nE);
		const src = new Float64Array(nE);
		const b = el.bruggeman;
		let k = 0;
		const [Ln, Ls, Lp] = L;
		for (let r = 0; r < 3; r++) {
			for (let i = 0; i < counts[r]; i++, k++) {
				const h = L[r] / counts[r];
				this.dx[k] = h;
				cap[k] = eps[r] * h;
				this.brug[k] = eps[r] ** b;
				src[k] = perAmp[r] * h;
				// Uniform reaction: electrolyte current i·x/L_n (anode), i (separator), i·(L_p − y)/L_p (cathode).
				const a = i * h;
				const e = a + h;
				if (r === 0) {
					const w = (e ** 3 - a ** 3) / (3 * Ln * Ln);
					this.wAnodeSep[k] = w / this.area_m2; // φ_e(L_n) − ⟨φ_e⟩_n
					this.wVoltage[k] = w / this.area_m2;
				} else if (r === 1) {
					this.wVoltage[k] = h / this.area_m2;
				} else {
					this.wVoltage[k] = ((Lp - a) ** 3 - (Lp - e) ** 3) / (3 * Lp * Lp) / this.area_m2; // ⟨φ_e⟩_p − φ_e(L_n + L_s)
				}
			}
		}
		void Ls;
		this.electrolyte = new ImplicitDiffusion(cap, new Float64Array(nE - 1), src);
		this.faceG = new Float64Array(nE - 1);
		this.cellD = new Float64Array(nE);
		this.nE = nE;
		this.nEn = counts[0];
		this.nEp = counts[2];
		this.setSoc(0.5);
	}

	/** Reset to rest at the given SOC: uniform particles, electrolyte at its initial concentration. */
	setSoc(soc: number): void {
		const w = this.window;
		this.negative.grid.fill(this.cmaxN * (w.negativeAt0Soc + soc * (w.negativeAt100Soc - w.negativeAt0Soc)));
		this.positive.grid.fill(this.cmaxP * (w.positiveAt0Soc + soc * (w.positiveAt100Soc - w.positiveAt0Soc)));
		this.electrolyte.fill(this.c0);
	}

	/** SOC from the negative electrode's lithium content (coulomb counting is implied by conservation). */
	soc(): number {
		const w = this.window;
		return (this.negative.mean() / this.cmaxN - w.negativeAt0Soc) / (w.negativeAt100Soc - w.negativeAt0Soc);
	}

	/** Lithium in both electrodes' particles expressed as charge, C (for the charge-balance check). */
	lithiumCharge_C(): { negative_C: number; positive_C: number } {
		return {
			negative_C: this.negative.mean() * this.volN_m3 * FARADAY_C_per_mol,
			positive_C: this.positive.mean() * this.volP_m3 * FARADAY_C_per_mol
		};
	}

	/** Open-circuit voltage at the current mean stoichiometries, at temperature T (a cell at rest). */
	ocvNow(temp_K: number): number {
		const sn = this.negative.mean() / this.cmaxN;
		const sp = this.positive.mean() / this.cmaxP;
		const dT = temp_K - REFERENCE_TEMP_K;
		return this.Up(sp) + dT * this.dUp(sp) - this.Un(sn) - dT * this.dUn(sn);
	}

	/** Freeze temperature- and concentration-dependent properties and factor one step of length dt_s. */
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
		this.mixing_W = this.heatOfMixing ? this.mixingHeat(Dn, Dp, temp_K) : 0;
		this.negative.prepare(dt_s, Dn);
		this.positive.prepare(dt_s, Dp);
		if (this.idealElectrolyte) {
			this.ohmic_ohm = this.solidVoltage_ohm + this.contact_ohm;
			this.ohmicAnodeSep_ohm = -this.solidAnodeSep_ohm;
		} else {
			this.prepareElectrolyte(dt_s, temp_K);
		}
		// Flux into a particle per ampere of cell current (mol/(m²·s·A)).
		this.dtFluxN = 1 / (FARADAY_C_per_mol * this.surfN_m2);
		this.dtFluxP = -1 / (FARADAY_C_per_mol * this.surfP_m2);
		this.surfHomN = this.negative.surfaceHom();
		this.surfRespN = this.negative.surfaceResp() * this.dtFluxN;
		this.surfHomP = this.positive.surfaceHom();
		this.surfRespP = this.positive.surfaceResp() * this.dtFluxP;
		this.meanN0 = this.negative.meanAfter(0);
		this.meanRespN = this.negative.meanAfter(this.dtFluxN) - this.meanN0;
	}

	/** Transport properties at the start-of-step concentrations: face conductances and ohmic resistances. */
	private prepareElectrolyte(dt_s: number, temp_K: number): void {
		const conc = this.electrolyte.c;
		const { nE, dx, brug, cellD, faceG } = this;
		let rAnodeSep = 0;
		let rVoltage = 0;
		this.diffusivity.setTemperature(temp_K);
		this.kappa.setTemperature(temp_K);
		for (let i = 0; i < nE; i++) {
			const ci = conc[i];
			const D = this.diffusivity.at(ci);
			const kap = this.kappa.at(ci);
			if (!(D > 0 && kap > 0 && Number.isFinite(D) && Number.isFinite(kap))) this.transportOutOfRange(ci, temp_K, D, kap);
			cellD[i] = D * brug[i];
			const r = 1 / (kap * brug[i]);
			rAnodeSep += this.wAnodeSep[i] * r;
			rVoltage += this.wVoltage[i] * r;
		}
		for (let i = 0; i < nE - 1; i++) faceG[i] = 1 / (dx[i] / (2 * cellD[i]) + dx[i + 1] / (2 * cellD[i + 1]));
		this.electrolyte.prepareFaces(dt_s, faceG);
		// Concentration at the anode/separator face: flux-continuous interpolation of the two cells.
		const wl = cellD[this.nEn - 1] / dx[this.nEn - 1];
		const wr = cellD[this.nEn] / dx[this.nEn];
		this.faceWL = wl / (wl + wr);
		this.faceWR = wr / (wl + wr);
		this.ohmic_ohm = rVoltage + this.solidVoltage_ohm + this.contact_ohm;
		this.ohmicAnodeSep_ohm = rAnodeSep - this.solidAnodeSep_ohm;
	}

	private transportOutOfRange(c_mol_m3: number, temp_K: number, D: number, kap: number): never {
		const bad = !(D > 0 && Number.isFinite(D)) ? 'diffusivity' : 'conductivity';
		throw new EngineInputError([
			{
				field: `cell.electrolyte.${bad}Model`,
				message: `the electrolyte ${bad} is ${fmt.number(bad === 'diffusivity' ? D : kap, 4)} at ${fmt.number(c_mol_m3, 0)} mol/m³ and ${fmt.celsius(temp_K)}, outside the correlation's range; give a correlation or table valid there`
			}
		]);
	}

	/** Heat of mixing from the particles' current profiles, W (see the header). */
	private mixingHeat(Dn: number, Dp: number, temp_K: number): number {
		const dT = temp_K - REFERENCE_TEMP_K;
		const slope = (U: (s: number) => number, dU: (s: number) => number, s: number) => {
			const h = 1 / 4096;
			const a = Math.max(0, s - h);
			const b = Math.min(1, s + h);
			return (U(b) + dT * dU(b) - U(a) - dT * dU(a)) / (b - a);
		};
		const one = (particle: SphericalParticle, D: number, cmax: number, vol: number, U: (s: number) => number, dU: (s: number) => number) => {
			const g = particle.grid;
			const cv = g.c;
			let sum = 0; // Σ_faces G_f·Δc²·dU/dc, per particle ÷ 4π, at D = 1
			for (let i = 0; i < particle.shells - 1; i++) {
				const dc = cv[i + 1] - cv[i];
				const sMid = (cv[i] + cv[i + 1]) / (2 * cmax);
				sum += particle.faceConductance(i) * dc * dc * (slope(U, dU, sMid) / cmax);
			}
			// Particles in the electrode: vol / (4/3·π·R³); the grid works per 4π.
			return (-FARADAY_C_per_mol * D * sum * vol * 3) / particle.radius_m ** 3;
		};
		return one(this.negative, Dn, this.cmaxN, this.volN_m3, this.Un, this.dUn) + one(this.positive, Dp, this.cmaxP, this.volP_m3, this.Up, this.dUp);
	}

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

		let lnN = 0;
		let lnP = 0;
		let ceN = this.c0;
		let ceP = this.c0;
		let lnFace = 0;
		let minCe = this.c0;
		if (!this.idealElectrolyte) {
			// Electrolyte after the step. Trial currents beyond the depletion limit give c ≤ 0; the
			// logarithms then use a tiny positive value and minCe tells the controller to back off.
			const { hom, resp } = this.electrolyte;
			const nE = this.nE;
			const nEn = this.nEn;
			const nEp = this.nEp;
			const tiny = 1e-9 * this.c0;
			ceN = 0;
			ceP = 0;
			minCe = Infinity;
			for (let i = 0; i < nE; i++) {
				const ce = hom[i] + I_A * resp[i];
				if (ce < minCe) minCe = ce;
				if (i < nEn) {
					lnN += Math.log(ce > tiny ? ce : tiny);
					ceN += ce;
				} else if (i >= nE - nEp) {
					lnP += Math.log(ce > tiny ? ce : tiny);
					ceP += ce;
				}
			}
			lnN /= nEn;
			ceN = Math.max(ceN / nEn, tiny);
			lnP /= nEp;
			ceP = Math.max(ceP / nEp, tiny);
			const face = this.faceWL * (hom[nEn - 1] + I_A * resp[nEn - 1]) + this.faceWR * (hom[nEn] + I_A * resp[nEn]);
			lnFace = Math.log(face > tiny ? face : tiny);
		}

		const twoRTF = this.twoRTF;
		const jn = I_A / this.surfN_m2; // A/m² of particle surface, > 0 = insertion into the negative
		const jp = I_A / this.surfP_m2; // > 0 = extraction from the positive (charging)
		const j0n = this.mN * Math.sqrt(ceN * sn * (1 - sn)) * cmaxN;
		const j0p = this.mP * Math.sqrt(ceP * sp * (1 - sp)) * cmaxP;
		const etaN = -twoRTF * Math.asinh(jn / (2 * j0n));
		const etaP = twoRTF * Math.asinh(jp / (2 * j0p));
		const dUdT = this.dUp(sp) - this.dUn(sn);
		const Un = this.Un(sn) + dT * this.dUn(sn);
		const Up = this.Up(sp) + dT * this.dUp(sp);
		const concFactor = twoRTF * (1 - this.tPlus) * this.thermoFactor;
		const voltage = Up - Un + etaP - etaN + jp * this.filmP + jn * this.filmN + I_A * this.ohmic_ohm + concFactor * (lnP - lnN);
		const anode = Un + etaN - jn * this.filmN - I_A * this.ohmicAnodeSep_ohm - concFactor * (lnFace - lnN);

		const out = this.out;
		out.voltage_V = voltage;
		out.anodePotential_V = anode;
		out.ocv_V = Up - Un;
		out.heat_W = I_A * (voltage - (Up - Un)) + I_A * T * dUdT + this.mixing_W;
		out.minElectrolyte_mol_m3 = minCe;
		const w = this.window;
		const mn = (this.meanN0 + I_A * this.meanRespN) / cmaxN;
		out.soc = (mn - w.negativeAt0Soc) / (w.negativeAt100Soc - w.negativeAt0Soc);
		return out;
	}

	/** Apply the prepared step with current I_A; counts the clamps that bound at this current. */
	commit(I_A: number): void {
		const sn = (this.surfHomN + I_A * this.surfRespN) / this.cmaxN;
		const sp = (this.surfHomP + I_A * this.surfRespP) / this.cmaxP;
		if (sn < STO_EPS || sn > 1 - STO_EPS || sp < STO_EPS || sp > 1 - STO_EPS) this.clamps.stoichiometry++;
		this.negative.commit(I_A * this.dtFluxN);
		this.positive.commit(I_A * this.dtFluxP);
		if (this.idealElectrolyte) return;
		this.electrolyte.commit(I_A);
		// A replayed log has no controller: hold the floor rather than go negative, and say so.
		const conc = this.electrolyte.c;
		let clamped = false;
		for (let i = 0; i < this.nE; i++) {
			if (conc[i] < this.electrolyteFloor_mol_m3 * 0.999) {
				conc[i] = this.electrolyteFloor_mol_m3;
				clamped = true;
			}
		}
		if (clamped) this.clamps.electrolyteFloor++;
	}
}
