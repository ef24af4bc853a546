import { describe, expect, it } from 'vitest';
import { simulate } from '../../src/lib/engine/index';
import { input, C } from './helpers';

describe('conservation over a full scenario (drive, pre-conditioning, dwell, charge)', () => {
	const strategy = { leadTime_s: 1200, coolantSetpoint_K: C(30) };
	const runs = [
		['cold with pre-conditioning', input({ ambient_K: C(-10) }, strategy)],
		['hot baseline (chiller working)', input({ ambient_K: C(40) }, null)]
	] as const;

	for (const [name, inp] of runs) {
		it(`should balance thermal energy within 0.1 % (${name})`, () => {
			// First law for the lumped network: heat generated + heater heat − chiller heat − loss to ambient = Δ stored.
			const { energyBalance: e } = simulate(inp).summary;
			const inflow = e.heatGenerated_Wh + e.heaterHeat_Wh - e.chillerHeat_Wh - e.lossToAmbient_Wh;
			const scale = e.heatGenerated_Wh + e.heaterHeat_Wh + e.chillerHeat_Wh + Math.abs(e.lossToAmbient_Wh);
			expect(scale).toBeGreaterThan(100);
			expect(Math.abs(inflow - e.storedChange_Wh) / scale).toBeLessThan(1e-3);
		});

		it(`should balance charge within 0.1 % (${name})`, () => {
			// Faraday: ampere-hours through the cell = change of lithium in the negative particles = −change in the positive.
			const { chargeBalance: q } = simulate(inp).summary;
			expect(Math.abs(q.throughput_Ah)).toBeGreaterThan(10);
			expect(Math.abs(q.negativeLithiumChange_Ah / q.throughput_Ah - 1)).toBeLessThan(1e-3);
			expect(Math.abs(-q.positiveLithiumChange_Ah / q.throughput_Ah - 1)).toBeLessThan(1e-3);
		});
	}

	it('should add up the thermal energy by source', () => {
		// Definition (product's own): total = heater + chiller, split by pack (drive + dwell) and grid (charge).
		const s = simulate(runs[0][1]).summary;
		expect(s.thermalEnergyTotal_Wh).toBeCloseTo(s.heaterEnergyDrive_Wh + s.heaterEnergyCharge_Wh + s.chillerEnergyDrive_Wh + s.chillerEnergyCharge_Wh, 9);
		expect(s.heaterEnergyDrive_Wh).toBeGreaterThan(0);
	});
});
