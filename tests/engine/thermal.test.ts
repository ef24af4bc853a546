import { describe, expect, it } from 'vitest';
import { Solver } from 'odex';
import { LumpedNetwork, PackThermal, CoolantController } from '../../src/lib/engine/thermal';
import { demoPack } from '../../src/lib/engine/index';
import { nmc, C } from './helpers';

describe('lumped-capacitance cooling', () => {
	it('should follow T − T∞ = (T0 − T∞)·exp(−t/τ)', () => {
		// Incropera & DeWitt, Fundamentals of Heat and Mass Transfer, eq. 5.6 (lumped capacitance).
		const C_J_per_K = 1000;
		const hA = 10; // τ = 100 s
		const net = new LumpedNetwork([C_J_per_K], [], [hA], 400);
		const dt = 0.05;
		for (let t = dt; t <= 300 + 1e-9; t += dt) {
			net.prepareWith(dt, 300, null);
			net.commitWith([], 300);
		}
		const exact = 300 + 100 * Math.exp(-300 / 100);
		expect(Math.abs(net.temp_K[0] - exact)).toBeLessThan(0.01);
	});

	it('should reproduce Incropera & DeWitt Example 5.1 (thermocouple junction)', () => {
		// Incropera & DeWitt, Example 5.1 (values from memory): h = 400 W/(m²K), ρ = 8500 kg/m³,
		// c = 400 J/(kg·K); τ = 1 s gives D = 6hτ/(ρc) = 0.706 mm; from 25 °C in a 200 °C gas it reaches 199 °C after ≈ 5.2 s.
		const h = 400;
		const rho = 8500;
		const c = 400;
		const D = (6 * h * 1) / (rho * c);
		expect(D * 1000).toBeCloseTo(0.706, 3);
		const area = Math.PI * D * D;
		const volume = (Math.PI * D ** 3) / 6;
		const net = new LumpedNetwork([rho * volume * c], [], [h * area], C(25));
		const dt = 1e-3;
		let t = 0;
		while (net.temp_K[0] < C(199)) {
			net.prepareWith(dt, C(200), null);
			net.commitWith([], C(200));
			t += dt;
		}
		expect(t).toBeGreaterThan(5.1);
		expect(t).toBeLessThan(5.25);
	});

	it('should agree with an odex (Gragg–Bulirsch–Stoer) solution of the demo pack network', () => {
		// Cross-check of assembly and time stepping: the same ODE solved by odex (Hairer & Wanner's ODEX)
		// to 1e-10; the engine's backward Euler at 1 s must agree within 0.05 K after an hour of heating
		// (common practice, no source, for the tolerance).
		const pack = new PackThermal(demoPack, nmc, C(-10));
		const heat = new Array<number>(pack.n).fill(0);
		heat[0] = 3000;
		heat[1] = 900;
		heat[pack.coolant] = 5000;
		const T0 = Array.from(pack.temp_K);
		const solver = new Solver(pack.n);
		solver.absoluteTolerance = solver.relativeTolerance = 1e-10;
		const ref = solver.solve((_t, y) => pack.derivative(y, heat, C(-10)), 0, T0, 3600).y;
		for (let t = 0; t < 3600; t++) {
			pack.prepare(1, C(-10), heat[pack.coolant]);
			pack.commit([heat[0], heat[1]], C(-10));
		}
		for (let i = 0; i < pack.n; i++) expect(Math.abs(pack.temp_K[i] - ref[i]), `node ${i}`).toBeLessThan(0.05);
	});
});

describe('coolant controller', () => {
	it('should stay within the heater budget and stop integrating while saturated (anti-windup)', () => {
		// Åström & Hägglund, PID Controllers (1995), §3.5: conditional integration.
		const ctrl = new CoolantController(demoPack);
		const out = { heaterElectrical_W: 0, heaterHeat_W: 0, chillerElectrical_W: 0, chillerHeat_W: 0 };
		const req = { setpoint_K: C(40), allowHeat: true, allowChill: true, heaterCap_W: 3000 };
		for (let k = 0; k < 100; k++) ctrl.update(req, C(-10), C(-10), 5, out);
		expect(out.heaterElectrical_W).toBeCloseTo(3000, 6);
		// After a long saturation the controller must leave saturation as soon as the error changes sign.
		ctrl.update(req, C(41), C(-10), 5, out);
		expect(out.heaterElectrical_W).toBe(0);
		expect(out.chillerHeat_W).toBeGreaterThan(0);
	});

	it('should bound the chiller COP by the Carnot limit', () => {
		// Carnot refrigeration COP = T_cold/(T_hot − T_cold) (any thermodynamics text).
		const ctrl = new CoolantController({ ...demoPack, chiller: { ...demoPack.chiller, nominalCop: 10, carnotFraction: 1 } });
		const cop = ctrl.chillerCop(C(30), C(45));
		const tEvap = C(30) - 5;
		const tCond = C(45) + demoPack.chiller.condenserApproach_K;
		expect(cop).toBeCloseTo(tEvap / (tCond - tEvap), 9);
		expect(cop).toBeLessThan(10);
	});
});
