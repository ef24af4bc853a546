/**
 * The cell model against outside reference solutions.
 *
 * Source of every expected value here: PyBaMM 26.8 (Sulzer et al., J. Open Research Software 9
 * (2021) 14), single particle model with electrolyte and a lumped thermal model ("SPMe_lumped";
 * Marquis et al., J. Electrochem. Soc. 166 (2019) A3693) and the isothermal single particle model
 * ("SPM_iso"), parameter set of Chen et al., J. Electrochem. Soc. 167 (2020) 080534, electrolyte of
 * Nyman et al., Electrochim. Acta 53 (2008) 6356 — solutions and protocols in
 * fixtures/spme-chen2020 (README there). The cell is entered in our format in fixtures/chen2020.ts
 * (conversions explained there); nothing is fitted to these curves.
 *
 * Protocols, mapped onto ours:
 * - plating3C (15 A until the anode potential at the separator reaches 20 mV, hold it until 4.2 V,
 *   then 4.2 V) = our plating-limited charge with a 15 A charger and a 20 mV anode margin;
 * - cccv2C (10 A to 4.2 V, then 4.2 V) = our CC–CV reference at 2C;
 * - cc1C (5 A to 4.2 V) = the constant-current part of our CC–CV reference at 1C.
 * Tolerances are those this product promises for its cell model (common practice, no source).
 */
import { describe, expect, it } from 'vitest';
import { simulate, cellWindow, type SimulationResult, type SimulationOptions } from '../../src/lib/engine/index';
import { benchPack, benchScenario, chen2020Cell, interpolate, readReference, referenceSummary, type ReferenceRow } from './fixtures/chen2020';

const capacity_Ah = cellWindow(chen2020Cell, 1).capacity_Ah;

function run(protocol: 'plating-limited' | 'cccv', currentC: number, options: SimulationOptions = {}, pack = benchPack()): SimulationResult {
	const cell = { ...chen2020Cell, cccvReference: { temp_K: [298.15], currentC: [currentC] } };
	return simulate({
		cell,
		pack,
		scenario: benchScenario(currentC * 5, capacity_Ah),
		strategy: null,
		options: { protocol, seriesInterval_s: 1, ...options }
	});
}

/** Root-mean-square difference of our series against the reference rows inside [from, to] s. */
function rmse(result: SimulationResult, ref: ReferenceRow[], pick: (r: ReferenceRow) => number, ours: 'voltage_V' | 'anodePotential_V', from = 0, to = Infinity): number {
	const s = result.series!;
	let sum = 0;
	let n = 0;
	for (const r of ref) {
		// Our series starts at rest and takes the current in its first control period (1 s).
		if (r.time_s < Math.max(from, 2) || r.time_s > to) continue;
		const y = interpolate(s.t_s, s[ours], r.time_s);
		if (y === null) continue;
		sum += (y - pick(r)) ** 2;
		n++;
	}
	expect(n).toBeGreaterThan(10);
	return Math.sqrt(sum / n);
}

const firstTime = (result: SimulationResult, pred: (i: number) => boolean): number => {
	const s = result.series!;
	for (let i = 0; i < s.t_s.length; i++) if (pred(i)) return s.t_s[i];
	return NaN;
};
const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe('cell model against the SPMe reference (Chen 2020 cell, 25 °C)', () => {
	describe('plating-limited 3C charge (SPMe_lumped plating3C)', () => {
		const ref = readReference('SPMe_lumped__plating3C_25C');
		const sum = referenceSummary.runs['SPMe_lumped__plating3C_25C'];
		const result = run('plating-limited', 3);
		const cvStart = sum.time_to_4p2V_threshold_s;

		it('should reach 80 % within 3 % of the reference time', () => {
			expect(result.summary.reachedTarget).toBe(true);
			expect(rel(result.summary.timeToTarget_s!, sum.time_to_80pct_soc_s!)).toBeLessThan(0.03);
		});

		it('should follow the reference voltage within 10 mV RMS and the anode potential within 5 mV RMS', () => {
			const to = sum.time_to_80pct_soc_s!;
			expect(rmse(result, ref, (r) => r.voltage_V, 'voltage_V', 0, to)).toBeLessThan(0.01);
			expect(rmse(result, ref, (r) => r.anode_V, 'anodePotential_V', 0, Math.min(to, cvStart))).toBeLessThan(0.005);
		});

		it('should first hold the anode limit within 10 % of the reference time', () => {
			const refBind = sum.steps[0].t_end; // the anode potential reached 20 mV
			const ours = firstTime(result, (i) => result.series!.limit[i] === 'anode-potential');
			expect(rel(ours, refBind)).toBeLessThan(0.1);
		});

		it('should rise in temperature within 10 % of the reference peak rise', () => {
			const s = result.series!;
			let peak = -Infinity;
			for (let i = 0; i < s.t_s.length; i++) if (s.cellTemp_K[i] > peak) peak = s.cellTemp_K[i];
			// The reference's own maximum up to 80 % (our charge stops there).
			const refPeak = Math.max(...ref.filter((r) => r.time_s <= sum.time_to_80pct_soc_s!).map((r) => r.temp_K));
			expect(rel(peak - 298.15, refPeak - 298.15)).toBeLessThan(0.1);
		});

		it('should keep the anode potential at or above the 20 mV margin', () => {
			expect(result.summary.minAnodePotential_V).toBeGreaterThan(0.02 - 1e-3);
			expect(result.summary.violations).toEqual([]);
		});
	});

	describe('CC–CV 2C charge (SPMe_lumped cccv2C)', () => {
		const ref = readReference('SPMe_lumped__cccv2C_25C');
		const sum = referenceSummary.runs['SPMe_lumped__cccv2C_25C'];
		const result = run('cccv', 2);
		const endCc = sum.time_to_4p2V_threshold_s;

		it('should end the constant current within 5 % of the reference', () => {
			const ours = firstTime(result, (i) => result.series!.phase[i] === 'charge' && result.series!.limit[i] === 'max-voltage');
			expect(rel(ours, endCc)).toBeLessThan(0.05);
		});

		it('should reach 80 % within 3 % of the reference time', () => {
			expect(rel(result.summary.timeToTarget_s!, sum.time_to_80pct_soc_s!)).toBeLessThan(0.03);
		});

		it('should follow the reference voltage within 10 mV RMS and the anode potential within 5 mV RMS', () => {
			expect(rmse(result, ref, (r) => r.voltage_V, 'voltage_V', 0, sum.time_to_80pct_soc_s!)).toBeLessThan(0.01);
			expect(rmse(result, ref, (r) => r.anode_V, 'anodePotential_V', 0, sum.time_to_80pct_soc_s!)).toBeLessThan(0.005);
		});

		it('should reach the reference minimum anode potential (plating) within 5 mV and report it with its time', () => {
			expect(Math.abs(result.summary.minAnodePotential_V - sum.min_anode_potential_V_dense1s)).toBeLessThan(0.005);
			const msg = result.summary.violations.find((v) => v.includes('anode potential'));
			expect(msg).toMatch(/minimum of [−-]\d+(\.\d+)? mV( vs Li\/Li\+)? at [\d.]+ min after plug-in/);
		});

		it('should rise in temperature within 10 % of the reference up to 80 %', () => {
			const s = result.series!;
			const peak = Math.max(...s.cellTemp_K);
			const refPeak = Math.max(...ref.filter((r) => r.time_s <= sum.time_to_80pct_soc_s!).map((r) => r.temp_K));
			expect(rel(peak - 298.15, refPeak - 298.15)).toBeLessThan(0.1);
		});

		it('should keep the electrolyte concentration positive everywhere without the depletion limit binding', () => {
			expect(result.summary.timeUnderLimit_s['electrolyte-depletion']).toBe(0);
		});
	});

	describe('1C constant current (SPMe_lumped cc1C)', () => {
		const ref = readReference('SPMe_lumped__cc1C_25C');
		const sum = referenceSummary.runs['SPMe_lumped__cc1C_25C'];
		const result = run('cccv', 1);
		const endCc = sum.time_to_4p2V_threshold_s;

		it('should follow the reference voltage within 10 mV RMS and the anode potential within 5 mV RMS', () => {
			expect(rmse(result, ref, (r) => r.voltage_V, 'voltage_V', 0, endCc - 5)).toBeLessThan(0.01);
			expect(rmse(result, ref, (r) => r.anode_V, 'anodePotential_V', 0, endCc - 5)).toBeLessThan(0.005);
		});

		it('should end the constant current within 5 % of the reference', () => {
			const ours = firstTime(result, (i) => result.series!.phase[i] === 'charge' && result.series!.limit[i] === 'max-voltage');
			expect(rel(ours, endCc)).toBeLessThan(0.05);
		});
	});
});

describe('single particle model switch against the SPM reference (SPM_iso)', () => {
	// Isothermal: the bench cell tied to ambient by a conductance so large its temperature rise stays below 0.01 K.
	const iso = benchPack(1e4);
	const spm: SimulationOptions = { electrolyte: 'ideal' };
	// The SPM has no ohmic drop in the solid either: infinite transport everywhere.
	const noSolidDrop = (r: SimulationResult) => r;
	const cellWithoutSolidDrop = {
		...chen2020Cell,
		negative: { ...chen2020Cell.negative, conductivity_S_per_m: undefined },
		positive: { ...chen2020Cell.positive, conductivity_S_per_m: undefined }
	};
	const runSpm = (protocol: 'plating-limited' | 'cccv', currentC: number) =>
		noSolidDrop(
			simulate({
				cell: { ...cellWithoutSolidDrop, cccvReference: { temp_K: [298.15], currentC: [currentC] } },
				pack: { ...iso, thermal: { ...iso.thermal, enclosureToAmbient_W_per_K: 1e4 } },
				scenario: benchScenario(currentC * 5, capacity_Ah),
				strategy: null,
				options: { protocol, seriesInterval_s: 1, ...spm }
			})
		);

	it('should reach 80 % within 3 % of the SPM time under the plating-limited 3C protocol', () => {
		const sum = referenceSummary.runs['SPM_iso__plating3C_25C'];
		const r = runSpm('plating-limited', 3);
		expect(rel(r.summary.timeToTarget_s!, sum.time_to_80pct_soc_s!)).toBeLessThan(0.03);
		const ref = readReference('SPM_iso__plating3C_25C');
		expect(rmse(r, ref, (x) => x.voltage_V, 'voltage_V', 0, sum.time_to_80pct_soc_s!)).toBeLessThan(0.01);
	});

	it('should follow the SPM 1C voltage and anode potential', () => {
		const sum = referenceSummary.runs['SPM_iso__cc1C_25C'];
		const r = runSpm('cccv', 1);
		const ref = readReference('SPM_iso__cc1C_25C');
		const end = sum.time_to_4p2V_threshold_s;
		expect(rmse(r, ref, (x) => x.voltage_V, 'voltage_V', 0, end - 5)).toBeLessThan(0.01);
		expect(rmse(r, ref, (x) => x.anode_V, 'anodePotential_V', 0, end - 5)).toBeLessThan(0.005);
	});
});
