/**
 * Electrolyte transport correlations, the electrolyte mesh, depletion as a limit, and the heat terms
 * (reversible heat sign, heat of mixing) checked against published equations and thermodynamics.
 */
import { describe, expect, it } from 'vitest';
import { cellParamsSchema, cellWindow, simulate, graphiteOcpChen2020_V, nmc811OcpChen2020_V, FARADAY_C_per_mol, type CellParams, type SimulationOptions } from '../../src/lib/engine/index';
import { makeTransport, valoenReimersConductivity_S_per_m, valoenReimersDiffusivity_m2_s } from '../../src/lib/engine/electrolyte-transport';
import { CellModel } from '../../src/lib/engine/cell-model';
import { benchPack, benchScenario, chen2020Cell } from './fixtures/chen2020';

const capacity_Ah = cellWindow(chen2020Cell, 1).capacity_Ah;
const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe('electrolyte transport correlations', () => {
	it('should evaluate the Nyman et al. 2008 polynomials as published', () => {
		// Nyman, Behm & Lindbergh, Electrochim. Acta 53 (2008) 6356: κ = 0.1297x³ − 2.51x^1.5 + 3.329x,
		// D = 8.794e-11x² − 3.972e-10x + 4.862e-10, x = c/(1000 mol/m³); values worked by hand.
		const kappa = makeTransport('conductivity', { kind: 'nyman2008' }, undefined, 0);
		const D = makeTransport('diffusivity', { kind: 'nyman2008' }, undefined, 0);
		expect(kappa(1000, 298.15)).toBeCloseTo(0.9487, 4);
		expect(kappa(2000, 298.15)).toBeCloseTo(1.0376 - 2.51 * 2 ** 1.5 + 6.658, 4);
		expect(D(1000, 298.15)).toBeCloseTo(1.7694e-10, 14);
		expect(D(0, 298.15)).toBeCloseTo(4.862e-10, 14);
	});

	it('should evaluate the Valøen & Reimers 2005 correlations as published', () => {
		// Valøen & Reimers, J. Electrochem. Soc. 152 (2005) A882, κ [mS/cm] and log10 D [cm²/s] in c [mol/L], T [K];
		// at 1 mol/L and 298.15 K worked by hand: inner sum 5.3757 − 2.1495 + 0.2298 = 3.4560 → κ = 11.944 mS/cm;
		// log10 D = −4.43 − 54/(298.15 − 234) − 0.22 = −5.4918 → D = 3.223e-6 cm²/s.
		expect(valoenReimersConductivity_S_per_m(1000, 298.15)).toBeCloseTo(1.1944, 3);
		expect(valoenReimersDiffusivity_m2_s(1000, 298.15)).toBeCloseTo(3.223e-10, 12);
		// Conductivity rises with temperature in that range (a fact of the trade, common practice).
		expect(valoenReimersConductivity_S_per_m(1000, 318.15)).toBeGreaterThan(valoenReimersConductivity_S_per_m(1000, 298.15));
	});

	it('should apply the cell Arrhenius factor to the polynomial forms: ratio exp[(Ea/R)(1/T − 1/Tref)]', () => {
		// Arrhenius ratio for Ea = 17 kJ/mol between 25 °C and 0 °C: exp(17000/8.314462618·(1/273.15 − 1/298.15)) = 1.8732 (by hand).
		const k = makeTransport('conductivity', { kind: 'nyman2008' }, undefined, 17000);
		expect(k(1000, 298.15) / k(1000, 273.15)).toBeCloseTo(1.8732, 3);
	});
});

describe('bad electrolyte input', () => {
	const withElectrolyte = (electrolyte: Record<string, unknown>) => ({ ...chen2020Cell, electrolyte: { ...chen2020Cell.electrolyte, ...electrolyte } });
	const firstIssue = (cell: unknown) => {
		const r = cellParamsSchema.safeParse(cell);
		expect(r.success).toBe(false);
		return r.success ? null : r.error.issues[0];
	};

	it('should refuse a negative constant conductivity, naming the field', () => {
		const issue = firstIssue(withElectrolyte({ conductivityModel: undefined, conductivity_S_per_m: -0.5 }));
		expect(issue?.path.join('.')).toBe('electrolyte.conductivity_S_per_m');
		expect(issue?.message).toMatch(/outside the accepted range/);
	});

	it('should refuse a correlation that goes negative in the working range, naming the model and where', () => {
		// κ = 3 − 2x is negative above 1500 mol/m³.
		const issue = firstIssue(withElectrolyte({ conductivityModel: { kind: 'power-series', terms: [{ coefficient: 3, power: 0 }, { coefficient: -2, power: 1 }] } }));
		expect(issue?.path.join('.')).toBe('electrolyte.conductivityModel');
		expect(issue?.message).toMatch(/must stay positive/);
		expect(issue?.message).toMatch(/mol\/m³/);
	});

	it('should refuse a table out of order and a table with a missing value', () => {
		const outOfOrder = firstIssue(withElectrolyte({ diffusivityModel: { kind: 'table', concentration_mol_m3: [0, 2000, 1000], value: [3e-10, 1e-10, 2e-10] } }));
		expect(outOfOrder?.path.join('.')).toMatch(/^electrolyte\.diffusivityModel\.concentration_mol_m3/);
		expect(outOfOrder?.message).toMatch(/strictly increasing/);
		const short = firstIssue(withElectrolyte({ diffusivityModel: { kind: 'table', concentration_mol_m3: [0, 1000, 2000], value: [3e-10, 2e-10] } }));
		expect(short?.path.join('.')).toBe('electrolyte.diffusivityModel.value');
	});

	it('should refuse a constant model without its value and an unknown model kind', () => {
		const missing = firstIssue(withElectrolyte({ conductivityModel: { kind: 'constant' }, conductivity_S_per_m: undefined }));
		expect(missing?.path.join('.')).toBe('electrolyte.conductivity_S_per_m');
		const unknown = firstIssue(withElectrolyte({ conductivityModel: { kind: 'magic' } }));
		expect(unknown?.message).toMatch(/model kind must be/);
	});

	it('should refuse a negative electrode conductivity', () => {
		const r = cellParamsSchema.safeParse({ ...chen2020Cell, positive: { ...chen2020Cell.positive, conductivity_S_per_m: -1 } });
		expect(r.success).toBe(false);
		expect(r.success ? '' : r.error.issues[0].path.join('.')).toBe('positive.conductivity_S_per_m');
	});

	it('should still accept a cell file written before correlations existed (constant transport scalars)', () => {
		const old = { ...chen2020Cell, electrolyte: { concentration_mol_m3: 1000, diffusivity_m2_s: 1.77e-10, diffusivityActivation_J_per_mol: 0, conductivity_S_per_m: 0.95, conductivityActivation_J_per_mol: 0, cationTransference: 0.26 } };
		const { negative, positive } = chen2020Cell;
		const strip = (e: typeof negative) => {
			const { conductivity_S_per_m: _c, conductivityBruggeman: _b, ...rest } = e;
			return rest;
		};
		expect(cellParamsSchema.safeParse({ ...old, negative: strip(negative), positive: strip(positive) }).success).toBe(true);
	});
});

describe('electrolyte mesh and depletion', () => {
	const run = (currentC: number, options: SimulationOptions = {}, cell: CellParams = chen2020Cell) =>
		simulate({
			cell: { ...cell, cccvReference: { temp_K: [298.15], currentC: [currentC] } },
			pack: benchPack(),
			scenario: benchScenario(currentC * 5, capacity_Ah),
			strategy: null,
			options: { protocol: 'cccv', seriesInterval_s: 1, ...options }
		});
	const endOfCc = (r: ReturnType<typeof run>) => {
		const s = r.series!;
		return s.t_s[s.limit.findIndex((l, i) => s.phase[i] === 'charge' && l === 'max-voltage')];
	};

	it('should change the 2C reference case by less than 1 % when the electrolyte mesh is doubled (convergence study)', () => {
		// Convergence of a finite-volume discretisation (common practice, no source): the default mesh against one twice as fine.
		const base = run(2);
		const fine = run(2, { electrolyteCells: { negative: 40, separator: 20, positive: 40 } });
		expect(rel(base.summary.timeToTarget_s!, fine.summary.timeToTarget_s!)).toBeLessThan(0.01);
		expect(rel(endOfCc(base), endOfCc(fine))).toBeLessThan(0.01);
		expect(rel(base.summary.minAnodePotential_V, fine.summary.minAnodePotential_V)).toBeLessThan(0.01);
		expect(rel(base.summary.peakCellTemp_K - 298.15, fine.summary.peakCellTemp_K - 298.15)).toBeLessThan(0.01);
	});

	it('should treat electrolyte depletion as a limit on current at a rate the cell cannot carry, keeping the concentration above its floor', () => {
		// A copy of the cell with a slow electrolyte (constant D = 2e-11 m²/s) at 3C: the steady-state depletion across the
		// anode scales with i·L²/D (Fick's law), so the controller must hold the current down rather than compute through
		// a negative concentration.
		const slow = { ...chen2020Cell, electrolyte: { ...chen2020Cell.electrolyte, diffusivityModel: undefined, diffusivity_m2_s: 2e-11 } } as CellParams;
		const r = simulate({
			cell: { ...slow, cccvReference: { temp_K: [298.15], currentC: [3] } },
			pack: benchPack(),
			scenario: { ...benchScenario(15, capacity_Ah), target: { soc: 0.5 } },
			strategy: null,
			options: { protocol: 'cccv', seriesInterval_s: 1 }
		});
		expect(r.summary.timeUnderLimit_s['electrolyte-depletion']).toBeGreaterThan(0);
		expect(r.series!.limit).toContain('electrolyte-depletion');
		expect(r.summary.notes.join(' ')).toMatch(/electrolyte depletion limited the charging current/);
		expect(r.summary.violations.filter((v) => !v.includes('anode potential'))).toEqual([]);
	});

	it('should make the ideal-electrolyte switch the limit of infinite electrolyte transport', () => {
		// Same equations: a full electrolyte with very fast transport (D = 1e-8 m²/s, κ = 10 S/m, the format's upper bounds)
		// approaches the ideal one; the gap is the remaining ohmic drop, about I·Σ L/(3κ ε^b)/A ≈ 2 mV at 1C.
		const fast = { ...chen2020Cell, electrolyte: { ...chen2020Cell.electrolyte, conductivityModel: undefined, diffusivityModel: undefined, conductivity_S_per_m: 10, diffusivity_m2_s: 1e-8 } } as CellParams;
		const a = run(1, { electrolyte: 'ideal' }, fast);
		const b = run(1, {}, fast);
		const i = 600;
		expect(Math.abs(a.series!.voltage_V[i] - b.series!.voltage_V[i])).toBeLessThan(0.004);
		expect(a.series!.voltage_V[i]).toBeLessThan(b.series!.voltage_V[i]);
	});
});

describe('heat terms', () => {
	/** A copy of the cell with a constant entropic coefficient on the positive electrode. */
	const entropic = (dUdT_V_per_K: number): CellParams => ({
		...chen2020Cell,
		positive: { ...chen2020Cell.positive, entropic: { stoichiometry: [0, 1], dUdT_V_per_K: [dUdT_V_per_K, dUdT_V_per_K] } }
	});

	function heatOverCharge(cell: CellParams, current_A: number, seconds: number): { heat_J: number; charge_C: number } {
		const m = new CellModel(cell, 1);
		m.setSoc(0.5);
		let heat = 0;
		for (let t = 0; t < seconds; t += 10) {
			m.prepare(10, 298.15);
			heat += m.evaluate(current_A).heat_W * 10;
			m.commit(current_A);
		}
		return { heat_J: heat, charge_C: current_A * seconds };
	}

	it('should release T·dU/dT·ΔQ of reversible heat on a slow charge and absorb it on a slow discharge (Bernardi et al. 1985)', () => {
		// Bernardi, Pawlikowski & Newman, J. Electrochem. Soc. 132 (1985) 5: the reversible heat rate is I·T·dU/dT with
		// I > 0 on charge. At C/100 the irreversible part (∝ I²) is under 3 % of it for dU/dT = 0.3 mV/K.
		const dUdT = 3e-4;
		const charge = heatOverCharge(entropic(dUdT), 0.05, 3600);
		const expected = 298.15 * dUdT * charge.charge_C;
		expect(charge.heat_J).toBeGreaterThan(0);
		expect(rel(charge.heat_J, expected)).toBeLessThan(0.05);
		const discharge = heatOverCharge(entropic(dUdT), -0.05, 3600);
		expect(discharge.heat_J).toBeLessThan(0);
		expect(rel(-discharge.heat_J, expected)).toBeLessThan(0.05);
	});

	it('should never generate negative irreversible heat: I·(V − U_surf) ≥ 0 on charge and discharge', () => {
		// Second law (Bernardi et al. 1985): with no entropic term the heat is I·(V − U_surf) ≥ 0.
		const m = new CellModel(chen2020Cell, 1);
		for (const I of [-15, -5, -0.5, 0.5, 5, 15]) {
			m.setSoc(0.5);
			m.prepare(1, 298.15);
			expect(m.evaluate(I).heat_W).toBeGreaterThan(0);
		}
	});

	it('should release, as heat of mixing during a rest, the free energy stored in the particles’ concentration gradients', () => {
		// Thermodynamics (Thomas & Newman, J. Electrochem. Soc. 150 (2003) A176): relaxing gradients at rest lowers the
		// free energy G = Σ ∫ g(c) dV, g(c) = −F·∫₀^c U(c′/c_max) dc′, and the heat of mixing released equals the drop.
		const m = new CellModel(chen2020Cell, 1, { heatOfMixing: true });
		m.setSoc(0.3);
		for (let t = 0; t < 120; t++) {
			m.prepare(1, 298.15);
			m.evaluate(15);
			m.commit(15);
		}
		const freeEnergy_J = () => {
			let total = 0;
			const parts = [
				{ p: m.negative, U: graphiteOcpChen2020_V, e: chen2020Cell.negative },
				{ p: m.positive, U: nmc811OcpChen2020_V, e: chen2020Cell.positive }
			];
			for (const { p, U, e } of parts) {
				const cmax = e.maxConcentration_mol_m3;
				const vol = e.activeMaterialFraction * e.thickness_m * chen2020Cell.electrodeArea_m2;
				const R = p.radius_m;
				const c = p.concentration;
				for (let k = 0; k < p.shells; k++) {
					const r0 = R * Math.cbrt(k / p.shells);
					const r1 = R * Math.cbrt((k + 1) / p.shells);
					const shellFraction = (r1 ** 3 - r0 ** 3) / R ** 3;
					// Simpson's rule for ∫₀^c U dc′ from a fixed lower bound (any constant cancels in a difference).
					const a = 0.02 * cmax;
					const n = 200;
					const h = (c[k] - a) / n;
					let s = U(a / cmax) + U(c[k] / cmax);
					for (let i = 1; i < n; i++) s += (i % 2 ? 4 : 2) * U((a + i * h) / cmax);
					total += -FARADAY_C_per_mol * (s * h) / 3 * vol * shellFraction;
				}
			}
			return total;
		};
		const before = freeEnergy_J();
		let heat_J = 0;
		for (let t = 0; t < 1800; t++) {
			m.prepare(1, 298.15);
			heat_J += m.evaluate(0).heat_W * 1;
			m.commit(0);
		}
		const drop = before - freeEnergy_J();
		expect(drop).toBeGreaterThan(0);
		expect(heat_J).toBeGreaterThan(0);
		expect(rel(heat_J, drop)).toBeLessThan(0.05);
	});

	it('should add no heat of mixing unless asked (the usual Bernardi form)', () => {
		const m = new CellModel(chen2020Cell, 1);
		m.setSoc(0.3);
		for (let t = 0; t < 60; t++) {
			m.prepare(1, 298.15);
			m.evaluate(15);
			m.commit(15);
		}
		m.prepare(1, 298.15);
		expect(m.evaluate(0).heat_W).toBe(0);
	});
});
