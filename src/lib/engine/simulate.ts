/**
 * Scenario timeline and charging controllers.
 *
 * Timeline (t = 0 at arrival): drive (−T_drive … 0) → dwell (0 … t_plug) →
 * charge (t_plug … target or time cap). Pre-conditioning starts `leadTime_s`
 * before arrival: from then on the coolant controller aims at the strategy's
 * set-point. Heater and chiller electricity comes from the pack while driving
 * and parked (it lowers the arrival SOC) and from the grid through the charger
 * while charging (it shares the charger's power).
 *
 * Drive: the cell current that delivers the requested power is found by
 * fixed-point iteration on I = −P/V(I); if the cell cannot deliver it without
 * crossing its minimum voltage or maximum temperature, the power is derated
 * (bisection on the most negative feasible current) and the shortfall recorded.
 *
 * Plating-limited charge (default): every charging step the largest
 * current that keeps, at the end of the step, the charger current and power,
 * the maximum cell voltage, the maximum cell temperature and the anode
 * potential ≥ margin. The end-of-period prediction uses the same linear
 * response as the committed step, so the limits hold exactly up to the
 * solver tolerance (Illinois regula falsi on the smallest normalised slack:
 * the constraints are monotone in current). The limit in force is recorded.
 *
 * Step length: one control period (1 s) where things change, up to 32 on
 * smooth stretches (adaptive, on by default). The next step doubles while the
 * limit in force stays the same and the current moves less than 0.03 % of its
 * scale per step, halves when it moves more than 0.12 %, and a step in which
 * the limit in force switches is taken again at one control period, so a
 * switch is located to within one period. Accuracy against one-period steps
 * throughout (time to target, energy, anode margin) is checked in tests.
 * Step lengths come from a ladder of powers of two so the thermal network's
 * factorisations are reused.
 *
 * CC–CV reference: the cell's temperature-dependent constant current until the
 * maximum voltage, then constant voltage; the anode potential is only
 * monitored (a manufacturer-style protocol does not see it).
 */
import { CellModel } from './cell-model';
import { CoolantController, PackThermal, type ThermalActuation, type ControlRequest } from './thermal';
import { drivePowerFunction, driveEnergy_J } from './drive';
import { linearInterpolant } from './ocp';
import {
	EngineInputError,
	issuePath,
	simulationOptionsSchema,
	strategyIssues,
	strategySchema,
	validateSimulationInput,
	zodIssues,
	type SimulationInput,
	type SimulationOptions,
	type Strategy
} from './schemas';
import { fmt, J_PER_WH, SECONDS_PER_HOUR } from './units';

export type LimitName =
	| 'charger-current'
	| 'charger-power'
	| 'max-voltage'
	| 'max-temperature'
	| 'anode-potential'
	| 'electrolyte-depletion'
	| 'target'
	| 'protocol-current'
	| 'none';
export const LIMIT_NAMES: readonly LimitName[] = [
	'charger-current',
	'charger-power',
	'max-voltage',
	'max-temperature',
	'anode-potential',
	'electrolyte-depletion',
	'target',
	'protocol-current',
	'none'
];
export type Phase = 'drive' | 'dwell' | 'charge';
export type ChargeProtocol = 'plating-limited' | 'cccv';

/** Down-sampled time series, column arrays of equal length; t_s = 0 at arrival. */
export interface TimeSeries {
	t_s: number[];
	/** Cell current, A (> 0 charging). */
	current_A: number[];
	/** Cell voltage the BMS watches: highest group while charging, lowest otherwise, V. */
	voltage_V: number[];
	soc: number[];
	/** Mean cell temperature, K. */
	cellTemp_K: number[];
	/** Hottest cell group, K. */
	cellTempMax_K: number[];
	coolantTemp_K: number[];
	/** Lowest anode potential vs Li/Li+ at the anode/separator interface, V. */
	anodePotential_V: number[];
	/** Electrical heater power, W. */
	heaterPower_W: number[];
	/** Electrical chiller power, W. */
	chillerPower_W: number[];
	/** Pack power at the terminals, W (> 0 charging). */
	packPower_W: number[];
	limit: LimitName[];
	phase: Phase[];
}

export interface SimulationSummary {
	protocol: ChargeProtocol;
	/** True when the strategy was null (the pack's own default policy). */
	baseline: boolean;
	reachedTarget: boolean;
	/** Charge time from plug-in to the target; the time cap if not reached. */
	timeToTarget_s: number | null;
	/** Energy into the pack terminals during the charge, Wh. */
	energyAdded_Wh: number;
	/** Electrical energies, Wh: drive = from the pack (drive + dwell), charge = from the grid. */
	heaterEnergyDrive_Wh: number;
	heaterEnergyCharge_Wh: number;
	chillerEnergyDrive_Wh: number;
	chillerEnergyCharge_Wh: number;
	thermalEnergyTotal_Wh: number;
	departureSoc: number;
	arrivalSoc: number;
	finalSoc: number;
	arrivalCellTemp_K: number;
	plugInCellTemp_K: number;
	finalCellTemp_K: number;
	/** Lowest anode potential during the charge, V. */
	minAnodePotential_V: number;
	/** Highest cell voltage during the charge, V. */
	maxChargeVoltage_V: number;
	peakCellTemp_K: number;
	/** Charge time spent under each limit, s. */
	timeUnderLimit_s: Record<LimitName, number>;
	deratingDuration_s: number;
	deratingEnergyShortfall_Wh: number;
	averageChargePower_W: number;
	/** Lead time actually used (clamped to the drive duration). */
	effectiveLeadTime_s: number;
	violations: string[];
	notes: string[];
	/** Steps taken: drive and dwell, charge, and charging steps taken again shorter because a limit switched. */
	steps: { drive: number; charge: number; retried: number };
	/** Thermal energy balance of the whole run (heat in − heat out = stored), Wh. */
	energyBalance: {
		heatGenerated_Wh: number;
		heaterHeat_Wh: number;
		chillerHeat_Wh: number;
		lossToAmbient_Wh: number;
		storedChange_Wh: number;
	};
	/** Charge balance of one cell over the whole run, Ah (> 0 = into the negative electrode). */
	chargeBalance: {
		throughput_Ah: number;
		negativeLithiumChange_Ah: number;
		positiveLithiumChange_Ah: number;
	};
}

export interface SimulationResult {
	summary: SimulationSummary;
	series: TimeSeries | null;
}

/** Tolerances the controller guarantees (tested). */
export const CONTROL_TOLERANCE = { voltage_V: 1e-3, anode_V: 1e-3, temp_K: 0.1 } as const;
/** Weight turning a temperature slack into a voltage-like slack in the solver (1 K ≙ 10 mV). */
const TEMP_SLACK_WEIGHT = 0.01;
const SOLVER_TOL = 1e-4;
/** Iteration caps; a cap that binds is counted and reported as a note. */
const DRIVE_ITERATIONS = 20;
const SOLVER_ITERATIONS = 50;
/** Adaptive charging steps: longest step 2^5 control periods; the current-change band per step that grows or shrinks it. */
const MAX_STEP_LEVEL = 5;
const STEP_GROW_BELOW = 0.0003;
const STEP_SHRINK_ABOVE = 0.0012;

/** Run one scenario. Validates the input first; throws EngineInputError naming the field. */
export function simulate(input: SimulationInput): SimulationResult {
	const valid = validateSimulationInput(input);
	return new Simulation(valid).run();
}

/**
 * Validate a scenario's cell, pack and scenario once and return a runner for its strategies: what a
 * sweep does for every point of a scenario. Each call validates only the strategy and options (and
 * the strategy against the cell and pack) — same checks, same errors as simulate().
 */
export function prepareScenario(base: Pick<SimulationInput, 'cell' | 'pack' | 'scenario'>): (strategy: Strategy | null, options?: SimulationOptions) => SimulationResult {
	const valid = validateSimulationInput({ ...base, strategy: null });
	return (strategy, options) => {
		let s: Strategy | null = null;
		if (strategy !== null) {
			const parsed = strategySchema.safeParse(strategy);
			if (!parsed.success) throw new EngineInputError(zodIssues(parsed.error, 'strategy'));
			s = parsed.data;
			const issues = strategyIssues(valid.cell, valid.pack, s);
			if (issues.length) throw new EngineInputError(issues.map((i) => ({ field: issuePath(i.path), message: i.message })));
		}
		let o: SimulationOptions | undefined;
		if (options !== undefined) {
			const parsed = simulationOptionsSchema.safeParse(options);
			if (!parsed.success) throw new EngineInputError(zodIssues(parsed.error, 'options'));
			o = parsed.data;
		}
		return new Simulation({ ...valid, strategy: s, options: o }).run();
	};
}

class Simulation {
	private readonly input: SimulationInput;
	private readonly cells: CellModel[];
	private readonly thermal: PackThermal;
	private readonly ctrl: CoolantController;
	private readonly act: ThermalActuation = { heaterElectrical_W: 0, heaterHeat_W: 0, chillerElectrical_W: 0, chillerHeat_W: 0 };
	private readonly req: ControlRequest = { setpoint_K: null, allowHeat: false, allowChill: false, heaterCap_W: 0 };
	private readonly G: number;
	private readonly share: Float64Array;
	private readonly nCells: number;
	private readonly groupHeat: Float64Array;
	/** Each cell group's temperature change per second over the last step, K/s. */
	private readonly warming_K_per_s: Float64Array;
	private readonly protocol: ChargeProtocol;
	private readonly controlPeriod_s: number;
	private readonly driveStep_s: number;
	private readonly keepSeries: boolean;
	private readonly seriesInterval_s: number;
	private readonly ambient_K: number;
	private readonly lead_s: number;
	private readonly cccvCurrent: (temp_K: number) => number;
	// evaluation results (filled by evalAt)
	private vMax = 0;
	private vMin = 0;
	private vMean = 0;
	private anodeMin = 0;
	private ceMin = 0;
	private tMaxPred = 0;
	private readonly electrolyteFloor: number;
	/** Turns a concentration slack into a voltage-like one (the floor's distance over the initial concentration, × 0.1 V). */
	private readonly electrolyteScale: number;
	private socPred = 0;
	/** Current of the last evalAt since the last prepareStep (NaN = none). */
	private evaluatedI = NaN;
	private bindWhich: LimitName = 'none';
	private availPower_W = Infinity;
	/** Estimate of −d(slack)/dI from the previous control period, V/A. */
	private slopeEst = 1e-3;
	// state
	private t_s = 0;
	private lastI = 0;
	private lastLabel: LimitName | null = null;
	private chillLatched = false;
	private readonly adaptive: boolean;
	private readonly ctrlSaved = { integral_W: 0, lastSetpoint: null as number | null };
	private series: TimeSeries | null = null;
	private nextSample_s = -Infinity;
	// accounting
	private heaterDrive_J = 0;
	private heaterCharge_J = 0;
	private chillerDrive_J = 0;
	private chillerCharge_J = 0;
	private heatGen_J = 0;
	private heaterHeat_J = 0;
	private chillerHeat_J = 0;
	private lossAmbient_J = 0;
	private throughput_C = 0;
	private energyAdded_J = 0;
	private derating_s = 0;
	private shortfall_J = 0;
	private peakTemp_K = -Infinity;
	private minAnode_V = Infinity;
	private maxChargeV = -Infinity;
	private readonly underLimit: Record<LimitName, number>;
	private readonly violations: string[] = [];
	private readonly notes: string[] = [];
	/** Worst excursion past each limit during the charge (beyond the stated tolerance), with its time. */
	private readonly excursions: Record<'voltage' | 'anode' | 'temp', { first_s: number; worst: number; worst_s: number; atZeroCurrent: boolean } | null> = {
		voltage: null,
		anode: null,
		temp: null
	};
	private driveIterationCapHits = 0;
	private readonly stepCount = { drive: 0, charge: 0, retried: 0 };
	private solverCapHits = 0;

	constructor(input: SimulationInput) {
		this.input = input;
		const { cell, pack, scenario, options } = input;
		const modelOptions = {
			shells: options?.particleShells ?? 20,
			electrolyteCells: options?.electrolyteCells,
			electrolyte: options?.electrolyte,
			heatOfMixing: options?.heatOfMixing
		};
		this.G = pack.cellGroups.length;
		this.cells = pack.cellGroups.map(() => new CellModel(cell, scenario.stateOfHealth, modelOptions));
		this.electrolyteFloor = this.cells[0].electrolyteFloor_mol_m3;
		this.electrolyteScale = cell.electrolyte.concentration_mol_m3;
		this.share = Float64Array.from(pack.cellGroups.map((g) => g.share));
		this.nCells = pack.seriesCount * pack.parallelCount;
		this.groupHeat = new Float64Array(this.G);
		this.warming_K_per_s = new Float64Array(this.G);
		this.ambient_K = scenario.ambient_K;
		this.thermal = new PackThermal(pack, cell, scenario.initialPackTemp_K ?? scenario.ambient_K);
		this.ctrl = new CoolantController(pack);
		this.protocol = options?.protocol ?? 'plating-limited';
		this.controlPeriod_s = options?.controlPeriod_s ?? 1;
		this.adaptive = options?.adaptiveSteps ?? true;
		this.driveStep_s = options?.driveStep_s ?? 5;
		this.keepSeries = options?.keepSeries ?? true;
		this.seriesInterval_s = options?.seriesInterval_s ?? 10;
		const lead = input.strategy?.leadTime_s ?? 0;
		this.lead_s = Math.min(lead, scenario.drive.duration_s);
		if (lead > scenario.drive.duration_s) {
			this.notes.push(
				`lead time ${fmt.minutes(lead)} is longer than the ${fmt.minutes(scenario.drive.duration_s)} drive; pre-conditioning starts at departure`
			);
		}
		const cc = cell.cccvReference;
		const rated = this.cells[0].window.ratedCapacity_Ah;
		const cInterp = linearInterpolant(cc.temp_K, cc.currentC);
		this.cccvCurrent = (T) => cInterp(T) * rated;
		this.underLimit = Object.fromEntries(LIMIT_NAMES.map((n) => [n, 0])) as Record<LimitName, number>;
		if (this.keepSeries) {
			this.series = {
				t_s: [],
				current_A: [],
				voltage_V: [],
				soc: [],
				cellTemp_K: [],
				cellTempMax_K: [],
				coolantTemp_K: [],
				anodePotential_V: [],
				heaterPower_W: [],
				chillerPower_W: [],
				packPower_W: [],
				limit: [],
				phase: []
			};
		}
	}

	// ---------------------------------------------------------------- helpers

	private meanCellTemp(): number {
		let s = 0;
		for (let g = 0; g < this.G; g++) s += this.share[g] * this.thermal.temp_K[g];
		return s;
	}
	private maxCellTemp(): number {
		let m = -Infinity;
		for (let g = 0; g < this.G; g++) m = Math.max(m, this.thermal.temp_K[g]);
		return m;
	}

	/** Predict the end of the prepared step for cell current I (all groups carry I). */
	private evalAt(I: number): void {
		if (I === this.evaluatedI) return;
		this.evaluatedI = I;
		const G = this.G;
		let vMax = -Infinity;
		let vMin = Infinity;
		let vMean = 0;
		let anode = Infinity;
		let ceMin = Infinity;
		for (let g = 0; g < G; g++) {
			const o = this.cells[g].evaluate(I);
			if (o.minElectrolyte_mol_m3 < ceMin) ceMin = o.minElectrolyte_mol_m3;
			if (o.voltage_V > vMax) vMax = o.voltage_V;
			if (o.voltage_V < vMin) vMin = o.voltage_V;
			vMean += this.share[g] * o.voltage_V;
			if (o.anodePotential_V < anode) anode = o.anodePotential_V;
			this.groupHeat[g] = o.heat_W * this.thermal.cellsPerGroup[g];
			if (g === 0) this.socPred = o.soc;
		}
		let tMax = -Infinity;
		for (let g = 0; g < G; g++) {
			let t = this.thermal.base_K[g];
			for (let h = 0; h < G; h++) t += this.thermal.response(g, h) * this.groupHeat[h];
			if (t > tMax) tMax = t;
		}
		this.vMax = vMax;
		this.vMin = vMin;
		this.vMean = vMean;
		this.anodeMin = anode;
		this.ceMin = ceMin;
		this.tMaxPred = tMax;
	}

	/** Electrolyte slack as a voltage-like quantity (≥ 0 feasible). */
	private electrolyteSlack(): number {
		return (0.1 * (this.ceMin - this.electrolyteFloor)) / this.electrolyteScale;
	}

	private prepareStep(dt: number): void {
		const a = this.act;
		this.thermal.prepare(dt, this.ambient_K, a.heaterHeat_W - a.chillerHeat_W);
		// Cell properties at the step's predicted mid-point temperature (the last step's warming rate
		// carried forward): freezing them at the start-of-step temperature lags a warming pack by half a
		// step, which at −10 °C costs about 0.1 % of charging time per second of step length.
		for (let g = 0; g < this.G; g++) this.cells[g].prepare(dt, this.thermal.temp_K[g] + 0.5 * dt * this.warming_K_per_s[g]);
		this.evaluatedI = NaN;
	}

	private commitStep(I: number, dt: number): void {
		this.evalAt(I); // make sure groupHeat matches I
		for (let g = 0; g < this.G; g++) this.cells[g].commit(I);
		let heat = 0;
		for (let g = 0; g < this.G; g++) heat += this.groupHeat[g];
		this.heatGen_J += heat * dt;
		this.heaterHeat_J += this.act.heaterHeat_W * dt;
		this.chillerHeat_J += this.act.chillerHeat_W * dt;
		for (let g = 0; g < this.G; g++) this.warming_K_per_s[g] = this.thermal.temp_K[g];
		this.lossAmbient_J += this.thermal.commit(this.groupHeat, this.ambient_K) * dt;
		for (let g = 0; g < this.G; g++) this.warming_K_per_s[g] = (this.thermal.temp_K[g] - this.warming_K_per_s[g]) / dt;
		this.throughput_C += I * dt;
		this.lastI = I;
		this.evaluatedI = NaN;
		const tMax = this.maxCellTemp();
		if (tMax > this.peakTemp_K) this.peakTemp_K = tMax;
	}

	private controlThermal(phase: Phase, dt: number): void {
		const { pack, strategy } = this.input;
		const pol = pack.defaultPolicy;
		const tMax = this.maxCellTemp();
		const tMean = this.meanCellTemp();
		if (tMax > pol.chillAbove_K) this.chillLatched = true;
		else if (tMax < pol.chillAbove_K - 3) this.chillLatched = false;
		const req = this.req;
		const precon = strategy !== null && this.t_s >= -this.lead_s - 1e-9;
		if (precon && strategy) {
			req.setpoint_K = strategy.coolantSetpoint_K;
			req.allowHeat = true;
			req.allowChill = true;
			req.heaterCap_W = strategy.heaterPowerCap_W ?? pack.heater.maxElectricalPower_W;
			if (this.chillLatched) {
				req.setpoint_K = Math.min(req.setpoint_K, pol.chillSetpoint_K);
				req.allowHeat = false;
			}
		} else if (this.chillLatched) {
			req.setpoint_K = pol.chillSetpoint_K;
			req.allowHeat = false;
			req.allowChill = true;
			req.heaterCap_W = 0;
		} else if (phase === 'charge' && pol.chargeHeatTarget_K !== null && tMean < pol.chargeHeatTarget_K) {
			req.setpoint_K = pol.chargeHeatTarget_K;
			req.allowHeat = true;
			req.allowChill = false;
			req.heaterCap_W = pack.heater.maxElectricalPower_W;
		} else {
			req.setpoint_K = null;
			req.allowHeat = false;
			req.allowChill = false;
			req.heaterCap_W = 0;
		}
		this.ctrl.update(req, this.thermal.temp_K[this.thermal.coolant], this.ambient_K, dt, this.act);
	}

	private record(phase: Phase, limit: LimitName, force = false): void {
		const s = this.series;
		if (!s) return;
		if (!force && this.t_s < this.nextSample_s - 1e-9) return;
		this.nextSample_s = this.t_s + this.seriesInterval_s;
		s.t_s.push(this.t_s);
		s.current_A.push(this.lastI);
		s.voltage_V.push(phase === 'charge' ? this.vMax : this.vMin);
		s.soc.push(this.socPred);
		s.cellTemp_K.push(this.meanCellTemp());
		s.cellTempMax_K.push(this.maxCellTemp());
		s.coolantTemp_K.push(this.thermal.temp_K[this.thermal.coolant]);
		s.anodePotential_V.push(this.anodeMin);
		s.heaterPower_W.push(this.act.heaterElectrical_W);
		s.chillerPower_W.push(this.act.chillerElectrical_W);
		s.packPower_W.push(this.nCells * this.lastI * this.vMean);
		s.limit.push(limit);
		s.phase.push(phase);
	}

	// ---------------------------------------------------------------- drive and dwell

	/** One step away from the charger: traction (W, > 0 from the pack) plus thermal loads from the pack. */
	private dischargeStep(dt: number, traction_W: number, phase: Phase): void {
		const { cell } = this.input;
		this.controlThermal(phase, dt);
		this.prepareStep(dt);
		const a = this.act;
		const request_W = traction_W + a.heaterElectrical_W + a.chillerElectrical_W;
		const perCell = request_W / this.nCells;
		let I = 0;
		if (perCell !== 0) {
			// Fixed point I = −p / V(I): a contraction because |I·dV/dI| ≪ V; stops on the residual.
			let v = this.vMean > 0.5 ? this.vMean : cell.limits.minVoltage_V;
			let converged = false;
			for (let k = 0; k < DRIVE_ITERATIONS; k++) {
				const next = -perCell / v;
				const moved = Math.abs(next - I);
				I = next;
				this.evalAt(I);
				v = Math.max(this.vMean, 0.1);
				if (moved <= 1e-6 * (1 + Math.abs(I))) {
					converged = true;
					break;
				}
			}
			if (!converged) this.driveIterationCapHits++;
		}
		this.evalAt(I);
		const vmin = cell.limits.minVoltage_V;
		const vmax = cell.limits.maxVoltage_V;
		const tmax = cell.limits.maxTemp_K;
		const margin = cell.limits.anodePotentialMargin_V;
		if (I < 0 && (this.vMin < vmin || this.tMaxPred > tmax || this.electrolyteSlack() < 0)) {
			// Derate: most negative current that keeps V ≥ V_min, T ≤ T_max and the electrolyte above its floor.
			let lo = I;
			let hi = 0;
			for (let k = 0; k < 60 && hi - lo > 1e-6; k++) {
				const mid = 0.5 * (lo + hi);
				this.evalAt(mid);
				if (this.vMin >= vmin && this.tMaxPred <= tmax && this.electrolyteSlack() >= 0) hi = mid;
				else lo = mid;
			}
			I = hi;
			this.evalAt(I);
			const delivered_W = -this.nCells * I * this.vMean;
			if (delivered_W < request_W * 0.999) {
				this.derating_s += dt;
				this.shortfall_J += (request_W - delivered_W) * dt;
			}
		} else if (I > 0 && (this.vMax > vmax || this.anodeMin < margin || this.tMaxPred > tmax || this.electrolyteSlack() < 0)) {
			// Regenerative braking limited like a charge; the friction brakes take the rest.
			let lo = 0;
			let hi = I;
			for (let k = 0; k < 60 && hi - lo > 1e-6; k++) {
				const mid = 0.5 * (lo + hi);
				this.evalAt(mid);
				if (this.vMax <= vmax && this.anodeMin >= margin && this.tMaxPred <= tmax && this.electrolyteSlack() >= 0) lo = mid;
				else hi = mid;
			}
			I = lo;
		}
		this.commitStep(I, dt);
		this.stepCount.drive++;
		this.heaterDrive_J += a.heaterElectrical_W * dt;
		this.chillerDrive_J += a.chillerElectrical_W * dt;
		this.t_s += dt;
		this.record(phase, 'none');
	}

	// ---------------------------------------------------------------- charge

	/** Normalised smallest slack (≥ 0 feasible) of the evaluated point; the constraint goes to bindWhich. */
	private slack(useAnode: boolean): number {
		// (constraints: electrolyte depletion, charger power, anode potential, voltage, temperature)
		const lim = this.input.cell.limits;
		// Charger power as a voltage headroom: P_avail/(n·I) − V_mean ≥ 0 ⇔ n·I·V_mean ≤ P_avail.
		const I = this.evaluatedI;
		const sP = I > 0 ? this.availPower_W / (this.nCells * I) - this.vMean : Infinity;
		const sV = lim.maxVoltage_V - this.vMax;
		const sA = useAnode ? this.anodeMin - lim.anodePotentialMargin_V : Infinity;
		const sT = (lim.maxTemp_K - this.tMaxPred) * TEMP_SLACK_WEIGHT;
		const sE = this.electrolyteSlack();
		if (sE < sP && sE < sA && sE < sV && sE < sT) {
			this.bindWhich = 'electrolyte-depletion';
			return sE;
		}
		if (sP <= sA && sP <= sV && sP <= sT) {
			this.bindWhich = 'charger-power';
			return sP;
		}
		if (sA <= sV && sA <= sT) {
			this.bindWhich = 'anode-potential';
			return sA;
		}
		if (sV <= sT) {
			this.bindWhich = 'max-voltage';
			return sV;
		}
		this.bindWhich = 'max-temperature';
		return sT;
	}

	private slackAt(I: number, useAnode: boolean): number {
		this.evalAt(I);
		return this.slack(useAnode);
	}

	/**
	 * Largest current in [0, hi] with slack ≥ 0 (the voltage, anode-potential and
	 * temperature constraints all decrease with current). Safeguarded secant
	 * aiming just inside the feasible side, started from the previous period's
	 * current and slope; falls back to bisection of the bracket. Typically 2–4
	 * evaluations. Returns −1 if even zero current is infeasible.
	 */
	private maxFeasibleCurrent(hi: number, useAnode: boolean): number {
		const aim = SOLVER_TOL / 2;
		let lo = 0;
		let loKnown = false;
		let hiB = hi;
		let hiKnown = false;
		let best = -1;
		let bestWhich: LimitName = 'none';
		let x = this.lastI > 0 && this.lastI < hi ? this.lastI : hi;
		let m = this.slackAt(x, useAnode);
		let xPrev = NaN;
		let mPrev = NaN;
		let k = 0;
		for (; k < SOLVER_ITERATIONS; k++) {
			if (m >= 0) {
				if (x > best) {
					best = x;
					bestWhich = this.bindWhich;
				}
				if (m <= SOLVER_TOL || x >= hi) break;
				lo = x;
				loKnown = true;
			} else {
				hiB = x;
				hiKnown = true;
				if (x === 0) break;
			}
			if (hiB - lo <= 1e-9 * (1 + hi)) break;
			let xn: number;
			if (!Number.isNaN(xPrev) && m !== mPrev) xn = x - ((m - aim) * (x - xPrev)) / (m - mPrev);
			else xn = x + (m - aim) / this.slopeEst;
			if (!(xn > lo && xn < hiB)) {
				if (loKnown && hiKnown) xn = 0.5 * (lo + hiB);
				else if (!loKnown) xn = m < 0 && x > 0 && lo === 0 ? (xn <= 0 ? 0 : xn) : 0.5 * (lo + hiB);
				else xn = hiKnown ? 0.5 * (lo + hiB) : hi;
				if (!(xn >= lo && xn <= hiB) || xn === x) xn = 0.5 * (lo + hiB);
			}
			if (loKnown && hiKnown && k > 6) xn = 0.5 * (lo + hiB); // slow progress: bisect
			xPrev = x;
			mPrev = m;
			x = xn;
			m = this.slackAt(x, useAnode);
		}
		if (k === SOLVER_ITERATIONS) this.solverCapHits++;
		if (!Number.isNaN(xPrev) && x !== xPrev && m !== mPrev) {
			const s = -(m - mPrev) / (x - xPrev);
			if (s > 1e-9 && Number.isFinite(s)) this.slopeEst = s;
		}
		if (best < 0) {
			if (this.slackAt(0, useAnode) < 0) return -1;
			best = 0;
			bestWhich = this.bindWhich;
		}
		this.bindWhich = bestWhich;
		return best;
	}

	/**
	 * One charging step of length dt. Returns the fraction of the step needed to reach the target
	 * (1 if not reached), or null when `mayRetry` and the limit in force switched: then nothing
	 * changed and the caller takes the step again, shorter.
	 */
	private chargeStep(dt: number, mayRetry: boolean): number | null {
		const { cell, pack, scenario } = this.input;
		const latched = this.chillLatched;
		if (mayRetry) this.ctrl.saveState(this.ctrlSaved);
		this.controlThermal('charge', dt);
		this.prepareStep(dt);
		const a = this.act;
		const useAnode = this.protocol === 'plating-limited';
		const avail_W = Math.max(0, scenario.charger.maxPower_W - a.heaterElectrical_W - a.chillerElectrical_W);
		let hi = scenario.charger.maxCurrent_A / pack.parallelCount;
		let label: LimitName = 'charger-current';
		if (this.protocol === 'cccv') {
			const icc = this.cccvCurrent(this.meanCellTemp());
			if (icc < hi) {
				hi = icc;
				label = 'protocol-current';
			}
		}
		this.availPower_W = avail_W;
		let I = this.maxFeasibleCurrent(hi, useAnode);
		if (I < 0) {
			I = 0;
			this.evalAt(0);
			this.slack(useAnode);
			label = this.bindWhich;
		} else if (I < hi) {
			label = this.bindWhich;
		}
		if (mayRetry && label !== this.lastLabel) {
			this.ctrl.restoreState(this.ctrlSaved);
			this.chillLatched = latched;
			return null;
		}
		this.evalAt(I);
		const socBefore = this.cells[0].soc();
		const socAfter = this.socPred;
		const power_W = this.nCells * I * this.vMean;
		// Target: the first of the given targets reached ends the charge (fraction of this period).
		let frac = 1;
		const tgt = scenario.target;
		if (tgt.soc !== undefined && socAfter >= tgt.soc && socAfter > socBefore) {
			frac = Math.min(frac, Math.max(0, (tgt.soc - socBefore) / (socAfter - socBefore)));
		}
		if (tgt.energy_Wh !== undefined && power_W > 0) {
			const need_J = tgt.energy_Wh * J_PER_WH - this.energyAdded_J;
			if (power_W * dt >= need_J) frac = Math.min(frac, Math.max(0, need_J / (power_W * dt)));
		}
		// Limits: record and check against the stated tolerances.
		const lim = cell.limits;
		if (this.anodeMin < this.minAnode_V) this.minAnode_V = this.anodeMin;
		if (this.vMax > this.maxChargeV) this.maxChargeV = this.vMax;
		const anodeFloor = useAnode ? lim.anodePotentialMargin_V - CONTROL_TOLERANCE.anode_V : 0;
		// The predicted values hold at the end of the step.
		const end_s = this.t_s + dt * frac;
		this.excursion('voltage', this.vMax - (lim.maxVoltage_V + CONTROL_TOLERANCE.voltage_V), this.vMax, I, end_s);
		this.excursion('temp', this.tMaxPred - (lim.maxTemp_K + CONTROL_TOLERANCE.temp_K), this.tMaxPred, I, end_s);
		this.excursion('anode', anodeFloor - this.anodeMin, this.anodeMin, I, end_s);
		const stepDt = dt * frac;
		if (frac < 1) {
			// Re-prepare a shorter last step so the state ends exactly at the target.
			this.prepareStep(stepDt);
			this.evalAt(I);
			label = 'target';
		}
		this.commitStep(I, stepDt);
		this.energyAdded_J += this.nCells * I * this.vMean * stepDt;
		this.heaterCharge_J += a.heaterElectrical_W * stepDt;
		this.chillerCharge_J += a.chillerElectrical_W * stepDt;
		this.underLimit[label] += stepDt;
		this.t_s += stepDt;
		this.lastLabel = label;
		this.record('charge', label, frac < 1);
		return frac;
	}

	/** Track a limit's worst excursion (`over` > 0 = beyond its tolerance) with the time it happened. */
	private excursion(which: 'voltage' | 'anode' | 'temp', over: number, value: number, I: number, t: number): void {
		if (!(over > 0)) return;
		const e = this.excursions[which];
		if (!e) {
			this.excursions[which] = { first_s: t, worst: value, worst_s: t, atZeroCurrent: I === 0 };
			return;
		}
		const worse = which === 'anode' ? value < e.worst : value > e.worst;
		if (worse) {
			e.worst = value;
			e.worst_s = t;
		}
		if (I !== 0) e.atZeroCurrent = false;
	}

	/** Violation messages: the worst value and when, and when the limit was first crossed (times from plug-in). */
	private violationMessages(plugIn_s: number): void {
		const lim = this.input.cell.limits;
		const at = (t: number) => fmt.minutes(t - plugIn_s);
		const v = this.excursions.voltage;
		if (v) this.violations.push(`cell voltage reached ${fmt.volts(v.worst)} at ${at(v.worst_s)} after plug-in (first above the maximum ${fmt.volts(lim.maxVoltage_V)} at ${at(v.first_s)})`);
		const t = this.excursions.temp;
		if (t) {
			this.violations.push(
				t.atZeroCurrent
					? `cell temperature is above the maximum ${fmt.celsius(lim.maxTemp_K)} even without charging current (worst ${fmt.celsius(t.worst)} at ${at(t.worst_s)} after plug-in)`
					: `cell temperature reached ${fmt.celsius(t.worst)} at ${at(t.worst_s)} after plug-in, above the maximum ${fmt.celsius(lim.maxTemp_K)} (first crossed at ${at(t.first_s)})`
			);
		}
		const a = this.excursions.anode;
		if (a) {
			this.violations.push(
				this.protocol === 'plating-limited'
					? `anode potential fell to a minimum of ${fmt.millivolts(a.worst)} at ${at(a.worst_s)} after plug-in, below the ${fmt.millivolts(lim.anodePotentialMargin_V)} margin (first crossed at ${at(a.first_s)})`
					: `anode potential fell to a minimum of ${fmt.millivolts(a.worst)} vs Li/Li+ at ${at(a.worst_s)} after plug-in under the CC-CV reference (below 0 V from ${at(a.first_s)}): lithium plating likely`
			);
		}
	}

	/** Notes for every clamp and iteration cap that bound during the run. */
	private boundNotes(): void {
		let stoich = 0;
		let floor = 0;
		for (const c of this.cells) {
			stoich += c.clamps.stoichiometry;
			floor += c.clamps.electrolyteFloor;
		}
		if (stoich > 0) this.notes.push(`a particle's surface stoichiometry was held inside 0…1 in ${stoich} step(s): the cell was driven to the end of its usable window, results there are unreliable`);
		if (floor > 0) this.notes.push(`the electrolyte concentration was held at its ${fmt.number(this.electrolyteFloor, 1)} mol/m³ floor in ${floor} step(s)`);
		if (this.driveIterationCapHits > 0) this.notes.push(`the drive current did not settle within ${DRIVE_ITERATIONS} iterations in ${this.driveIterationCapHits} step(s); the last iterate was used`);
		if (this.solverCapHits > 0) this.notes.push(`the charging current search stopped at its ${SOLVER_ITERATIONS}-iteration cap in ${this.solverCapHits} control period(s); the best feasible current found was used`);
		const dep = this.underLimit['electrolyte-depletion'];
		if (dep > 0) this.notes.push(`electrolyte depletion limited the charging current for ${fmt.minutes(dep)}`);
	}

	// ---------------------------------------------------------------- run

	private departureSoc(): number {
		const { scenario, pack } = this.input;
		const e_J = driveEnergy_J(scenario.drive.profile, scenario.drive.duration_s, this.driveStep_s);
		const cellModel = this.cells[0];
		const packAh = cellModel.window.capacity_Ah * this.nCells;
		let ocv = 3.6;
		let soc = scenario.arrivalSoc;
		// Fixed point on the mean OCV over the drive's SOC range; stops on the residual.
		for (let it = 0; it < 30; it++) {
			const prev = soc;
			soc = scenario.arrivalSoc + e_J / (SECONDS_PER_HOUR * packAh * ocv);
			if (it > 0 && Math.abs(soc - prev) < 1e-9) break;
			const hiSoc = Math.min(1, Math.max(soc, scenario.arrivalSoc));
			let s = 0;
			for (let k = 0; k <= 4; k++) {
				cellModel.setSoc(scenario.arrivalSoc + ((hiSoc - scenario.arrivalSoc) * k) / 4);
				s += cellModel.ocvNow(scenario.ambient_K);
			}
			ocv = s / 5;
		}
		if (soc > 1) {
			const need_kWh = e_J / 3.6e6;
			const avail_kWh = (packAh * ocv * (1 - scenario.arrivalSoc)) / 1000;
			throw new EngineInputError([
				{
					field: 'scenario.drive',
					message: `the drive needs ${fmt.number(need_kWh, 1)} kWh but the ${pack.name} holds only about ${fmt.number(avail_kWh, 1)} kWh above the arrival state of charge ${fmt.percent(scenario.arrivalSoc)}; shorten the drive, lower its power or lower arrivalSoc`
				}
			]);
		}
		return Math.max(0, soc);
	}

	run(): SimulationResult {
		const { scenario, cell } = this.input;
		const depSoc = this.departureSoc();
		for (const c of this.cells) c.setSoc(depSoc);
		const lithium0 = this.cells[0].lithiumCharge_C();
		const stored0 = this.thermal.storedEnergy_J();
		const power = drivePowerFunction(scenario.drive.profile);
		const D = scenario.drive.duration_s;
		this.t_s = -D;
		// Initial point.
		this.prepareStep(this.driveStep_s);
		this.evalAt(0);
		this.socPred = depSoc;
		this.record('drive', 'none', true);

		// Drive, with a step boundary exactly at the start of pre-conditioning.
		const leadStart = -this.lead_s;
		while (this.t_s < -1e-9) {
			let dt = Math.min(this.driveStep_s, -this.t_s);
			if (this.t_s < leadStart - 1e-9 && this.t_s + dt > leadStart + 1e-9) dt = leadStart - this.t_s;
			const tMid = this.t_s + D + dt / 2;
			this.dischargeStep(dt, power(tMid), 'drive');
		}
		this.t_s = 0;
		const arrivalSoc = this.cells[0].soc();
		const arrivalTemp = this.meanCellTemp();
		this.record('drive', 'none', true);
		while (this.t_s < scenario.dwell_s - 1e-9) {
			const dt = Math.min(this.driveStep_s, scenario.dwell_s - this.t_s);
			this.dischargeStep(dt, 0, 'dwell');
		}
		const plugIn_s = this.t_s;
		const plugInTemp = this.meanCellTemp();
		if (this.series && this.series.phase[this.series.phase.length - 1] !== 'dwell' && scenario.dwell_s > 0) this.record('dwell', 'none', true);

		// Charge.
		let reached = false;
		const cap = scenario.timeCap_s;
		let level = 0;
		const scale_A = (0.05 * scenario.charger.maxCurrent_A) / this.input.pack.parallelCount;
		while (this.t_s - plugIn_s < cap - 1e-9) {
			const dt = Math.min(this.controlPeriod_s * 2 ** level, cap - (this.t_s - plugIn_s));
			const before_A = this.lastI;
			const frac = this.chargeStep(dt, level > 0);
			if (frac === null) {
				this.stepCount.retried++;
				level = 0;
				continue;
			}
			this.stepCount.charge++;
			if (frac < 1) {
				reached = true;
				break;
			}
			if (this.adaptive) {
				const change = Math.abs(this.lastI - before_A) / Math.max(Math.abs(this.lastI), scale_A);
				if (change > STEP_SHRINK_ABOVE) level = Math.max(0, level - 1);
				else if (change < STEP_GROW_BELOW) level = Math.min(MAX_STEP_LEVEL, level + 1);
			}
		}
		if (!reached) {
			// Exactly on a boundary the fraction can be 1: check the state.
			const soc = this.cells[0].soc();
			const t = scenario.target;
			if ((t.soc !== undefined && soc >= t.soc - 1e-12) || (t.energy_Wh !== undefined && this.energyAdded_J >= t.energy_Wh * J_PER_WH - 1e-6)) reached = true;
			this.record('charge', 'none', true);
		}
		const chargeTime = this.t_s - plugIn_s;
		if (!reached) {
			this.notes.push(`the target was not reached within the ${fmt.minutes(cap)} time cap`);
		}

		this.violationMessages(plugIn_s);
		this.boundNotes();
		const lithium1 = this.cells[0].lithiumCharge_C();
		const whr = (j: number) => j / J_PER_WH;
		const summary: SimulationSummary = {
			protocol: this.protocol,
			baseline: this.input.strategy === null,
			reachedTarget: reached,
			timeToTarget_s: reached ? chargeTime : cap,
			energyAdded_Wh: whr(this.energyAdded_J),
			heaterEnergyDrive_Wh: whr(this.heaterDrive_J),
			heaterEnergyCharge_Wh: whr(this.heaterCharge_J),
			chillerEnergyDrive_Wh: whr(this.chillerDrive_J),
			chillerEnergyCharge_Wh: whr(this.chillerCharge_J),
			thermalEnergyTotal_Wh: whr(this.heaterDrive_J + this.heaterCharge_J + this.chillerDrive_J + this.chillerCharge_J),
			departureSoc: depSoc,
			arrivalSoc,
			finalSoc: this.cells[0].soc(),
			arrivalCellTemp_K: arrivalTemp,
			plugInCellTemp_K: plugInTemp,
			finalCellTemp_K: this.meanCellTemp(),
			minAnodePotential_V: this.minAnode_V,
			maxChargeVoltage_V: this.maxChargeV,
			peakCellTemp_K: this.peakTemp_K,
			timeUnderLimit_s: this.underLimit,
			deratingDuration_s: this.derating_s,
			deratingEnergyShortfall_Wh: whr(this.shortfall_J),
			averageChargePower_W: chargeTime > 0 ? this.energyAdded_J / chargeTime : 0,
			effectiveLeadTime_s: this.input.strategy ? this.lead_s : 0,
			violations: this.violations,
			notes: this.notes,
			steps: this.stepCount,
			energyBalance: {
				heatGenerated_Wh: whr(this.heatGen_J),
				heaterHeat_Wh: whr(this.heaterHeat_J),
				chillerHeat_Wh: whr(this.chillerHeat_J),
				lossToAmbient_Wh: whr(this.lossAmbient_J),
				storedChange_Wh: whr(this.thermal.storedEnergy_J() - stored0)
			},
			chargeBalance: {
				throughput_Ah: this.throughput_C / SECONDS_PER_HOUR,
				negativeLithiumChange_Ah: (lithium1.negative_C - lithium0.negative_C) / SECONDS_PER_HOUR,
				positiveLithiumChange_Ah: (lithium1.positive_C - lithium0.positive_C) / SECONDS_PER_HOUR
			}
		};
		if (this.derating_s > 0) {
			this.notes.push(
				`drive power was derated for ${fmt.minutes(this.derating_s)} (${fmt.number(whr(this.shortfall_J) / 1000, 2)} kWh short): the cells could not deliver it within ${fmt.volts(cell.limits.minVoltage_V)} and ${fmt.celsius(cell.limits.maxTemp_K)}`
			);
		}
		return { summary, series: this.series };
	}
}
