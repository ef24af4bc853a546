/**
 * Scenario timeline and charging controllers checked against their definitions and balances:
 * - "largest current that keeps every limit" (docs/engine): where a limit is recorded as binding,
 *   its quantity sits on the limit within the stated tolerances (CONTROL_TOLERANCE);
 * - power balance at the pack terminals, P = n·I·V, and the charger's power shared with the
 *   heater and chiller while charging (docs/scenario-format.md);
 * - the CC–CV protocol's current from its temperature table (linear between points);
 * - targets, time cap, lead time and series sampling as the scenario format defines them;
 * - Faraday and the first law over whole scenarios.
 * Each run is computed inside its test.
 */
import { describe, expect, it } from 'vitest';
import { simulate, CONTROL_TOLERANCE, cellWindow, type SimulationResult, type CellParams, type PackDesign } from '../../src/lib/engine/index';
import { input, soaked, nmc, C } from './helpers';

const nCells = (p: PackDesign) => p.seriesCount * p.parallelCount;
const chargeIdx = (r: SimulationResult) => r.series!.phase.map((p, i) => (p === 'charge' ? i : -1)).filter((i) => i >= 0);

describe('where a limit binds, its quantity sits on the limit', () => {
	it('should hold the anode potential at the margin while it limits, and the voltage at the maximum while it limits', () => {
		// Largest current that keeps anode potential ≥ margin and V ≤ V_max: while a limit binds, the constraint
		// is active (within the stated tolerance) — otherwise a larger current would have been allowed.
		const r = simulate(input(soaked(25, { arrivalSoc: 0.1, charger: { maxCurrent_A: 330, maxPower_W: 350_000 }, target: { soc: 0.97 } }), null, { seriesInterval_s: 1 }));
		const s = r.series!;
		const lim = nmc.limits;
		let anodeRows = 0;
		let voltageRows = 0;
		for (const i of chargeIdx(r)) {
			if (s.limit[i] === 'anode-potential') {
				anodeRows++;
				expect(Math.abs(s.anodePotential_V[i] - lim.anodePotentialMargin_V)).toBeLessThanOrEqual(CONTROL_TOLERANCE.anode_V);
			} else if (s.limit[i] === 'max-voltage') {
				voltageRows++;
				expect(Math.abs(s.voltage_V[i] - lim.maxVoltage_V)).toBeLessThanOrEqual(CONTROL_TOLERANCE.voltage_V);
			} else if (s.limit[i] === 'charger-current') {
				// The charger's current is shared by the parallel strings.
				expect(s.current_A[i] * demoPackParallel()).toBeCloseTo(330, 6);
			}
		}
		expect(anodeRows).toBeGreaterThan(30);
		expect(voltageRows).toBeGreaterThan(30);
		expect(r.summary.reachedTarget).toBe(true);
		expect(r.summary.finalSoc).toBeCloseTo(0.97, 6);
	});

	it("should hold the pack's power at the charger's, less the heater and chiller, while the charger's power limits", () => {
		// The charger feeds the pack and the thermal system (docs/scenario-format.md): n·I·V + P_heater + P_chiller = P_max.
		const r = simulate(input(soaked(-5, { arrivalSoc: 0.2, charger: { maxCurrent_A: 500, maxPower_W: 40_000 } }), null, { seriesInterval_s: 1 }));
		const s = r.series!;
		let rows = 0;
		let heated = 0;
		for (const i of chargeIdx(r)) {
			const total = s.packPower_W[i] + s.heaterPower_W[i] + s.chillerPower_W[i];
			expect(total).toBeLessThanOrEqual(40_000 * (1 + 1e-4));
			if (s.limit[i] === 'charger-power') {
				rows++;
				expect(total).toBeGreaterThan(40_000 * (1 - 1e-3));
				if (s.heaterPower_W[i] > 100) heated++;
			}
		}
		expect(rows).toBeGreaterThan(60);
		expect(heated).toBeGreaterThan(10);
		expect(r.summary.timeUnderLimit_s['charger-power']).toBeGreaterThan(60);
	});

	it('should hold the hottest cell group at the maximum temperature while temperature limits', () => {
		// A badly cooled pack (test copy: plate conductance 0.02 W/K per cell) and a 40 °C cell maximum.
		const hot: PackDesign = { ...input().pack, thermal: { ...input().pack.thermal, plateConductancePerCell_W_per_K: 0.02 } };
		const cell: CellParams = { ...nmc, limits: { ...nmc.limits, maxTemp_K: C(40) } };
		const inp = input(soaked(30, { arrivalSoc: 0.2, target: { soc: 0.9 } }), null, { seriesInterval_s: 1 });
		const r = simulate({ ...inp, cell, pack: { ...hot, defaultPolicy: { ...hot.defaultPolicy, chillAbove_K: C(38), chillSetpoint_K: C(30) } } });
		const s = r.series!;
		let rows = 0;
		for (const i of chargeIdx(r)) {
			expect(s.cellTempMax_K[i]).toBeLessThanOrEqual(C(40) + CONTROL_TOLERANCE.temp_K);
			if (s.limit[i] === 'max-temperature') {
				rows++;
				expect(s.cellTempMax_K[i]).toBeGreaterThan(C(40) - CONTROL_TOLERANCE.temp_K);
			}
		}
		expect(rows).toBeGreaterThan(30);
		expect(r.summary.peakCellTemp_K).toBeLessThanOrEqual(C(40) + CONTROL_TOLERANCE.temp_K);
		expect(r.summary.violations).toEqual([]);
	});

	it('should treat electrolyte depletion as a limit on current and say so', () => {
		// Depletion is a limit, not something to compute through (docs/cell-model): a test copy of the cell with a
		// tenth of the electrolyte diffusivity and a 300 mol/m³ floor; the floor is never crossed, so the clamp that
		// guards a replay never binds.
		const cell: CellParams = {
			...nmc,
			electrolyte: { ...nmc.electrolyte, diffusivityModel: { kind: 'constant' }, diffusivity_m2_s: 2e-11 },
			limits: { ...nmc.limits, minElectrolyteConcentration_mol_m3: 300 }
		};
		const r = simulate({ ...input(soaked(25, { arrivalSoc: 0.2, target: { soc: 0.6 } }), null, { seriesInterval_s: 1 }), cell });
		expect(r.summary.timeUnderLimit_s['electrolyte-depletion']).toBeGreaterThan(30);
		expect(r.summary.notes.some((n) => /electrolyte depletion limited the charging current for [\d.]+ min/.test(n))).toBe(true);
		expect(r.summary.notes.some((n) => n.includes('floor'))).toBe(false);
		expect(r.summary.violations).toEqual([]);
		expect(r.series!.limit.includes('electrolyte-depletion')).toBe(true);
	});
});

function demoPackParallel(): number {
	return input().pack.parallelCount;
}

describe('targets, time cap and protocol', () => {
	it('should stop exactly at an energy target', () => {
		// Energy added = ∫ n·I·V dt at the terminals (definition); the last period is shortened to end on the target.
		const r = simulate(input(soaked(25, { arrivalSoc: 0.2, target: { energy_Wh: 20_000 } }), null, { seriesInterval_s: 1 }));
		expect(r.summary.reachedTarget).toBe(true);
		// Exact to first order in the last period's shortening (the voltage of the shorter step differs slightly).
		expect(Math.abs(r.summary.energyAdded_Wh - 20_000)).toBeLessThan(1e-6 * 20_000);
		expect(r.series!.limit[r.series!.limit.length - 1]).toBe('target');
		// Trapezoid-free check of the definition: Σ P·Δt over the 1 s samples ≈ the energy added (last period partial).
		const s = r.series!;
		let e = 0;
		for (const i of chargeIdx(r)) if (i > 0 && s.phase[i - 1] === 'charge') e += s.packPower_W[i] * (s.t_s[i] - s.t_s[i - 1]);
		expect(Math.abs(e / 3600 - 20_000)).toBeLessThan(0.01 * 20_000);
		expect(r.summary.averageChargePower_W / ((20_000 * 3600) / r.summary.timeToTarget_s!)).toBeCloseTo(1, 6);
	});

	it('should end on whichever target comes first', () => {
		const both = simulate(input(soaked(25, { arrivalSoc: 0.2, target: { soc: 0.9, energy_Wh: 5_000 } }))).summary;
		expect(Math.abs(both.energyAdded_Wh - 5_000)).toBeLessThan(1e-6 * 5_000);
		expect(both.finalSoc).toBeLessThan(0.9);
		const socFirst = simulate(input(soaked(25, { arrivalSoc: 0.2, target: { soc: 0.3, energy_Wh: 90_000 } }))).summary;
		expect(socFirst.finalSoc).toBeCloseTo(0.3, 6);
		expect(socFirst.energyAdded_Wh).toBeLessThan(90_000);
	});

	it('should stop at the time cap, say so, and report the cap as the time', () => {
		const s = simulate(input(soaked(25, { arrivalSoc: 0.2, target: { soc: 0.9 }, timeCap_s: 600 }))).summary;
		expect(s.reachedTarget).toBe(false);
		expect(s.timeToTarget_s).toBe(600);
		expect(s.notes).toContain('the target was not reached within the 10 min time cap');
		expect(s.finalSoc).toBeLessThan(0.9);
		expect(s.finalSoc).toBeGreaterThan(0.2);
	});

	it("should charge CC–CV at the table's C-rate for the mean cell temperature, then hold the maximum voltage", () => {
		// CC–CV reference (docs): constant current = table C-rate (linear in temperature) × rated capacity until V_max.
		const rated = cellWindow(nmc, 1).ratedCapacity_Ah;
		const table = nmc.cccvReference;
		const rate = (T: number) => {
			let k = 0;
			while (k < table.temp_K.length - 2 && T > table.temp_K[k + 1]) k++;
			const f = Math.min(1, Math.max(0, (T - table.temp_K[k]) / (table.temp_K[k + 1] - table.temp_K[k])));
			return table.currentC[k] + f * (table.currentC[k + 1] - table.currentC[k]);
		};
		const r = simulate(input(soaked(5, { arrivalSoc: 0.2, target: { soc: 0.95 } }), null, { seriesInterval_s: 1, protocol: 'cccv' }));
		const s = r.series!;
		let cc = 0;
		let cv = 0;
		for (const i of chargeIdx(r)) {
			if (s.limit[i] === 'protocol-current') {
				cc++;
				// The table is read at the start of the period; a 1 s period warms the cells by far less than 0.1 K.
				expect(Math.abs(s.current_A[i] - rate(s.cellTemp_K[i]) * rated)).toBeLessThan(0.005 * rated);
			} else if (s.limit[i] === 'max-voltage') {
				cv++;
				expect(Math.abs(s.voltage_V[i] - nmc.limits.maxVoltage_V)).toBeLessThanOrEqual(CONTROL_TOLERANCE.voltage_V);
			}
		}
		expect(cc).toBeGreaterThan(100);
		expect(cv).toBeGreaterThan(10);
		expect(r.summary.protocol).toBe('cccv');
		// The CC-CV reference does not watch the anode potential; it never limits there.
		expect(r.summary.timeUnderLimit_s['anode-potential']).toBe(0);
	});

	it('should report plating under CC–CV with the minimum anode potential and when it happened', () => {
		// A cold cell charged at the 25 °C rate (test copy of the CC-CV table: 1C everywhere) drives the anode below
		// 0 V vs Li/Li+ (Arora, Doyle & White, J. Electrochem. Soc. 146 (1999) 3543: plating when it falls below 0 V).
		const cell: CellParams = { ...nmc, cccvReference: { temp_K: [C(-20), C(45)], currentC: [1, 1] } };
		const r = simulate({ ...input(soaked(-5, { arrivalSoc: 0.2, target: { soc: 0.5 } }), null, { seriesInterval_s: 1, protocol: 'cccv' }), cell });
		const s = r.summary;
		expect(s.minAnodePotential_V).toBeLessThan(0);
		const msg = s.violations.find((v) => v.includes('anode potential'));
		expect(msg).toBeDefined();
		// The message gives the run's minimum (in mV, one decimal) and its time after plug-in.
		const mv = Number(/minimum of ([−-]?[\d.]+) mV/.exec(msg!)![1].replace('−', '-'));
		expect(mv).toBeCloseTo(s.minAnodePotential_V * 1000, 1);
		const series = r.series!;
		let tMin = NaN;
		let vMin = Infinity;
		for (const i of chargeIdx(r)) if (series.anodePotential_V[i] < vMin) {
			vMin = series.anodePotential_V[i];
			tMin = series.t_s[i];
		}
		const minutes = Number(/at ([\d.]+) min after plug-in/.exec(msg!)![1]);
		// Times in the message are from plug-in (no drive, no dwell: plug-in at 0 s); the series time is the end of a step,
		// and a step is at most 32 control periods long (adaptive steps), so they agree to within one such step.
		expect(Math.abs(minutes * 60 - tMin)).toBeLessThanOrEqual(33);
		expect(msg).toMatch(/lithium plating likely/);
	});
});

describe('drive, dwell and pre-conditioning', () => {
	it('should draw the traction power plus the thermal loads from the pack while driving', () => {
		// Power balance at the pack terminals: −n·I·V = P_traction + P_heater + P_chiller (no derating).
		const r = simulate(
			input({ ambient_K: C(-10), drive: { duration_s: 1200, profile: { kind: 'constant', power_W: 30_000 } }, dwell_s: 0 }, { leadTime_s: 600, coolantSetpoint_K: C(30) }, { seriesInterval_s: 1 })
		);
		const s = r.series!;
		let rows = 0;
		for (let i = 1; i < s.t_s.length; i++) {
			if (s.phase[i] !== 'drive' || s.t_s[i] > 0) continue;
			rows++;
			expect(-s.packPower_W[i]).toBeCloseTo(30_000 + s.heaterPower_W[i] + s.chillerPower_W[i], 0);
		}
		expect(rows).toBeGreaterThan(200);
		expect(r.summary.deratingDuration_s).toBe(0);
	});

	it('should start pre-conditioning exactly the lead time before arrival, and not before', () => {
		const r = simulate(input({ ambient_K: C(-10), dwell_s: 0 }, { leadTime_s: 600, coolantSetpoint_K: C(30) }, { seriesInterval_s: 1 }));
		const s = r.series!;
		for (let i = 0; i < s.t_s.length; i++) {
			if (s.phase[i] !== 'drive') continue;
			// Samples are taken at the end of each 5 s step.
			if (s.t_s[i] <= -600 + 1e-9) expect(s.heaterPower_W[i]).toBe(0);
			else expect(s.heaterPower_W[i]).toBeGreaterThan(0);
		}
		expect(r.summary.effectiveLeadTime_s).toBe(600);
		expect(r.summary.baseline).toBe(false);
	});

	it('should start pre-conditioning at departure when the lead time is longer than the drive, and say so', () => {
		const r = simulate(input({ ambient_K: C(-10), drive: { duration_s: 900, profile: { kind: 'constant', power_W: 20_000 } } }, { leadTime_s: 1800, coolantSetpoint_K: C(30) }));
		expect(r.summary.effectiveLeadTime_s).toBe(900);
		expect(r.summary.notes).toContain('lead time 30 min is longer than the 15 min drive; pre-conditioning starts at departure');
		// Exactly as long as the drive: nothing to clamp, no note.
		const equal = simulate(input({ ambient_K: C(-10), drive: { duration_s: 900, profile: { kind: 'constant', power_W: 20_000 } } }, { leadTime_s: 900, coolantSetpoint_K: C(30) }));
		expect(equal.summary.effectiveLeadTime_s).toBe(900);
		expect(equal.summary.notes.some((n) => n.startsWith('lead time'))).toBe(false);
		const base = simulate(input({ ambient_K: C(-10) }));
		expect(base.summary.effectiveLeadTime_s).toBe(0);
		expect(base.summary.baseline).toBe(true);
	});

	it('should arrive at about the nominal state of charge after a drive without pre-conditioning', () => {
		// The departure SOC is back-computed from the drive energy over the pack's ampere-hours at the mean OCV
		// (E = Q·V̄). The NMC 811/graphite open-circuit voltage lies between about 3.5 and 4.1 V over this range
		// (Chen et al. 2020 OCP fits); under load the terminal voltage is lower than the OCV, so more charge is
		// drawn than E/V̄ and the pack arrives a little emptier than nominal, never fuller.
		const s = simulate(input({ ambient_K: C(25), arrivalSoc: 0.3, drive: { duration_s: 3600, profile: { kind: 'constant', power_W: 40_000 } } })).summary;
		const packAh = cellWindow(nmc, 1).capacity_Ah * nCells(input().pack);
		const drawnAt = (volts: number) => (40_000 * 3600) / volts / 3600 / packAh;
		expect(s.departureSoc).toBeGreaterThan(0.3 + drawnAt(4.1));
		expect(s.departureSoc).toBeLessThan(0.3 + drawnAt(3.5));
		expect(s.arrivalSoc).toBeLessThanOrEqual(0.3 + 1e-9);
		expect(s.arrivalSoc).toBeGreaterThan(0.3 - 0.05);
	});

	it('should derate a drive the cells cannot deliver to the voltage or temperature limit, and book the shortfall', () => {
		// Derating: the most negative current that keeps V ≥ V_min, T ≤ T_max and the electrolyte above its floor
		// (docs). With infinite electrolyte transport (the single particle model option) only the voltage and the
		// temperature can bind, so while derated one of them sits on its limit; shortfall = ∫ (requested − delivered) dt.
		const r = simulate(
			input({ ambient_K: C(-25), arrivalSoc: 0.3, drive: { duration_s: 300, profile: { kind: 'constant', power_W: 350_000 } }, dwell_s: 0 }, null, { seriesInterval_s: 1, electrolyte: 'ideal' })
		);
		const s = r.series!;
		let shortfall_J = 0;
		let atMin = 0;
		for (let i = 1; i < s.t_s.length; i++) {
			// (the arrival point is sampled twice: once at the end of the last step and once forced at arrival)
			if (s.phase[i] !== 'drive' || s.t_s[i] > 0 || s.t_s[i] === s.t_s[i - 1]) continue;
			expect(s.voltage_V[i]).toBeGreaterThanOrEqual(nmc.limits.minVoltage_V - 1e-4);
			const requested = 350_000 + s.heaterPower_W[i] + s.chillerPower_W[i];
			const delivered = -s.packPower_W[i];
			if (delivered < requested * 0.999) {
				atMin++;
				const onVoltage = s.voltage_V[i] < nmc.limits.minVoltage_V + 1e-3;
				const onTemperature = s.cellTempMax_K[i] > nmc.limits.maxTemp_K - CONTROL_TOLERANCE.temp_K;
				expect(onVoltage || onTemperature).toBe(true);
				shortfall_J += (requested - delivered) * (s.t_s[i] - s.t_s[i - 1]);
			}
		}
		expect(atMin).toBeGreaterThan(3);
		expect(r.summary.deratingDuration_s).toBeCloseTo(atMin * 5, 6);
		expect(r.summary.deratingEnergyShortfall_Wh).toBeCloseTo(shortfall_J / 3600, 3);
		expect(r.summary.notes.some((n) => n.startsWith('drive power was derated for'))).toBe(true);
	});

	it('should limit regenerative braking like a charge', () => {
		// Downhill into a nearly full pack: the regenerative current is held to V_max (the friction brakes take the
		// rest), so the voltage never exceeds it (docs: "regenerative braking limited like a charge").
		const r = simulate(
			input({ ambient_K: C(0), arrivalSoc: 0.9, drive: { duration_s: 600, profile: { kind: 'constant', power_W: -150_000 } }, dwell_s: 0, target: { soc: 0.95 } }, null, { seriesInterval_s: 1 })
		);
		const s = r.series!;
		let drive = 0;
		for (let i = 1; i < s.t_s.length; i++) {
			if (s.phase[i] !== 'drive' || s.t_s[i] > 0) continue;
			drive++;
			expect(s.current_A[i]).toBeGreaterThanOrEqual(0);
			expect(s.anodePotential_V[i]).toBeGreaterThanOrEqual(nmc.limits.anodePotentialMargin_V - 1e-4);
		}
		expect(drive).toBeGreaterThan(100);
		// Less charge went in than the braking power offered (−150 kW for 10 min ≈ 25 kWh at ≈ 4 V).
		expect(r.summary.arrivalSoc).toBeLessThan(0.98);
	});
});

describe('series and summary bookkeeping', () => {
	it('should sample the series at the requested interval and in phase order', () => {
		// One-period charging steps, so every step boundary is a possible sample time.
		const r = simulate(input({ ambient_K: C(0), drive: { duration_s: 600, profile: { kind: 'constant', power_W: 20_000 } }, dwell_s: 120 }, null, { seriesInterval_s: 30, adaptiveSteps: false }));
		const s = r.series!;
		expect(s.t_s[0]).toBe(-600);
		expect(s.phase[0]).toBe('drive');
		const order = { drive: 0, dwell: 1, charge: 2 } as const;
		for (let i = 1; i < s.t_s.length; i++) {
			expect(s.t_s[i]).toBeGreaterThanOrEqual(s.t_s[i - 1]);
			expect(order[s.phase[i]]).toBeGreaterThanOrEqual(order[s.phase[i - 1]]);
		}
		// Regular samples are 30 s apart (forced samples at phase changes and the end may be closer).
		const gaps = s.t_s.slice(1).map((t, i) => t - s.t_s[i]);
		expect(Math.max(...gaps)).toBeLessThanOrEqual(30 + 5);
		expect(gaps.filter((g) => Math.abs(g - 30) < 1e-6).length).toBeGreaterThan(gaps.length / 2);
		expect(s.phase.includes('dwell')).toBe(true);
		for (const k of Object.keys(s) as (keyof typeof s)[]) expect(s[k].length).toBe(s.t_s.length);
		expect(simulate(input({}, null, { keepSeries: false })).series).toBeNull();
	});

	it('should watch the highest cell group voltage while charging, the lowest otherwise, and the hottest group', () => {
		// Definitions in the result format (TimeSeries): voltage = highest group while charging, lowest otherwise.
		// The loop-end group is cooled worse (cooling factor 0.7), so it is the hottest while the cells heat up.
		const r = simulate(input(soaked(25, { arrivalSoc: 0.2, target: { soc: 0.6 } }), null, { seriesInterval_s: 1 }));
		const s = r.series!;
		let hotter = 0;
		for (const i of chargeIdx(r)) {
			expect(s.cellTempMax_K[i]).toBeGreaterThanOrEqual(s.cellTemp_K[i]);
			if (s.cellTempMax_K[i] > s.cellTemp_K[i] + 0.01) hotter++;
		}
		expect(hotter).toBeGreaterThan(100);
		expect(r.summary.peakCellTemp_K).toBeCloseTo(Math.max(...s.cellTempMax_K), 6);
		expect(r.summary.maxChargeVoltage_V).toBeGreaterThanOrEqual(Math.max(...chargeIdx(r).map((i) => s.voltage_V[i])) - 1e-9);
	});

	it('should heat only during the charge under the default policy in the cold, and chill in the heat', () => {
		// Default policy (docs/scenario-format.md): heat the coolant toward the charge-heating target during the
		// charge only; chill when the cells are above the chill-above temperature.
		const cold = simulate(input({ ambient_K: C(-10) })).summary;
		expect(cold.heaterEnergyDrive_Wh).toBe(0);
		expect(cold.heaterEnergyCharge_Wh).toBeGreaterThan(0);
		expect(cold.chillerEnergyDrive_Wh + cold.chillerEnergyCharge_Wh).toBe(0);
		const hot = simulate(input(soaked(40, { arrivalSoc: 0.2 }))).summary;
		expect(hot.chillerEnergyCharge_Wh).toBeGreaterThan(0);
		expect(hot.heaterEnergyCharge_Wh).toBe(0);
		expect(hot.thermalEnergyTotal_Wh).toBeCloseTo(hot.chillerEnergyCharge_Wh + hot.chillerEnergyDrive_Wh, 9);
	});

	it('should balance charge and heat over a run with regenerative braking and a heat-pump heater', () => {
		// Faraday (throughput = change of lithium in each electrode) and the first law for the pack network.
		const pack: PackDesign = { ...input().pack, heater: { kind: 'heat-pump', maxElectricalPower_W: 4000, heatPerElectrical: 3 } };
		const r = simulate({
			...input({ ambient_K: C(-15), drive: { duration_s: 1200, profile: { kind: 'table', time_s: [0, 600, 1200], power_W: [30_000, -20_000, 10_000] } } }, { leadTime_s: 900, coolantSetpoint_K: C(25) }),
			pack
		});
		const { chargeBalance: q, energyBalance: e } = r.summary;
		expect(Math.abs(q.negativeLithiumChange_Ah / q.throughput_Ah - 1)).toBeLessThan(1e-6);
		expect(Math.abs(-q.positiveLithiumChange_Ah / q.throughput_Ah - 1)).toBeLessThan(1e-6);
		const inflow = e.heatGenerated_Wh + e.heaterHeat_Wh - e.chillerHeat_Wh - e.lossToAmbient_Wh;
		expect(Math.abs(inflow - e.storedChange_Wh)).toBeLessThan(1e-6 * (e.heatGenerated_Wh + e.heaterHeat_Wh));
		// Heat pump: heat delivered ≥ electrical energy (COP ≥ 1).
		expect(e.heaterHeat_Wh).toBeGreaterThanOrEqual(r.summary.heaterEnergyDrive_Wh + r.summary.heaterEnergyCharge_Wh - 1e-9);
	});
	it("should keep the heater within the strategy's power cap", () => {
		// strategy.heaterPowerCap_W: an electrical cap on the heater (docs/scenario-format.md).
		const r = simulate(input({ ambient_K: C(-20) }, { leadTime_s: 1200, coolantSetpoint_K: C(35), heaterPowerCap_W: 2500 }, { seriesInterval_s: 5 }));
		const s = r.series!;
		const t0 = s.t_s.findIndex((t) => t > -1200);
		expect(Math.max(...s.heaterPower_W)).toBeLessThanOrEqual(2500 + 1e-6);
		// Far from the set-point the capped heater runs flat out.
		expect(s.heaterPower_W[t0 + 2]).toBeCloseTo(2500, 6);
		const uncapped = simulate(input({ ambient_K: C(-20) }, { leadTime_s: 1200, coolantSetpoint_K: C(35) }, { seriesInterval_s: 5 })).series!;
		expect(Math.max(...uncapped.heaterPower_W)).toBeGreaterThan(2500);
	});

	it('should not heat during the charge when the pack has no charge-heating target', () => {
		// defaultPolicy.chargeHeatTarget_K = null: no heating (schema comment).
		const pack = { ...input().pack, defaultPolicy: { ...input().pack.defaultPolicy, chargeHeatTarget_K: null } };
		const s = simulate({ ...input({ ambient_K: C(-10) }), pack }).summary;
		expect(s.heaterEnergyCharge_Wh + s.heaterEnergyDrive_Wh).toBe(0);
	});

	it('should keep chill protection active under a pre-conditioning strategy', () => {
		// docs/scenario-format.md: when the cells pass chillAbove_K the controller chills toward chillSetpoint_K under
		// any strategy (and does not heat meanwhile).
		const pack = input().pack;
		const r = simulate(input(soaked(38, { arrivalSoc: 0.2, initialPackTemp_K: C(38) }), { leadTime_s: 0, coolantSetpoint_K: C(45) }, { seriesInterval_s: 1 }));
		const s = r.series!;
		let rows = 0;
		for (const i of chargeIdx(r)) {
			if (s.cellTempMax_K[i] > pack.defaultPolicy.chillAbove_K + 0.5) {
				rows++;
				expect(s.heaterPower_W[i]).toBe(0);
				expect(s.chillerPower_W[i]).toBeGreaterThan(0);
			}
		}
		expect(rows).toBeGreaterThan(30);
	});

	it('should report the pack power at the mean group voltage, between the lowest and the highest group', () => {
		// P = n·I·V̄ with V̄ the share-weighted group voltage; the series voltage is the highest group while charging
		// and the lowest while driving, so P/(n·I) lies on the right side of it.
		const r = simulate(input({ ambient_K: C(25), drive: { duration_s: 600, profile: { kind: 'constant', power_W: 40_000 } }, dwell_s: 0 }, null, { seriesInterval_s: 1 }));
		const s = r.series!;
		const n = nCells(input().pack);
		let charge = 0;
		let drive = 0;
		for (let i = 1; i < s.t_s.length; i++) {
			if (Math.abs(s.current_A[i]) < 1) continue;
			const vMean = s.packPower_W[i] / (n * s.current_A[i]);
			if (s.phase[i] === 'charge') {
				charge++;
				expect(vMean).toBeLessThanOrEqual(s.voltage_V[i] + 1e-9);
			} else if (s.phase[i] === 'drive' && s.t_s[i] < 0) {
				drive++;
				expect(vMean).toBeGreaterThanOrEqual(s.voltage_V[i] - 1e-9);
			}
		}
		expect(charge).toBeGreaterThan(100);
		expect(drive).toBeGreaterThan(100);
	});

	it('should generate more heat with the heat of mixing on than off over the same run', () => {
		// Thomas & Newman (2003): the relaxation of the particles' gradients releases heat that the usual Bernardi form
		// leaves out; over a run with a dwell the option adds it.
		const run = (heatOfMixing: boolean) => simulate(input({ ambient_K: C(25), dwell_s: 900 }, null, { keepSeries: false, heatOfMixing })).summary.energyBalance.heatGenerated_Wh;
		expect(run(true)).toBeGreaterThan(run(false) * 1.01);
	});
});

