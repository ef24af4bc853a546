/**
 * Thermal network and coolant controller checked against results derived outside the code:
 * steady states of thermal circuits (Kirchhoff's current law for heat; Incropera & DeWitt,
 * Fundamentals of Heat and Mass Transfer, ch. 3, thermal resistances in series and parallel),
 * the first law per step, the definition of heat capacity (C = m·c_p), the discrete PI law and
 * conditional-integration anti-windup (Åström & Hägglund, PID Controllers: Theory, Design and
 * Tuning, 2nd ed., 1995, §3.5) and Carnot limits of heat pumps and refrigerators.
 */
import { describe, expect, it } from 'vitest';
import { LumpedNetwork, PackThermal, CoolantController, type ThermalActuation } from '../../src/lib/engine/thermal';
import { demoPack, type PackDesign } from '../../src/lib/engine/index';
import { nmc, C } from './helpers';

const actuation = (): ThermalActuation => ({ heaterElectrical_W: 0, heaterHeat_W: 0, chillerElectrical_W: 0, chillerHeat_W: 0 });

describe('lumped network: steady states and the first law', () => {
	it('should reach the series-resistance steady state of a three-node chain', () => {
		// Heat Q into node 0; 0 —UA01— 1 —UA12— 2 —UAamb— ambient. All of Q flows through every link in series:
		// T2 = T∞ + Q/UAamb, T1 = T2 + Q/UA12, T0 = T1 + Q/UA01 (Incropera & DeWitt, ch. 3).
		const Q = 500;
		const [ua01, ua12, uaAmb] = [20, 8, 4];
		const net = new LumpedNetwork([1000, 2000, 3000], [{ a: 0, b: 1, ua_W_per_K: ua01 }, { a: 1, b: 2, ua_W_per_K: ua12 }], [0, 0, uaAmb], 290);
		// Backward Euler with a step far beyond every time constant lands on the steady state.
		for (let k = 0; k < 5; k++) {
			net.prepareWith(1e9, 280, null);
			net.commitWith([Q], 280);
		}
		const T2 = 280 + Q / uaAmb;
		const T1 = T2 + Q / ua12;
		const T0 = T1 + Q / ua01;
		expect(net.temp_K[2]).toBeCloseTo(T2, 4);
		expect(net.temp_K[1]).toBeCloseTo(T1, 4);
		expect(net.temp_K[0]).toBeCloseTo(T0, 4);
		// The derivative vanishes at steady state.
		for (const d of net.derivative(net.temp_K, [Q, 0, 0], 280)) expect(Math.abs(d)).toBeLessThan(1e-9);
	});

	it('should give dT/dt = (Q − UA·(T − T∞))/C for one node', () => {
		// Energy balance of a lumped capacitance (Incropera & DeWitt, eq. 5.2 with a heat source).
		const net = new LumpedNetwork([2000], [], [10], 300);
		expect(net.derivative([310], [400], 300)[0]).toBeCloseTo((400 - 10 * 10) / 2000, 12);
		const two = new LumpedNetwork([100, 300], [{ a: 0, b: 1, ua_W_per_K: 6 }], [0, 2], 300);
		const d = two.derivative([320, 300], [0, 30], 290);
		expect(d[0]).toBeCloseTo((-6 * (320 - 300)) / 100, 12);
		expect(d[1]).toBeCloseTo((6 * (320 - 300) + 30 - 2 * (300 - 290)) / 300, 12);
	});

	it('should change the stored energy by exactly (heat in − loss to ambient)·Δt in every step', () => {
		// First law; backward Euler conserves it exactly because the exchanged heats cancel pairwise.
		const net = new LumpedNetwork([500, 800, 1500, 2500], [
			{ a: 0, b: 2, ua_W_per_K: 7 },
			{ a: 1, b: 2, ua_W_per_K: 3 },
			{ a: 2, b: 3, ua_W_per_K: 5 },
			{ a: 0, b: 3, ua_W_per_K: 1 }
		], [0, 0, 0.5, 4], 300);
		const dts = [1, 1, 7, 7, 0.5, 30];
		for (const dt of dts) {
			const before = net.storedEnergy_J();
			const fixed = [0, 0, 120, 0];
			net.prepareWith(dt, 270, fixed);
			const extra = [90, 40];
			const loss = net.commitWith(extra, 270);
			// Loss to ambient at the new temperatures, by its definition Σ UA_i,amb·(T_i − T∞).
			expect(loss).toBeCloseTo(0.5 * (net.temp_K[2] - 270) + 4 * (net.temp_K[3] - 270), 9);
			expect(net.storedEnergy_J() - before).toBeCloseTo((120 + 90 + 40 - loss) * dt, 6);
		}
		expect(net.storedEnergy_J()).toBeCloseTo(500 * net.temp_K[0] + 800 * net.temp_K[1] + 1500 * net.temp_K[2] + 2500 * net.temp_K[3], 6);
	});

	it("should report each node's response to a watt as the temperature a watt actually adds", () => {
		// Linearity of the network: T(Q) = T(0) + response·Q (superposition, any linear-circuit text).
		const mk = () => new LumpedNetwork([400, 900, 1200], [{ a: 0, b: 1, ua_W_per_K: 4 }, { a: 1, b: 2, ua_W_per_K: 2 }], [0, 0, 3], 300);
		const base = mk();
		base.prepareWith(5, 280, null);
		const with1 = mk();
		with1.prepareWith(5, 280, null);
		with1.commitWith([0, 100], 280);
		base.commitWith([], 280);
		for (let i = 0; i < 3; i++) expect(with1.temp_K[i] - base.temp_K[i]).toBeCloseTo(100 * with1.response(i, 1), 9);
		// Heat into node 1 warms node 1 most, and the far node least.
		expect(with1.response(1, 1)).toBeGreaterThan(with1.response(0, 1));
		expect(with1.response(0, 1)).toBeGreaterThan(with1.response(2, 1));
	});

	it('should match backward Euler solved by hand, also when the step length changes', () => {
		// Backward Euler for C·dT/dt = −L·T − A·(T − T∞) + Q: (C/Δt + L + A)·T' = C/Δt·T + A·T∞ + Q, a 2×2 solve.
		const mk = () => new LumpedNetwork([100, 200], [{ a: 0, b: 1, ua_W_per_K: 5 }], [0, 1], 320);
		const one = mk();
		one.prepareWith(10, 300, [50, 0]);
		one.commitWith([], 300);
		const a11 = 100 / 10 + 5;
		const a12 = -5;
		const a22 = 200 / 10 + 5 + 1;
		const b1 = (100 / 10) * 320 + 50;
		const b2 = (200 / 10) * 320 + 300;
		const det = a11 * a22 - a12 * a12;
		expect(one.temp_K[0]).toBeCloseTo((b1 * a22 - a12 * b2) / det, 9);
		expect(one.temp_K[1]).toBeCloseTo((a11 * b2 - a12 * b1) / det, 9);
		// A 10 s step then a 3 s step (the factorisation must follow the new step length).
		const second = mk();
		second.prepareWith(10, 300, [50, 0]);
		second.commitWith([], 300);
		second.prepareWith(3, 300, [50, 0]);
		second.commitWith([], 300);
		const c11 = 100 / 3 + 5;
		const c22 = 200 / 3 + 5 + 1;
		const d1 = (100 / 3) * one.temp_K[0] + 50;
		const d2 = (200 / 3) * one.temp_K[1] + 300;
		const det2 = c11 * c22 - 25;
		expect(second.temp_K[0]).toBeCloseTo((d1 * c22 + 5 * d2) / det2, 9);
		expect(second.temp_K[1]).toBeCloseTo((c11 * d2 + 5 * d1) / det2, 9);
	});
});

describe('pack network assembly', () => {
	const pack: PackDesign = demoPack;
	const th = pack.thermal;
	const nCells = pack.seriesCount * pack.parallelCount;

	it('should give each node its heat capacity: C = m·c_p per cell group, coolant ρ·V·c_p plus the plate, the enclosure', () => {
		// Definition of heat capacity.
		const net = new PackThermal(pack, nmc, C(20));
		pack.cellGroups.forEach((g, i) => {
			expect(net.capacity_J_per_K[i]).toBeCloseTo(g.share * nCells * nmc.thermal.mass_kg * nmc.thermal.specificHeat_J_per_kgK, 6);
			expect(net.cellsPerGroup[i]).toBeCloseTo(g.share * nCells, 9);
		});
		expect(net.capacity_J_per_K[net.coolant]).toBeCloseTo(th.coolantVolume_m3 * th.coolantDensity_kg_per_m3 * th.coolantSpecificHeat_J_per_kgK + th.plateHeatCapacity_J_per_K, 6);
		expect(net.capacity_J_per_K[net.enclosure]).toBeCloseTo(th.enclosureHeatCapacity_J_per_K, 6);
		expect(net.groups).toBe(pack.cellGroups.length);
		expect(net.coolant).toBe(pack.cellGroups.length);
		expect(net.enclosure).toBe(pack.cellGroups.length + 1);
		expect(Array.from(net.temp_K)).toEqual(new Array(net.n).fill(C(20)));
	});

	it("should settle to temperatures that satisfy every node's heat balance with the pack's conductances", () => {
		// Node balances written by hand (Kirchhoff's current law for heat). Group i to coolant: n_i cells, each the
		// plate conductance (× cooling factor) in series with the core-to-surface resistance (Incropera & DeWitt,
		// ch. 3: resistances in series add); group i to enclosure: its share of the cells-to-enclosure conductance.
		const net = new PackThermal(pack, nmc, C(0));
		const ambient = C(-5);
		const Qg = [2400, 900];
		const Qc = 1500;
		for (let k = 0; k < 5; k++) {
			net.prepare(1e9, ambient, Qc);
			net.commit(Qg, ambient);
		}
		const T = net.temp_K;
		const Tc = T[net.coolant];
		const Te = T[net.enclosure];
		let coolantIn = Qc;
		let enclosureIn = 0;
		pack.cellGroups.forEach((g, i) => {
			const perCell = 1 / (1 / (th.plateConductancePerCell_W_per_K * g.coolingFactor) + nmc.thermal.coreToSurfaceResistance_K_per_W);
			const toCoolant = perCell * g.share * nCells * (T[i] - Tc);
			const toEnclosure = th.cellsToEnclosure_W_per_K * g.share * (T[i] - Te);
			expect(toCoolant + toEnclosure).toBeCloseTo(Qg[i], 4);
			coolantIn += toCoolant;
			enclosureIn += toEnclosure;
		});
		const coolantToEnclosure = th.coolantToEnclosure_W_per_K * (Tc - Te);
		expect(coolantToEnclosure).toBeCloseTo(coolantIn, 4);
		// Everything leaves through the enclosure to ambient.
		expect(th.enclosureToAmbient_W_per_K * (Te - ambient)).toBeCloseTo(enclosureIn + coolantToEnclosure, 4);
		expect(th.enclosureToAmbient_W_per_K * (Te - ambient)).toBeCloseTo(Qg[0] + Qg[1] + Qc, 4);
	});

	it('should warm each node at Q/C at first', () => {
		// Lumped capacitance: over a step short against every time constant, ΔT = Q·Δt/C.
		const net = new PackThermal(pack, nmc, C(10));
		const dt = 1e-3;
		net.prepare(dt, C(10), 4000);
		net.commit([3000, 700], C(10));
		const dT = (i: number) => net.temp_K[i] - C(10);
		expect((dT(0) * net.capacity_J_per_K[0]) / (3000 * dt)).toBeCloseTo(1, 4);
		expect((dT(1) * net.capacity_J_per_K[1]) / (700 * dt)).toBeCloseTo(1, 4);
		expect((dT(net.coolant) * net.capacity_J_per_K[net.coolant]) / (4000 * dt)).toBeCloseTo(1, 4);
		expect(Math.abs(dT(net.enclosure))).toBeLessThan(1e-9);
	});
});

describe('coolant controller (discrete PI with conditional integration)', () => {
	const kp = demoPack.controller.proportionalGain_W_per_K;
	const ti = demoPack.controller.integralTime_s;
	const eta = demoPack.heater.heatPerElectrical;

	it('should heat with u = Kp·e·(1 + Δt/Ti) on the first step and integrate the error after', () => {
		// PI law u = Kp·(e + (1/Ti)·∫e dt), integral by forward rectangles (Åström & Hägglund, §3.5 / ch. 3).
		const ctrl = new CoolantController(demoPack);
		const out = actuation();
		const req = { setpoint_K: C(21), allowHeat: true, allowChill: true, heaterCap_W: 7000 };
		const e = 1; // 1 K below the set-point: Kp·e = 1.5 kW, inside the heater's range
		ctrl.update(req, C(20), C(0), 2, out);
		expect(out.heaterHeat_W).toBeCloseTo(kp * e * (1 + 2 / ti), 9);
		// PTC heater: electrical power = heat / efficiency.
		expect(out.heaterElectrical_W).toBeCloseTo(out.heaterHeat_W / eta, 9);
		expect(out.chillerHeat_W).toBe(0);
		for (let k = 0; k < 4; k++) ctrl.update(req, C(20), C(0), 2, out);
		expect(out.heaterHeat_W).toBeCloseTo(kp * e * (1 + (5 * 2) / ti), 9);
	});

	it('should chill with −u when the coolant is above the set-point, electrical power = heat / COP', () => {
		const ctrl = new CoolantController(demoPack);
		const out = actuation();
		const req = { setpoint_K: C(25), allowHeat: true, allowChill: true, heaterCap_W: 7000 };
		ctrl.update(req, C(27), C(30), 5, out);
		const q = kp * 2 * (1 + 5 / ti);
		expect(out.chillerHeat_W).toBeCloseTo(q, 9);
		expect(out.chillerElectrical_W).toBeCloseTo(q / ctrl.chillerCop(C(27), C(30)), 9);
		expect(out.heaterHeat_W).toBe(0);
		expect(out.heaterElectrical_W).toBe(0);
	});

	it('should stop integrating once the output saturates, so the output follows a change of error at once', () => {
		// Conditional integration (Åström & Hägglund §3.5): the integral only moves while the output is inside the
		// actuator range. With e = −2 K the P part is −3 kW; the integral winds by Kp/Ti·e·Δt = −25 W per 5 s step
		// until P + I reaches the chiller's −8 kW, i.e. I = −5 kW, and stays there.
		const ctrl = new CoolantController(demoPack);
		const out = actuation();
		const req = { setpoint_K: C(20), allowHeat: true, allowChill: true, heaterCap_W: 7000 };
		for (let k = 0; k < 300; k++) ctrl.update(req, C(22), C(30), 5, out);
		expect(out.chillerHeat_W).toBeCloseTo(8000, 9);
		// Error turns to +0.5 K: u = Kp·0.5 + (I + Kp/Ti·0.5·5) = 750 − 5000 + 6.25 = −4243.75 W (still chilling, less).
		ctrl.update(req, C(19.5), C(30), 5, out);
		expect(out.chillerHeat_W).toBeCloseTo(4243.75, 9);
		expect(out.heaterHeat_W).toBe(0);
		// Heater side: saturates at the cap × efficiency.
		const heat = new CoolantController(demoPack);
		const capped = { setpoint_K: C(40), allowHeat: true, allowChill: true, heaterCap_W: 2000 };
		for (let k = 0; k < 200; k++) heat.update(capped, C(0), C(0), 5, out);
		expect(out.heaterElectrical_W).toBeCloseTo(2000, 9);
		expect(out.heaterHeat_W).toBeCloseTo(2000 * eta, 9);
		// A cap above the heater's rating is held to the rating.
		const big = new CoolantController(demoPack);
		for (let k = 0; k < 200; k++) big.update({ ...capped, heaterCap_W: 1e6 }, C(0), C(0), 5, out);
		expect(out.heaterElectrical_W).toBeCloseTo(demoPack.heater.maxElectricalPower_W, 9);
	});

	it('should keep the integral inside the actuator range when an actuator is withdrawn', () => {
		// The integrator is kept within the actuators' range (Åström & Hägglund §3.5): when heating is withdrawn
		// (range 0 … −Q_chill) a heating integral is dropped, so a coolant just above the set-point is chilled at once.
		const out = actuation();
		const ctrl = new CoolantController(demoPack);
		const heatReq = { setpoint_K: C(21), allowHeat: true, allowChill: true, heaterCap_W: 7000 };
		for (let k = 0; k < 100; k++) ctrl.update(heatReq, C(20), C(0), 5, out); // integral ≈ +1.25 kW
		expect(out.heaterHeat_W).toBeGreaterThan(2000);
		ctrl.update({ ...heatReq, allowHeat: false }, C(21.2), C(0), 5, out);
		// I clamped to 0 after this step's integration; u = Kp·(−0.2) = −300 W.
		expect(out.chillerHeat_W).toBeCloseTo(300, 9);
		// Mirror image: a chilling integral is dropped when chilling is withdrawn.
		const cool = new CoolantController(demoPack);
		const coolReq = { setpoint_K: C(20), allowHeat: true, allowChill: true, heaterCap_W: 7000 };
		for (let k = 0; k < 100; k++) cool.update(coolReq, C(21), C(30), 5, out);
		expect(out.chillerHeat_W).toBeGreaterThan(2000);
		cool.update({ ...coolReq, allowChill: false }, C(19.8), C(30), 5, out);
		expect(out.heaterHeat_W).toBeCloseTo(300, 9);
	});

	it('should not heat when heating is not allowed, nor chill when chilling is not allowed', () => {
		const out = actuation();
		const noHeat = new CoolantController(demoPack);
		for (let k = 0; k < 10; k++) noHeat.update({ setpoint_K: C(30), allowHeat: false, allowChill: true, heaterCap_W: 7000 }, C(0), C(0), 5, out);
		expect(out.heaterHeat_W).toBe(0);
		expect(out.heaterElectrical_W).toBe(0);
		expect(out.chillerHeat_W).toBe(0);
		const noChill = new CoolantController(demoPack);
		for (let k = 0; k < 10; k++) noChill.update({ setpoint_K: C(0), allowHeat: true, allowChill: false, heaterCap_W: 7000 }, C(30), C(30), 5, out);
		expect(out.chillerHeat_W).toBe(0);
		expect(out.chillerElectrical_W).toBe(0);
		expect(out.heaterHeat_W).toBe(0);
		// Neither allowed, or no set-point: everything off.
		const off = new CoolantController(demoPack);
		off.update({ setpoint_K: C(30), allowHeat: false, allowChill: false, heaterCap_W: 7000 }, C(0), C(0), 5, out);
		expect(out).toEqual(actuation());
		off.update({ setpoint_K: null, allowHeat: true, allowChill: true, heaterCap_W: 7000 }, C(0), C(0), 5, out);
		expect(out).toEqual(actuation());
	});

	it('should forget its integral when switched off', () => {
		// A controller switched off and on again starts like a new one (bumpless restart from zero integral).
		const out = actuation();
		const used = new CoolantController(demoPack);
		const req = { setpoint_K: C(21), allowHeat: true, allowChill: true, heaterCap_W: 7000 };
		for (let k = 0; k < 50; k++) used.update(req, C(20), C(0), 5, out);
		used.update({ ...req, setpoint_K: null }, C(20), C(0), 5, out);
		used.update(req, C(20), C(0), 5, out);
		const first = out.heaterHeat_W;
		new CoolantController(demoPack).update(req, C(20), C(0), 5, out);
		expect(first).toBeCloseTo(out.heaterHeat_W, 9);
		expect(first).toBeCloseTo(kp * (1 + 5 / ti), 9);
	});

	it('should hold a heated thermal mass at its set-point with no steady-state error (integral action)', () => {
		// Integral action removes the steady-state error for a constant load (Åström & Hägglund, ch. 3).
		const ctrl = new CoolantController(demoPack);
		const out = actuation();
		const net = new LumpedNetwork([60_000], [], [40], C(0)); // coolant loop losing 40 W/K to a 0 °C ambient
		const req = { setpoint_K: C(25), allowHeat: true, allowChill: true, heaterCap_W: 7000 };
		for (let t = 0; t < 20_000; t += 5) {
			ctrl.update(req, net.temp_K[0], C(0), 5, out);
			net.prepareWith(5, C(0), [out.heaterHeat_W - out.chillerHeat_W]);
			net.commitWith([], C(0));
		}
		expect(net.temp_K[0]).toBeCloseTo(C(25), 3);
		// At steady state the heater supplies exactly the loss UA·(T − T∞) = 40 W/K × 25 K.
		expect(out.heaterHeat_W).toBeCloseTo(1000, 1);
	});
});

describe('heat pump and chiller coefficients of performance', () => {
	it('should give a PTC heater its efficiency whatever the temperatures', () => {
		const ctrl = new CoolantController(demoPack);
		expect(ctrl.heaterCop(C(-20), C(-30))).toBe(demoPack.heater.heatPerElectrical);
		expect(ctrl.heaterCop(C(40), C(30))).toBe(demoPack.heater.heatPerElectrical);
	});

	it('should bound a heat pump by the Carnot heating COP, never below 1 (resistive back-up)', () => {
		// Carnot heating COP T_hot/(T_hot − T_cold) (any thermodynamics text), with the condenser 5 K above the
		// coolant and the evaporator the condenser approach below ambient (the heat-exchanger approaches of the model).
		const hp: PackDesign = { ...demoPack, heater: { kind: 'heat-pump', maxElectricalPower_W: 5000, heatPerElectrical: 4 }, chiller: { ...demoPack.chiller, carnotFraction: 0.5, condenserApproach_K: 10 } };
		const ctrl = new CoolantController(hp);
		const carnot = (coolant_K: number, ambient_K: number) => (coolant_K + 5) / (coolant_K + 5 - (ambient_K - 10));
		// Mild: the nominal COP binds. 0.5·(298.15+5)/(303.15−(288.15−10)) ≈ 6.1 > 4.
		expect(ctrl.heaterCop(C(25), C(15))).toBe(4);
		// Cold: the Carnot bound binds.
		expect(ctrl.heaterCop(C(20), C(-20))).toBeCloseTo(0.5 * carnot(C(20), C(-20)), 9);
		expect(ctrl.heaterCop(C(20), C(-20))).toBeLessThan(4);
		// Very cold and a hot loop: Carnot share below 1 — the heat pump is never worse than resistive heating.
		const poor: PackDesign = { ...hp, chiller: { ...hp.chiller, carnotFraction: 0.1 } };
		expect(new CoolantController(poor).heaterCop(C(60), C(-30))).toBe(1);
		// Ambient warmer than the condenser: no Carnot bound, the nominal COP applies.
		expect(ctrl.heaterCop(C(10), C(40))).toBe(4);
		// Second law: colder ambient, lower COP.
		expect(ctrl.heaterCop(C(20), C(-25))).toBeLessThan(ctrl.heaterCop(C(20), C(-15)));
	});

	it('should bound the chiller COP by Carnot between the coolant and the hotter of ambient and coolant, never below 0.1', () => {
		// Carnot refrigeration COP T_cold/(T_hot − T_cold) (any thermodynamics text); evaporator 5 K below the coolant,
		// condenser the approach above the hotter of ambient and coolant (heat must be rejected somewhere warmer).
		const pack: PackDesign = { ...demoPack, chiller: { ...demoPack.chiller, nominalCop: 100, carnotFraction: 1, condenserApproach_K: 15 } };
		const ctrl = new CoolantController(pack);
		const cop = (coolant_K: number, hot_K: number) => (coolant_K - 5) / (hot_K + 15 - (coolant_K - 5));
		expect(ctrl.chillerCop(C(30), C(45))).toBeCloseTo(cop(C(30), C(45)), 9);
		// Coolant hotter than ambient: the condenser still sits above the coolant.
		expect(ctrl.chillerCop(C(40), C(20))).toBeCloseTo(cop(C(40), C(40)), 9);
		// Nominal COP caps a mild case.
		const capped = new CoolantController({ ...pack, chiller: { ...pack.chiller, nominalCop: 2 } });
		expect(capped.chillerCop(C(30), C(20))).toBe(2);
		// Floor: a (test-only) Carnot share of 1 % still gives at least 0.1.
		const floor = new CoolantController({ ...pack, chiller: { ...pack.chiller, carnotFraction: 0.01, condenserApproach_K: 40 } });
		expect(floor.chillerCop(C(-5), C(55))).toBe(0.1);
	});
});
