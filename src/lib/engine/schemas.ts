/**
 * Input schemas (zod) for the engine: one per input object, with physical
 * range checks and messages that say what to change. Values are SI with the
 * unit in the field name; messages show °C, min, kW and % (edge conversion).
 *
 * `simulationInputSchema` cross-checks the objects against each other
 * (set-point versus the cell's maximum temperature, target above arrival…).
 */
import { z } from 'zod';
import { fmt, ZERO_CELSIUS_K } from './units';
import { cellWindow } from './cell-window';
import { makeOcp } from './ocp';
import { firstBadPoint, makeTransport, type TransportModel } from './electrolyte-transport';

type Show = (v: number) => string;

/** A finite number within [min, max], with a message naming the quantity and the allowed range. */
function num(label: string, min: number, max: number, show: Show = (v) => fmt.number(v, 6), hint = '') {
	return z
		.number({ required_error: `${label} is missing`, invalid_type_error: `${label} must be a number` })
		.finite({ message: `${label} must be a finite number` })
		.superRefine((v, ctx) => {
			if (v < min || v > max) {
				ctx.addIssue({
					code: z.ZodIssueCode.custom,
					message: `${label} ${show(v)} is outside the accepted range ${show(min)} … ${show(max)}${hint ? `; ${hint}` : ''}`
				});
			}
		});
}
const temp = (label: string, min_C = -50, max_C = 120) =>
	num(label, min_C + ZERO_CELSIUS_K, max_C + ZERO_CELSIUS_K, fmt.celsius, 'give temperatures in kelvin (°C + 273.15)');
const fraction = (label: string, min = 0, max = 1) => num(label, min, max, fmt.percent, 'give it as a fraction (0.8 = 80 %)');
const positive = (label: string, max = Number.MAX_VALUE, show: Show = (v) => fmt.number(v, 9)) =>
	num(label, Number.MIN_VALUE, max, show, 'it must be positive');
const nonNegative = (label: string, max = Number.MAX_VALUE, show: Show = (v) => fmt.number(v, 9)) =>
	num(label, 0, max, show);
const activation = (label: string) => num(label, 0, 200_000, (v) => `${fmt.number(v / 1000, 2)} kJ/mol`);
const text = (label: string) =>
	z.string({ required_error: `${label} is missing`, invalid_type_error: `${label} must be text` }).trim().min(1, `${label} must not be empty`);

function strictlyIncreasing(values: number[]): boolean {
	for (let i = 1; i < values.length; i++) if (!(values[i] > values[i - 1])) return false;
	return true;
}

const tableX = (label: string) =>
	z
		.array(num(label, 0, 1, (v) => fmt.number(v, 4)), { invalid_type_error: `${label} must be a list of numbers` })
		.min(2, `${label} needs at least two points`)
		.refine(strictlyIncreasing, `${label} must be strictly increasing`);

export const ocpSpecSchema = z
	.discriminatedUnion(
		'kind',
		[
			z.object({ kind: z.literal('fit'), fit: z.enum(['graphite', 'nmc811'], { message: "fit must be 'graphite' or 'nmc811'" }) }),
			z.object({
				kind: z.literal('table'),
				stoichiometry: tableX('OCP table stoichiometry'),
				potential_V: z.array(num('OCP table potential', -1, 6, fmt.volts)).min(2)
			})
		],
		{ errorMap: () => ({ message: "ocp.kind must be 'fit' or 'table'" }) }
	)
	.superRefine((t, ctx) => {
		if (t.kind !== 'table') return;
		if (t.stoichiometry.length !== t.potential_V.length) {
			ctx.addIssue({
				code: z.ZodIssueCode.custom,
				path: ['potential_V'],
				message: `the OCP table has ${t.stoichiometry.length} stoichiometries but ${t.potential_V.length} potentials; give one potential per stoichiometry`
			});
			return;
		}
		for (let i = 1; i < t.potential_V.length; i++) {
			if (t.potential_V[i] > t.potential_V[i - 1]) {
				ctx.addIssue({
					code: z.ZodIssueCode.custom,
					path: ['potential_V', i],
					message: `the OCP must not rise with lithiation, but it goes from ${fmt.volts(t.potential_V[i - 1])} to ${fmt.volts(t.potential_V[i])} at stoichiometry ${t.stoichiometry[i]}; check the table order`
				});
				return;
			}
		}
	});

export const entropicTableSchema = z
	.object({
		stoichiometry: tableX('entropic table stoichiometry'),
		dUdT_V_per_K: z.array(num('entropic coefficient', -0.005, 0.005, (v) => `${fmt.number(v * 1000, 4)} mV/K`)).min(2)
	})
	.refine((t) => t.stoichiometry.length === t.dUdT_V_per_K.length, {
		message: 'the entropic table needs one dU/dT value per stoichiometry',
		path: ['dUdT_V_per_K']
	});

export const electrodeSchema = z.object({
	thickness_m: num('electrode thickness', 1e-6, 1e-3, (v) => `${fmt.number(v * 1e6, 2)} µm`),
	activeMaterialFraction: fraction('active material volume fraction', 0.05, 0.95),
	porosity: fraction('electrode porosity', 0.05, 0.9),
	particleRadius_m: num('particle radius', 1e-9, 1e-4, (v) => `${fmt.number(v * 1e6, 4)} µm`),
	maxConcentration_mol_m3: num('maximum lithium concentration', 1000, 100_000, (v) => `${fmt.number(v, 0)} mol/m³`),
	diffusivity_m2_s: num('solid diffusivity', 1e-22, 1e-9, (v) => `${v.toExponential(3)} m²/s`),
	diffusivityActivation_J_per_mol: activation('solid diffusion activation energy'),
	/** Butler–Volmer rate constant m in j0 = m·√(c_e·c_s·(c_max − c_s)), A/m²·(m³/mol)^1.5 */
	rateConstant: positive('reaction rate constant', 1, (v) => v.toExponential(3)),
	rateActivation_J_per_mol: activation('reaction activation energy'),
	/** Surface film (SEI/CEI) resistance per particle surface area, Ω·m². */
	filmResistance_ohm_m2: nonNegative('film resistance', 1, (v) => `${v.toExponential(3)} Ω·m²`),
	filmActivation_J_per_mol: activation('film resistance activation energy').default(0),
	/** Electronic conductivity of the electrode's solid phase, S/m; absent = high enough to neglect its ohmic drop. */
	conductivity_S_per_m: num('electrode electronic conductivity', 1e-4, 1e8, (v) => `${fmt.number(v, 4)} S/m`).optional(),
	/** Bruggeman exponent of the solid phase: σ_eff = σ·(1 − porosity)^b (1.5 common practice, no source). */
	conductivityBruggeman: num('electrode Bruggeman exponent', 0, 4).default(1.5),
	ocp: ocpSpecSchema,
	entropic: entropicTableSchema
});

const transportModelSchema = (label: string, unit: string) =>
	z.discriminatedUnion(
		'kind',
		[
			z.object({ kind: z.literal('constant') }).strict(),
			z.object({ kind: z.literal('nyman2008') }).strict(),
			z.object({ kind: z.literal('valoen-reimers2005') }).strict(),
			z
				.object({
					kind: z.literal('power-series'),
					terms: z
						.array(z.object({ coefficient: num(`${label} coefficient`, -1e6, 1e6), power: num(`${label} power`, -4, 6) }).strict())
						.min(1, `the ${label} power series needs at least one term`)
				})
				.strict(),
			z
				.object({
					kind: z.literal('table'),
					concentration_mol_m3: z
						.array(num(`${label} table concentration`, 0, 10_000, (v) => `${fmt.number(v, 0)} mol/m³`))
						.min(2, `the ${label} table needs at least two points`)
						.refine(strictlyIncreasing, `${label} table concentrations must be strictly increasing; check the table order`),
					value: z.array(num(`${label} table value`, Number.MIN_VALUE, 1e3, (v) => `${v.toExponential(3)} ${unit}`, 'it must be positive')).min(2)
				})
				.strict()
		],
		{ errorMap: () => ({ message: `${label} model kind must be 'constant', 'nyman2008', 'valoen-reimers2005', 'power-series' or 'table'` }) }
	)
		.superRefine((t, ctx) => {
			if (t.kind === 'table' && t.value.length !== t.concentration_mol_m3.length) {
				ctx.addIssue({ code: z.ZodIssueCode.custom, path: ['value'], message: `the ${label} table needs one value per concentration` });
			}
		});

/** Temperatures at which a transport correlation must stay positive (−20 … 60 °C). */
const TRANSPORT_CHECK_TEMPS_K = [-20, -10, 0, 25, 45, 60].map((c) => c + ZERO_CELSIUS_K);

export const electrolyteSchema = z
	.object({
		concentration_mol_m3: num('electrolyte concentration', 100, 5000, (v) => `${fmt.number(v, 0)} mol/m³`),
		/** Constant diffusivity at the reference temperature (the 'constant' model), m²/s. */
		diffusivity_m2_s: num('electrolyte diffusivity', 1e-12, 1e-8, (v) => `${v.toExponential(3)} m²/s`).optional(),
		diffusivityActivation_J_per_mol: activation('electrolyte diffusion activation energy'),
		/** Constant conductivity at the reference temperature (the 'constant' model), S/m. */
		conductivity_S_per_m: num('electrolyte conductivity', 0.01, 10, (v) => `${fmt.number(v, 4)} S/m`).optional(),
		conductivityActivation_J_per_mol: activation('electrolyte conductivity activation energy'),
		/** Concentration (and temperature) dependence; absent = constant. See electrolyte-transport.ts. */
		diffusivityModel: transportModelSchema('electrolyte diffusivity', 'm²/s').optional(),
		conductivityModel: transportModelSchema('electrolyte conductivity', 'S/m').optional(),
		cationTransference: fraction('cation transference number', 0.05, 0.95),
		/** 1 + d ln f±/d ln c, multiplies the concentration overpotential (1 = ideal solution). */
		thermodynamicFactor: num('thermodynamic factor', 0.2, 10).default(1),
		bruggeman: num('Bruggeman exponent', 1, 4).default(1.5)
	})
	.superRefine((e, ctx) => {
		const check = (property: 'conductivity' | 'diffusivity', scalar: number | undefined, model: TransportModel | undefined, activation: number) => {
			const field = property === 'conductivity' ? 'conductivity_S_per_m' : 'diffusivity_m2_s';
			const modelField = `${property}Model`;
			const m = model ?? { kind: 'constant' };
			if (m.kind === 'constant' && scalar === undefined) {
				ctx.addIssue({ code: z.ZodIssueCode.custom, path: [field], message: `give the electrolyte ${property} as ${field} or as ${modelField}` });
				return;
			}
			const f = makeTransport(property, m, scalar, activation);
			const bad = firstBadPoint(f, 0.01 * e.concentration_mol_m3, 2 * e.concentration_mol_m3, TRANSPORT_CHECK_TEMPS_K);
			if (bad) {
				ctx.addIssue({
					code: z.ZodIssueCode.custom,
					path: [m.kind === 'constant' ? field : modelField],
					message: `the electrolyte ${property} is ${Number.isFinite(bad.value) ? fmt.number(bad.value, 4) : 'undefined'} at ${fmt.number(bad.concentration_mol_m3, 0)} mol/m³ and ${fmt.celsius(bad.temp_K)}; it must stay positive from 1 % to 200 % of the initial concentration between −20 °C and 60 °C — check the coefficients or give a table`
				});
			}
		};
		check('conductivity', e.conductivity_S_per_m, e.conductivityModel, e.conductivityActivation_J_per_mol);
		check('diffusivity', e.diffusivity_m2_s, e.diffusivityModel, e.diffusivityActivation_J_per_mol);
	});

export const cellParamsSchema = z
	.object({
		id: text('cell id'),
		name: text('cell name'),
		chemistry: text('cell chemistry'),
		format: z.enum(['pouch', 'prismatic', 'cylindrical'], { message: "cell format must be 'pouch', 'prismatic' or 'cylindrical'" }),
		electrodeArea_m2: num('electrode area', 1e-4, 100, (v) => `${fmt.number(v, 4)} m²`),
		negative: electrodeSchema,
		positive: electrodeSchema,
		separator: z.object({
			thickness_m: num('separator thickness', 1e-6, 2e-4, (v) => `${fmt.number(v * 1e6, 2)} µm`),
			porosity: fraction('separator porosity', 0.1, 0.95)
		}),
		electrolyte: electrolyteSchema,
		/** Electrode stoichiometries (lithiation fractions) bounding the rated 0…100 % SOC window of a new cell. */
		stoichiometry: z.object({
			negativeAt0Soc: fraction('negative stoichiometry at 0 % SOC', 0, 0.5),
			negativeAt100Soc: fraction('negative stoichiometry at 100 % SOC', 0.3, 1),
			positiveAt100Soc: fraction('positive stoichiometry at 100 % SOC', 0, 0.9)
		}),
		/** Tabs, current collectors and welds: temperature-independent, Ω. */
		contactResistance_ohm: nonNegative('contact resistance', 0.1, (v) => `${fmt.number(v * 1000, 4)} mΩ`),
		thermal: z.object({
			mass_kg: num('cell mass', 0.005, 20, (v) => `${fmt.number(v, 3)} kg`),
			specificHeat_J_per_kgK: num('cell specific heat', 300, 3000, (v) => `${fmt.number(v, 0)} J/(kg·K)`),
			/** Conduction resistance from the cell core to its cooled face (thick cells), K/W. */
			coreToSurfaceResistance_K_per_W: nonNegative('core-to-surface resistance', 100, (v) => `${fmt.number(v, 4)} K/W`).default(0)
		}),
		limits: z.object({
			maxVoltage_V: num('maximum cell voltage', 2, 5, fmt.volts),
			minVoltage_V: num('minimum cell voltage', 1, 4, fmt.volts),
			maxTemp_K: temp('maximum cell temperature', 20, 90),
			anodePotentialMargin_V: num('anode potential margin', 0, 0.2, fmt.millivolts).default(0.01),
			/**
			 * Lowest electrolyte salt concentration the controller lets any point of the cell reach,
			 * mol/m³; absent = 0.1 % of the initial concentration (a modelling choice, no source). Depletion
			 * is a limit on current, not something to compute through.
			 */
			minElectrolyteConcentration_mol_m3: num('minimum electrolyte concentration', 0.1, 1000, (v) => `${fmt.number(v, 3)} mol/m³`).optional()
		}),
		ageing: z.object({
			/** Fraction of anode active material lost per unit of capacity fade (1 − SOH). */
			anodeLossPerFade: nonNegative('anode active-material loss per fade', 3),
			/** Relative film-resistance growth per unit fade (2.5 → +50 % at SOH 0.8). */
			filmGrowthPerFade: nonNegative('film resistance growth per fade', 50),
			contactGrowthPerFade: nonNegative('contact resistance growth per fade', 50)
		}),
		/** Manufacturer-style CC–CV reference: constant-current C-rate versus temperature (linear between points). */
		cccvReference: z
			.object({
				temp_K: z.array(temp('CC-CV table temperature')).min(1),
				currentC: z.array(nonNegative('CC-CV table C-rate', 20)).min(1)
			})
			.refine((t) => t.temp_K.length === t.currentC.length, {
				message: 'the CC-CV table needs one C-rate per temperature',
				path: ['currentC']
			})
			.refine((t) => strictlyIncreasing(t.temp_K), { message: 'CC-CV table temperatures must increase', path: ['temp_K'] })
	})
	.superRefine((cell, ctx) => {
		const st = cell.stoichiometry;
		if (st.negativeAt100Soc <= st.negativeAt0Soc) {
			ctx.addIssue({
				code: z.ZodIssueCode.custom,
				path: ['stoichiometry', 'negativeAt100Soc'],
				message: `negative stoichiometry at 100 % SOC (${st.negativeAt100Soc}) must be above the one at 0 % SOC (${st.negativeAt0Soc})`
			});
			return;
		}
		if (cell.limits.minVoltage_V >= cell.limits.maxVoltage_V) {
			ctx.addIssue({
				code: z.ZodIssueCode.custom,
				path: ['limits', 'minVoltage_V'],
				message: `minimum voltage ${fmt.volts(cell.limits.minVoltage_V)} must be below the maximum voltage ${fmt.volts(cell.limits.maxVoltage_V)}`
			});
			return;
		}
		const w = cellWindow(cell, 1);
		if (w.positiveAt0Soc > 1) {
			ctx.addIssue({
				code: z.ZodIssueCode.custom,
				path: ['positive', 'thickness_m'],
				message: `the positive electrode holds too little lithium for the negative electrode's window (it would need stoichiometry ${fmt.number(w.positiveAt0Soc, 3)} > 1 at 0 % SOC); make the positive electrode thicker or narrow the negative window`
			});
			return;
		}
		const Un = makeOcp(cell.negative.ocp);
		const Up = makeOcp(cell.positive.ocp);
		const ocvTop = Up(w.positiveAt100Soc) - Un(w.negativeAt100Soc);
		const ocvBottom = Up(w.positiveAt0Soc) - Un(w.negativeAt0Soc);
		if (ocvTop > cell.limits.maxVoltage_V) {
			ctx.addIssue({
				code: z.ZodIssueCode.custom,
				path: ['stoichiometry', 'positiveAt100Soc'],
				message: `the open-circuit voltage at 100 % SOC (${fmt.volts(ocvTop)}) is above the maximum voltage ${fmt.volts(cell.limits.maxVoltage_V)}; raise the positive stoichiometry at 100 % SOC or the maximum voltage`
			});
		}
		if (ocvBottom < cell.limits.minVoltage_V) {
			ctx.addIssue({
				code: z.ZodIssueCode.custom,
				path: ['stoichiometry', 'negativeAt0Soc'],
				message: `the open-circuit voltage at 0 % SOC (${fmt.volts(ocvBottom)}) is below the minimum voltage ${fmt.volts(cell.limits.minVoltage_V)}; raise the negative stoichiometry at 0 % SOC or lower the minimum voltage`
			});
		}
	});

export const packDesignSchema = z
	.object({
		id: text('pack id'),
		name: text('pack name'),
		seriesCount: z.number().int('series count must be a whole number').min(1).max(1000),
		parallelCount: z.number().int('parallel count must be a whole number').min(1).max(100),
		/** One group (all cells alike) or two (e.g. a hot and a cold group) with their share of the cells. */
		cellGroups: z
			.array(
				z.object({
					name: text('cell group name'),
					share: fraction('cell group share', 0.001, 1),
					/** Multiplies the plate conductance of the group's cells (< 1: worse cooled). */
					coolingFactor: num('cell group cooling factor', 0.05, 5)
				})
			)
			.min(1, 'give at least one cell group')
			.max(2, 'at most two cell groups (a hot and a cold one) are supported')
			.refine((g) => Math.abs(g.reduce((s, x) => s + x.share, 0) - 1) < 1e-6, 'cell group shares must add up to 1'),
		thermal: z.object({
			/** Cell surface to coolant through the cold plate, per cell, W/K. */
			plateConductancePerCell_W_per_K: positive('plate conductance per cell', 1000),
			coolantVolume_m3: num('coolant volume', 1e-4, 0.2, (v) => `${fmt.number(v * 1000, 2)} L`),
			/** 50/50 ethylene glycol–water ≈ 1070–1090 kg/m³ (ASHRAE Handbook – Fundamentals). */
			coolantDensity_kg_per_m3: num('coolant density', 500, 2000).default(1075),
			/** 50/50 ethylene glycol–water ≈ 3.3–3.5 kJ/(kg·K) (ASHRAE Handbook – Fundamentals). */
			coolantSpecificHeat_J_per_kgK: num('coolant specific heat', 1000, 5000).default(3400),
			plateHeatCapacity_J_per_K: nonNegative('cold-plate heat capacity', 1e7),
			cellsToEnclosure_W_per_K: nonNegative('cells-to-enclosure conductance', 1e4),
			coolantToEnclosure_W_per_K: nonNegative('coolant-to-enclosure conductance', 1e4),
			enclosureHeatCapacity_J_per_K: positive('enclosure heat capacity', 1e8),
			enclosureToAmbient_W_per_K: nonNegative('enclosure-to-ambient conductance', 1e4)
		}),
		heater: z.object({
			kind: z.enum(['ptc', 'heat-pump'], { message: "heater kind must be 'ptc' or 'heat-pump'" }),
			maxElectricalPower_W: nonNegative('heater maximum power', 1e5, fmt.power),
			/** Heat delivered per electrical watt: PTC efficiency (≈ 0.9–1) or heat-pump COP. */
			heatPerElectrical: num('heater efficiency or COP', 0.1, 6)
		}),
		chiller: z.object({
			maxHeatRemoval_W: nonNegative('chiller maximum heat removal', 1e5, fmt.power),
			nominalCop: num('chiller nominal COP', 0.2, 10),
			/** Fraction of the Carnot COP the refrigerant loop can reach (second-law efficiency). */
			carnotFraction: fraction('chiller Carnot fraction', 0.05, 1),
			/** Condenser runs this much above ambient. */
			condenserApproach_K: num('condenser approach temperature difference', 1, 40, (v) => `${fmt.number(v, 1)} K`)
		}),
		controller: z.object({
			proportionalGain_W_per_K: positive('controller proportional gain', 1e6),
			integralTime_s: positive('controller integral time', 1e5, fmt.minutes)
		}),
		/** The pack's own thermal policy (the baseline): no pre-conditioning. */
		defaultPolicy: z.object({
			chillAbove_K: temp('chill-above temperature', 0, 80),
			chillSetpoint_K: temp('chiller coolant set-point', -10, 60),
			/** During the charge the heater warms the coolant toward this when the cells are below it; null = no heating. */
			chargeHeatTarget_K: temp('charge heating target', -20, 60).nullable()
		})
	})
	.superRefine((p, ctx) => {
		if (p.defaultPolicy.chillSetpoint_K >= p.defaultPolicy.chillAbove_K) {
			ctx.addIssue({
				code: z.ZodIssueCode.custom,
				path: ['defaultPolicy', 'chillSetpoint_K'],
				message: `the chiller set-point ${fmt.celsius(p.defaultPolicy.chillSetpoint_K)} must be below the chill-above temperature ${fmt.celsius(p.defaultPolicy.chillAbove_K)}`
			});
		}
	});

export const BUILTIN_DRIVE_PROFILES = ['urban', 'highway', 'mixed'] as const;

const driveProfileSchema = z
	.discriminatedUnion(
		'kind',
		[
			z.object({ kind: z.literal('constant'), power_W: num('drive power', -5e5, 1e6, fmt.power) }),
			z.object({
				kind: z.literal('builtin'),
				name: z.enum(BUILTIN_DRIVE_PROFILES, { message: "built-in profile must be 'urban', 'highway' or 'mixed'" }),
				averagePower_W: num('average drive power', 0, 1e6, fmt.power)
			}),
			z.object({
				kind: z.literal('table'),
				time_s: z.array(num('drive table time', 0, 1e6, fmt.minutes)).min(2, 'the drive table needs at least two points'),
				power_W: z.array(num('drive table power', -5e5, 1e6, fmt.power)).min(2)
			})
		],
		{ errorMap: () => ({ message: "drive profile kind must be 'constant', 'builtin' or 'table'" }) }
	)
	.superRefine((t, ctx) => {
		if (t.kind !== 'table') return;
		if (t.time_s.length !== t.power_W.length) {
			ctx.addIssue({ code: z.ZodIssueCode.custom, path: ['power_W'], message: `the drive table has ${t.time_s.length} times but ${t.power_W.length} powers; give one power per time` });
		} else if (!strictlyIncreasing(t.time_s)) {
			ctx.addIssue({ code: z.ZodIssueCode.custom, path: ['time_s'], message: 'drive table times must be strictly increasing' });
		} else if (t.time_s[0] !== 0) {
			ctx.addIssue({ code: z.ZodIssueCode.custom, path: ['time_s', 0], message: 'the drive table must start at time 0 (departure)' });
		}
	});

export const scenarioSchema = z
	.object({
		name: z.string().optional(),
		ambient_K: temp('ambient temperature', -40, 55),
		/** Cell/pack temperature at departure; default: soaked at ambient. */
		initialPackTemp_K: temp('initial pack temperature', -40, 60).optional(),
		stateOfHealth: fraction('state of health', 0.6, 1),
		/** Nominal arrival SOC without pre-conditioning; the departure SOC is back-computed from the drive. */
		arrivalSoc: fraction('arrival state of charge', 0.02, 0.95),
		drive: z.object({
			duration_s: num('drive duration', 0, 86_400, fmt.minutes),
			profile: driveProfileSchema
		}),
		dwell_s: num('dwell time', 0, 86_400, fmt.minutes),
		charger: z.object({
			maxCurrent_A: positive('charger maximum current', 5000, fmt.amps),
			maxPower_W: positive('charger maximum power', 2e6, fmt.power)
		}),
		target: z
			.object({
				soc: fraction('target state of charge', 0.05, 1).optional(),
				energy_Wh: positive('target energy', 1e7, (v) => `${fmt.number(v / 1000, 2)} kWh`).optional()
			})
			.refine((t) => t.soc !== undefined || t.energy_Wh !== undefined, 'give a target state of charge (soc) or an energy to add (energy_Wh), or both'),
		timeCap_s: num('charge time cap', 60, 86_400, fmt.minutes).default(3 * 3600)
	})
	.superRefine((s, ctx) => {
		const p = s.drive.profile;
		if (p.kind === 'table' && p.time_s.length >= 2 && p.time_s[p.time_s.length - 1] < s.drive.duration_s) {
			ctx.addIssue({
				code: z.ZodIssueCode.custom,
				path: ['drive', 'profile', 'time_s'],
				message: `the drive table ends at ${fmt.minutes(p.time_s[p.time_s.length - 1])} but the drive lasts ${fmt.minutes(s.drive.duration_s)}; extend the table or shorten drive.duration_s`
			});
		}
		if (s.target.soc !== undefined && s.target.soc <= s.arrivalSoc) {
			ctx.addIssue({
				code: z.ZodIssueCode.custom,
				path: ['target', 'soc'],
				message: `target state of charge ${fmt.percent(s.target.soc)} is not above the arrival state of charge ${fmt.percent(s.arrivalSoc)}; raise the target or lower arrivalSoc`
			});
		}
	});

export const strategySchema = z.object({
	leadTime_s: num('pre-conditioning lead time', 0, 86_400, fmt.minutes),
	coolantSetpoint_K: temp('coolant set-point', -30, 120),
	heaterPowerCap_W: nonNegative('heater power cap', 1e5, fmt.power).optional()
});

export const simulationOptionsSchema = z.object({
	/** Spacing of the down-sampled time series, s (default 10). */
	seriesInterval_s: num('series interval', 1, 3600, (v) => `${v} s`).optional(),
	/** Keep the time series (default true; sweeps pass false). */
	keepSeries: z.boolean().optional(),
	protocol: z.enum(['plating-limited', 'cccv'], { message: "protocol must be 'plating-limited' or 'cccv'" }).optional(),
	/** Charging control period, s (default 1, like a BMS cycle): the shortest charging step. */
	controlPeriod_s: num('control period', 0.1, 30, (v) => `${v} s`).optional(),
	/**
	 * Longer charging steps on smooth stretches (default true): up to 32 control periods while the
	 * limit in force stays the same and the current changes slowly; back to one period when a limit
	 * switches. false = every step one control period (the converged reference of the accuracy test).
	 */
	adaptiveSteps: z.boolean().optional(),
	/** Time step during drive and dwell, s (default 5). */
	driveStep_s: num('drive time step', 0.1, 60, (v) => `${v} s`).optional(),
	/** Finite-volume shells per particle (default 20). */
	particleShells: z.number().int().min(4).max(200).optional(),
	/** Electrolyte finite-volume cells per region (default 20 | 10 | 20). */
	electrolyteCells: z
		.object({
			negative: z.number().int().min(2).max(200),
			separator: z.number().int().min(1).max(200),
			positive: z.number().int().min(2).max(200)
		})
		.strict()
		.optional(),
	/** 'ideal' = infinite electrolyte transport: the single particle model (default 'full'). */
	electrolyte: z.enum(['full', 'ideal'], { message: "electrolyte must be 'full' or 'ideal'" }).optional(),
	/** Add the heat of mixing of the particles' concentration gradients (default false). */
	heatOfMixing: z.boolean().optional()
});

/** Checks of a strategy against its cell and pack (shared by the full input check and prepared scenarios). */
export function strategyIssues(
	cell: z.output<typeof cellParamsSchema>,
	pack: z.output<typeof packDesignSchema>,
	strategy: z.output<typeof strategySchema>
): { path: (string | number)[]; message: string }[] {
	const out: { path: (string | number)[]; message: string }[] = [];
	const maxT = cell.limits.maxTemp_K;
	if (strategy.coolantSetpoint_K > maxT) {
		out.push({
			path: ['strategy', 'coolantSetpoint_K'],
			message: `coolant set-point ${fmt.celsius(strategy.coolantSetpoint_K)} is above the cell's maximum temperature ${fmt.celsius(maxT)}; choose a set-point at or below it`
		});
	}
	if (strategy.heaterPowerCap_W !== undefined && strategy.heaterPowerCap_W > pack.heater.maxElectricalPower_W) {
		out.push({
			path: ['strategy', 'heaterPowerCap_W'],
			message: `heater power cap ${fmt.power(strategy.heaterPowerCap_W)} is above the pack heater's ${fmt.power(pack.heater.maxElectricalPower_W)}; lower the cap or choose a pack with a larger heater`
		});
	}
	return out;
}

export const simulationInputSchema = z
	.object({
		cell: cellParamsSchema,
		pack: packDesignSchema,
		scenario: scenarioSchema,
		strategy: strategySchema.nullable(),
		options: simulationOptionsSchema.optional()
	})
	.superRefine((input, ctx) => {
		const { cell, pack, scenario, strategy } = input;
		const maxT = cell.limits.maxTemp_K;
		if (strategy) for (const issue of strategyIssues(cell, pack, strategy)) ctx.addIssue({ code: z.ZodIssueCode.custom, ...issue });
		if (scenario.ambient_K >= maxT) {
			ctx.addIssue({
				code: z.ZodIssueCode.custom,
				path: ['scenario', 'ambient_K'],
				message: `ambient temperature ${fmt.celsius(scenario.ambient_K)} is at or above the cell's maximum temperature ${fmt.celsius(maxT)}; the pack cannot be operated there`
			});
		}
		if (scenario.initialPackTemp_K !== undefined && scenario.initialPackTemp_K >= maxT) {
			ctx.addIssue({
				code: z.ZodIssueCode.custom,
				path: ['scenario', 'initialPackTemp_K'],
				message: `initial pack temperature ${fmt.celsius(scenario.initialPackTemp_K)} is at or above the cell's maximum temperature ${fmt.celsius(maxT)}`
			});
		}
		if (pack.defaultPolicy.chillAbove_K >= maxT) {
			ctx.addIssue({
				code: z.ZodIssueCode.custom,
				path: ['pack', 'defaultPolicy', 'chillAbove_K'],
				message: `the pack starts chilling at ${fmt.celsius(pack.defaultPolicy.chillAbove_K)}, at or above the cell's maximum temperature ${fmt.celsius(maxT)}; lower chillAbove_K`
			});
		}
	});

export type CellParams = z.output<typeof cellParamsSchema>;
export type CellParamsInput = z.input<typeof cellParamsSchema>;
export type ElectrodeParams = z.output<typeof electrodeSchema>;
export type PackDesign = z.output<typeof packDesignSchema>;
export type PackDesignInput = z.input<typeof packDesignSchema>;
export type Scenario = z.output<typeof scenarioSchema>;
export type ScenarioInput = z.input<typeof scenarioSchema>;
export type DriveProfile = Scenario['drive']['profile'];
export type Strategy = z.output<typeof strategySchema>;
export type SimulationOptions = z.output<typeof simulationOptionsSchema>;
export interface SimulationInput {
	cell: CellParams;
	pack: PackDesign;
	scenario: Scenario;
	/** null = baseline: the pack's own default thermal policy, no pre-conditioning. */
	strategy: Strategy | null;
	options?: SimulationOptions;
}

/** Thrown for invalid input; `field` is the dotted path of the first problem, `issues` all of them. */
export class EngineInputError extends Error {
	readonly field: string;
	readonly issues: string[];
	constructor(issues: { field: string; message: string }[]) {
		const first = issues[0] ?? { field: '', message: 'invalid input' };
		super(first.field ? `${first.field}: ${first.message}` : first.message);
		this.name = 'EngineInputError';
		this.field = first.field;
		this.issues = issues.map((i) => (i.field ? `${i.field}: ${i.message}` : i.message));
	}
}

/** Dotted path ("scenario.charger.maxPower_W", "cell.negative.ocp.potential_V[3]"). */
export function issuePath(path: (string | number)[], prefix = ''): string {
	let out = prefix;
	for (const p of path) {
		if (typeof p === 'number') out += `[${p}]`;
		else out += out ? `.${p}` : p;
	}
	return out;
}

export function zodIssues(error: z.ZodError, prefix = ''): { field: string; message: string }[] {
	return error.issues.map((issue) => {
		let message = issue.message;
		if (issue.code === z.ZodIssueCode.invalid_type && issue.received === 'undefined') message = 'is missing';
		else if (issue.code === z.ZodIssueCode.unrecognized_keys) message = `unknown field(s) ${issue.keys.join(', ')}; check the spelling`;
		return { field: issuePath(issue.path, prefix), message };
	});
}

/** Validate a full simulation input; throws EngineInputError naming the field. */
export function validateSimulationInput(input: unknown): SimulationInput {
	const parsed = simulationInputSchema.safeParse(input);
	if (!parsed.success) throw new EngineInputError(zodIssues(parsed.error));
	return parsed.data as SimulationInput;
}
