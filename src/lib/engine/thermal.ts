/**
 * Pack thermal network (lumped capacitance) with heater, chiller and a
 * bounded coolant set-point controller.
 *
 * Nodes: one or two cell groups (e.g. a well-cooled and a poorly-cooled
 * group), the coolant loop with its cold plate, and the enclosure; ambient is
 * a boundary. Each node is one lumped capacitance, valid while its Biot number
 * stays below ~0.1 (Incropera & DeWitt, Fundamentals of Heat and Mass
 * Transfer, ch. 5); thick cells get a core-to-surface conduction resistance in
 * series with the plate conductance instead.
 *
 *   C_i dT_i/dt = Σ_j UA_ij (T_j − T_i) + UA_i,amb (T_amb − T_i) + Q_i
 *
 * Time stepping: backward Euler. The network is linear, so
 *   T' = M⁻¹ (C/Δt·T + UA_amb·T_amb + Q),  M = C/Δt + L,
 * and M⁻¹ is computed once per step length with mathjs (a 3×3 or 4×4 inverse,
 * not in the hot loop). Backward Euler is exactly energy-conservative for this
 * network: the exchanged heats cancel pairwise, so stored energy changes by
 * Σ Q·Δt minus the ambient loss at the new temperatures (checked in tests).
 *
 * Heater: electrical power 0…P_max into the coolant, heat = η·P (PTC, η ≈ 1)
 * or COP·P (heat pump, COP bounded by the Carnot heating COP).
 * Chiller: removes 0…Q_max from the coolant; electrical power = Q/COP with
 * COP = min(nominal, carnotFraction · T_evap/(T_cond − T_evap)), the Carnot
 * limit of a refrigeration cycle between coolant and ambient.
 */
import { inv } from 'mathjs';
import type { CellParams, PackDesign } from './schemas';

/**
 * A general lumped network: capacities (J/K), symmetric links (W/K) and
 * conductances to ambient (W/K), stepped by backward Euler.
 */
export class LumpedNetwork {
	readonly n: number;
	readonly capacity_J_per_K: Float64Array;
	readonly temp_K: Float64Array;
	/** Temperatures after the prepared step with no heat into the "response" nodes. */
	readonly base_K: Float64Array;
	protected readonly lap: number[][];
	protected readonly ambientUA_W_per_K: Float64Array;
	private cachedDt = -1;
	private minv: Float64Array[] = [];
	/** Inverses per step length: adaptive charging steps come back to a few lengths again and again. */
	private readonly inverses = new Map<number, Float64Array[]>();
	private readonly rhs: Float64Array;

	constructor(capacity_J_per_K: number[], links: { a: number; b: number; ua_W_per_K: number }[], ambientUA_W_per_K: number[], initialTemp_K: number) {
		const n = capacity_J_per_K.length;
		this.n = n;
		this.capacity_J_per_K = Float64Array.from(capacity_J_per_K);
		this.lap = Array.from({ length: n }, () => new Array<number>(n).fill(0));
		for (const { a, b, ua_W_per_K: ua } of links) {
			this.lap[a][a] += ua;
			this.lap[b][b] += ua;
			this.lap[a][b] -= ua;
			this.lap[b][a] -= ua;
		}
		this.ambientUA_W_per_K = Float64Array.from(ambientUA_W_per_K);
		this.temp_K = new Float64Array(n).fill(initialTemp_K);
		this.base_K = new Float64Array(n);
		this.rhs = new Float64Array(n);
	}

	/** Σ C_i T_i, J (stored energy relative to 0 K). */
	storedEnergy_J(): number {
		let s = 0;
		for (let i = 0; i < this.n; i++) s += this.capacity_J_per_K[i] * this.temp_K[i];
		return s;
	}

	/** Right-hand side of the ODE, dT/dt (K/s), for given node heats: used to cross-check with an ODE solver. */
	derivative(temp_K: ArrayLike<number>, heat_W: ArrayLike<number>, ambient_K: number): number[] {
		const out: number[] = [];
		for (let i = 0; i < this.n; i++) {
			let q = heat_W[i] - this.ambientUA_W_per_K[i] * (temp_K[i] - ambient_K);
			for (let j = 0; j < this.n; j++) q -= this.lap[i][j] * temp_K[j];
			out.push(q / this.capacity_J_per_K[i]);
		}
		return out;
	}

	private factor(dt_s: number): void {
		if (dt_s === this.cachedDt) return;
		const known = this.inverses.get(dt_s);
		if (known) {
			this.minv = known;
			this.cachedDt = dt_s;
			return;
		}
		const m: number[][] = this.lap.map((row, i) =>
			row.map((v, j) => v + (i === j ? this.capacity_J_per_K[i] / dt_s + this.ambientUA_W_per_K[i] : 0))
		);
		const mi = inv(m) as number[][];
		this.minv = mi.map((row) => Float64Array.from(row));
		this.cachedDt = dt_s;
		if (this.inverses.size < 32) this.inverses.set(dt_s, this.minv);
	}

	/** Response of node i's new temperature to 1 W into node j (K/W) for the prepared step. */
	response(i: number, j: number): number {
		return this.minv[i][j];
	}

	/**
	 * Prepare a step with fixed heats into the nodes (`fixedHeat_W`, W): the
	 * temperatures after the step go to `base_K`; extra heat Q_j into node j
	 * adds response(i, j)·Q_j.
	 */
	prepareWith(dt_s: number, ambient_K: number, fixedHeat_W: ArrayLike<number> | null): void {
		this.factor(dt_s);
		const n = this.n;
		const rhs = this.rhs;
		for (let i = 0; i < n; i++) {
			rhs[i] = (this.capacity_J_per_K[i] / dt_s) * this.temp_K[i] + this.ambientUA_W_per_K[i] * ambient_K;
			if (fixedHeat_W) rhs[i] += fixedHeat_W[i];
		}
		for (let i = 0; i < n; i++) {
			let s = 0;
			const row = this.minv[i];
			for (let j = 0; j < n; j++) s += row[j] * rhs[j];
			this.base_K[i] = s;
		}
	}

	/** Commit the prepared step with extra heat into the first nodes (W). Returns the heat lost to ambient, W. */
	commitWith(extraHeat_W: ArrayLike<number>, ambient_K: number): number {
		const n = this.n;
		const k = extraHeat_W.length;
		for (let i = 0; i < n; i++) {
			let t = this.base_K[i];
			for (let g = 0; g < k; g++) t += this.minv[i][g] * extraHeat_W[g];
			this.temp_K[i] = t;
		}
		let loss = 0;
		for (let i = 0; i < n; i++) loss += this.ambientUA_W_per_K[i] * (this.temp_K[i] - ambient_K);
		return loss;
	}
}

/** The pack's network: nodes 0…G−1 cell groups, then coolant (with cold plate), then enclosure. */
export class PackThermal extends LumpedNetwork {
	readonly groups: number;
	readonly coolant: number;
	readonly enclosure: number;
	/** Cells per group. */
	readonly cellsPerGroup: Float64Array;
	private readonly fixed: Float64Array;

	constructor(pack: PackDesign, cell: CellParams, initialTemp_K: number) {
		const G = pack.cellGroups.length;
		const th = pack.thermal;
		const nCells = pack.seriesCount * pack.parallelCount;
		const cellsPerGroup = pack.cellGroups.map((g) => g.share * nCells);
		const coolant = G;
		const enclosure = G + 1;
		const capacity = [
			...cellsPerGroup.map((n) => n * cell.thermal.mass_kg * cell.thermal.specificHeat_J_per_kgK),
			th.coolantVolume_m3 * th.coolantDensity_kg_per_m3 * th.coolantSpecificHeat_J_per_kgK + th.plateHeatCapacity_J_per_K,
			th.enclosureHeatCapacity_J_per_K
		];
		const links: { a: number; b: number; ua_W_per_K: number }[] = [];
		pack.cellGroups.forEach((g, i) => {
			// Plate conductance in series with the cell's core-to-surface conduction resistance.
			const perCell = 1 / (1 / (th.plateConductancePerCell_W_per_K * g.coolingFactor) + cell.thermal.coreToSurfaceResistance_K_per_W);
			links.push({ a: i, b: coolant, ua_W_per_K: perCell * cellsPerGroup[i] });
			links.push({ a: i, b: enclosure, ua_W_per_K: th.cellsToEnclosure_W_per_K * g.share });
		});
		links.push({ a: coolant, b: enclosure, ua_W_per_K: th.coolantToEnclosure_W_per_K });
		const ambient = new Array<number>(G + 2).fill(0);
		ambient[enclosure] = th.enclosureToAmbient_W_per_K;
		super(capacity, links, ambient, initialTemp_K);
		this.groups = G;
		this.coolant = coolant;
		this.enclosure = enclosure;
		this.cellsPerGroup = Float64Array.from(cellsPerGroup);
		this.fixed = new Float64Array(G + 2);
	}

	/** Prepare a step with heater − chiller heat into the coolant (W); cell heats are added at commit. */
	prepare(dt_s: number, ambient_K: number, coolantHeat_W: number): void {
		this.fixed[this.coolant] = coolantHeat_W;
		this.prepareWith(dt_s, ambient_K, this.fixed);
	}

	/** Commit with the heat of each cell group (W, whole group). Returns the heat lost to ambient, W. */
	commit(groupHeat_W: ArrayLike<number>, ambient_K: number): number {
		return this.commitWith(groupHeat_W, ambient_K);
	}
}

export interface ThermalActuation {
	heaterElectrical_W: number;
	heaterHeat_W: number;
	chillerElectrical_W: number;
	chillerHeat_W: number;
}

export interface ControlRequest {
	/** Coolant set-point, or null for "off". */
	setpoint_K: number | null;
	allowHeat: boolean;
	allowChill: boolean;
	/** Electrical heater budget for this step, W. */
	heaterCap_W: number;
}

/**
 * Bounded PI controller on the coolant temperature with anti-windup by
 * conditional integration (the integrator only moves when the output is not
 * saturated in the direction it would push; Åström & Hägglund, PID
 * Controllers: Theory, Design and Tuning, 2nd ed., 1995, §3.5). Output u > 0 is heat
 * into the coolant (heater), u < 0 heat out of it (chiller).
 */
export class CoolantController {
	private integral_W = 0;
	private lastSetpoint: number | null = null;
	constructor(private readonly pack: PackDesign) {}

	/** The controller's memory, to undo an update when a step is taken again with another length. */
	saveState(into: { integral_W: number; lastSetpoint: number | null }): void {
		into.integral_W = this.integral_W;
		into.lastSetpoint = this.lastSetpoint;
	}
	restoreState(from: { integral_W: number; lastSetpoint: number | null }): void {
		this.integral_W = from.integral_W;
		this.lastSetpoint = from.lastSetpoint;
	}

	update(req: ControlRequest, coolant_K: number, ambient_K: number, dt_s: number, out: ThermalActuation): ThermalActuation {
		out.heaterElectrical_W = 0;
		out.heaterHeat_W = 0;
		out.chillerElectrical_W = 0;
		out.chillerHeat_W = 0;
		if (req.setpoint_K === null || (!req.allowHeat && !req.allowChill)) {
			this.integral_W = 0;
			this.lastSetpoint = null;
			return out;
		}
		if (this.lastSetpoint === null) this.integral_W = 0;
		this.lastSetpoint = req.setpoint_K;
		const { proportionalGain_W_per_K: kp, integralTime_s: ti } = this.pack.controller;
		const heatCop = this.heaterCop(coolant_K, ambient_K);
		const maxHeat = req.allowHeat ? Math.min(req.heaterCap_W, this.pack.heater.maxElectricalPower_W) * heatCop : 0;
		const maxCool = req.allowChill ? this.pack.chiller.maxHeatRemoval_W : 0;
		const e = req.setpoint_K - coolant_K;
		let u = kp * e + this.integral_W;
		const saturatedHigh = u >= maxHeat && e > 0;
		const saturatedLow = u <= -maxCool && e < 0;
		if (!saturatedHigh && !saturatedLow) {
			this.integral_W += (kp / ti) * e * dt_s;
			// Keep the integrator itself within the actuator range.
			if (this.integral_W > maxHeat) this.integral_W = maxHeat;
			if (this.integral_W < -maxCool) this.integral_W = -maxCool;
			u = kp * e + this.integral_W;
		}
		if (u > 0) {
			const heat = Math.min(u, maxHeat);
			out.heaterHeat_W = heat;
			out.heaterElectrical_W = heat / heatCop;
		} else if (u < 0) {
			const q = Math.min(-u, maxCool);
			out.chillerHeat_W = q;
			out.chillerElectrical_W = q / this.chillerCop(coolant_K, ambient_K);
		}
		return out;
	}

	/** Heat per electrical watt of the heater (PTC: its efficiency; heat pump: COP ≤ Carnot, ≥ 1). */
	heaterCop(coolant_K: number, ambient_K: number): number {
		const h = this.pack.heater;
		if (h.kind === 'ptc') return h.heatPerElectrical;
		const tCond = coolant_K + 5;
		const tEvap = ambient_K - this.pack.chiller.condenserApproach_K;
		const carnot = tCond > tEvap ? tCond / (tCond - tEvap) : Infinity;
		return Math.max(1, Math.min(h.heatPerElectrical, this.pack.chiller.carnotFraction * carnot));
	}

	/** Refrigeration COP, bounded by the Carnot COP between coolant (evaporator) and ambient (condenser). */
	chillerCop(coolant_K: number, ambient_K: number): number {
		const c = this.pack.chiller;
		const tEvap = coolant_K - 5;
		const tCond = Math.max(ambient_K, coolant_K) + c.condenserApproach_K;
		const carnot = tEvap / (tCond - tEvap);
		return Math.max(0.1, Math.min(c.nominalCop, c.carnotFraction * carnot));
	}
}
