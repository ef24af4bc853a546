import { describe, expect, it } from 'vitest';
import { graphiteOcpChen2020_V, nmc811OcpChen2020_V, monotoneInterpolant, tabulateUnit, makeOcp } from '../../src/lib/engine/ocp';
import { arrhenius, cellDerived, cellWindow } from '../../src/lib/engine/index';
import { nmc, lfp, C } from './helpers';

// tanh written independently through exponentials, to evaluate the published formulas a second way.
const th = (x: number) => (Math.exp(2 * x) - 1) / (Math.exp(2 * x) + 1);

/** Chen et al., J. Electrochem. Soc. 167 (2020) 080534, graphite OCP fit (coefficients from memory). */
function graphiteReference(x: number): number {
	return 1.9793 * Math.exp(-39.3631 * x) + 0.2482 - 0.0909 * th(29.8538 * (x - 0.1234)) - 0.04478 * th(14.9159 * (x - 0.2769)) - 0.0205 * th(30.4444 * (x - 0.6103));
}
/** Chen et al. (2020), NMC 811 OCP fit (coefficients from memory). */
function nmcReference(y: number): number {
	return -0.809 * y + 4.4875 - 0.0428 * th(18.5138 * (y - 0.5542)) - 17.7326 * th(15.789 * (y - 0.3117)) + 17.5842 * th(15.9308 * (y - 0.312));
}

describe('published OCP fits (Chen et al. 2020)', () => {
	it('should evaluate the graphite fit as the formula gives at listed stoichiometries', () => {
		for (const x of [0.03, 0.1, 0.25, 0.5, 0.75, 0.9]) expect(graphiteOcpChen2020_V(x)).toBeCloseTo(graphiteReference(x), 12);
		// Known points, from memory: graphite sits near 0.1 V at mid-to-high lithiation (stage 2/1 plateaus), ≈ 0.09 V near full.
		expect(graphiteOcpChen2020_V(0.5)).toBeGreaterThan(0.1);
		expect(graphiteOcpChen2020_V(0.5)).toBeLessThan(0.15);
		expect(graphiteOcpChen2020_V(0.9)).toBeCloseTo(0.092, 2);
	});

	it('should evaluate the NMC 811 fit as the formula gives at listed stoichiometries', () => {
		for (const y of [0.27, 0.4, 0.5, 0.7, 0.9]) expect(nmc811OcpChen2020_V(y)).toBeCloseTo(nmcReference(y), 12);
		// From memory: about 4.29 V at the 100 % SOC stoichiometry 0.2661 and about 3.56 V at 0.9084 (0 % SOC).
		expect(nmc811OcpChen2020_V(0.2661)).toBeCloseTo(4.287, 2);
		expect(nmc811OcpChen2020_V(0.9084)).toBeCloseTo(3.561, 2);
	});

	it('should give a full-cell open-circuit window of about 2.5–4.2 V with the paper\'s stoichiometry limits', () => {
		// Chen et al. (2020): the cell is operated between 2.5 and 4.2 V; stoichiometry limits from memory
		// (negative 0.0279…0.9014, positive 0.9084…0.2661).
		const top = nmc811OcpChen2020_V(0.2661) - graphiteOcpChen2020_V(0.9014);
		const bottom = nmc811OcpChen2020_V(0.9084) - graphiteOcpChen2020_V(0.0279);
		expect(top).toBeGreaterThan(4.15);
		expect(top).toBeLessThan(4.25);
		expect(bottom).toBeGreaterThan(2.4);
		expect(bottom).toBeLessThan(2.6);
	});

	it('should tabulate the fits for the inner loop within 0.1 mV', () => {
		// Common practice, no source: linear interpolation error ≤ h²·max|U''|/8.
		const g = tabulateUnit(graphiteOcpChen2020_V);
		const p = tabulateUnit(nmc811OcpChen2020_V);
		for (let x = 0.005; x < 1; x += 0.00731) {
			expect(Math.abs(g(x) - graphiteOcpChen2020_V(x))).toBeLessThan(1e-4);
			expect(Math.abs(p(x) - nmc811OcpChen2020_V(x))).toBeLessThan(1e-4);
		}
	});
});

describe('user OCP tables', () => {
	it('should interpolate monotonically through the table points (Fritsch–Carlson)', () => {
		// Fritsch & Carlson, SIAM J. Numer. Anal. 17 (1980) 238: monotone data give a monotone interpolant.
		const spec = lfp.positive.ocp;
		if (spec.kind !== 'table') throw new Error('demo LFP uses a table');
		const f = makeOcp(spec);
		spec.stoichiometry.forEach((x, i) => expect(f(x)).toBeCloseTo(spec.potential_V[i], 12));
		let prev = Infinity;
		for (let x = 0; x <= 1; x += 0.001) {
			const v = f(x);
			expect(v).toBeLessThanOrEqual(prev + 1e-12);
			prev = v;
		}
		const step = monotoneInterpolant([0, 1, 2, 3], [0, 0, 1, 1]);
		for (let x = 0; x <= 3; x += 0.01) {
			expect(step(x)).toBeGreaterThanOrEqual(-1e-12);
			expect(step(x)).toBeLessThanOrEqual(1 + 1e-12);
		}
	});
});

describe('Arrhenius temperature dependence', () => {
	it('should give D(25 °C)/D(0 °C) ≈ 3.06 for Ea = 30.3 kJ/mol', () => {
		// Arrhenius law, k(T) = k_ref·exp(−Ea/R·(1/T − 1/T_ref)); Ea of graphite diffusion from Ecker et al., J. Electrochem. Soc. 162 (2015) A1836.
		expect(arrhenius(30300, C(25), C(25)) / arrhenius(30300, C(0), C(25))).toBeCloseTo(3.06, 2);
		expect(arrhenius(30300, C(25))).toBe(1);
	});
});

describe('cell window and derived quantities', () => {
	it('should give the demo cells their nominal capacities and shrink them with state of health', () => {
		// Demo design values: 60 Ah and 105 Ah; capacity = A·L·ε·c_max·F·Δθ/3600 (Faraday's law).
		expect(cellDerived(nmc).capacity_Ah).toBeCloseTo(60, 0);
		expect(cellDerived(lfp).capacity_Ah).toBeCloseTo(105, 0);
		expect(cellDerived(nmc, 0.8).capacity_Ah).toBeCloseTo(0.8 * cellDerived(nmc).capacity_Ah, 9);
		const d = cellDerived(nmc);
		expect(d.ocvCurve.ocv_V[0]).toBeGreaterThan(nmc.limits.minVoltage_V);
		expect(d.ocvCurve.ocv_V[d.ocvCurve.ocv_V.length - 1]).toBeLessThan(nmc.limits.maxVoltage_V);
		expect(d.nominalEnergy_Wh / d.capacity_Ah).toBeGreaterThan(3.5);
		expect(d.nominalEnergy_Wh / d.capacity_Ah).toBeLessThan(3.8);
	});

	it('should fill the negative electrode further at 100 % SOC when anode material is lost', () => {
		// Loss of negative active material raises its top-of-charge lithiation (Birkl et al., J. Power Sources 341 (2017) 373).
		// Same fade, more of it as anode loss: a fuller negative electrode at 100 % SOC.
		const moreLam = { ...nmc, ageing: { ...nmc.ageing, anodeLossPerFade: 1.5 } };
		expect(cellWindow(moreLam, 0.8).negativeAt100Soc).toBeGreaterThan(cellWindow(nmc, 0.8).negativeAt100Soc);
		// Pure lithium-inventory loss leaves it emptier (the top of charge is set by the positive electrode).
		const pureLli = { ...nmc, ageing: { ...nmc.ageing, anodeLossPerFade: 0 } };
		expect(cellWindow(pureLli, 0.8).negativeAt100Soc).toBeLessThan(cellWindow(nmc, 1).negativeAt100Soc);
	});
});
