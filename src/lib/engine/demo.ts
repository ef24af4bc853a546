/**
 * Demo parameter sets. INVENTED cells and pack: plausible, clearly demo data,
 * not any commercial product. Where a value comes from a paper it is cited;
 * the rest are demo values chosen to be of the usual magnitude.
 */
import type { CellParams, PackDesign, Scenario } from './schemas';
import { celsiusToKelvin } from './units';

/**
 * High-energy NMC 811 / graphite pouch, 60 Ah. Electrode materials, geometry
 * and transport properties at 25 °C follow Chen et al., J. Electrochem. Soc.
 * 167 (2020) 080534 (values from memory of the paper: particle radii, thicknesses, volume
 * fractions, c_max, solid diffusivities, rate constants, electrolyte at 1 M,
 * OCP fits); the electrode area is scaled to 60 Ah. Activation energies:
 * graphite diffusion 30.3 kJ/mol and kinetics 53.4 kJ/mol, NMC kinetics
 * 43.6 kJ/mol (Ecker et al., J. Electrochem. Soc. 162 (2015) A1836, values
 * from memory). Electrolyte transport: the polynomials of Nyman et al.,
 * Electrochim. Acta 53 (2008) 6356, with demo activation energies. Films,
 * contact resistance, entropic tables, thermal properties, ageing and the
 * CC–CV table are demo values.
 */
export const demoNmcPouch: CellParams = {
	id: 'demo-nmc-pouch',
	name: 'Demo HE-NMC pouch 60 Ah',
	chemistry: 'NMC811/graphite',
	format: 'pouch',
	electrodeArea_m2: 1.21,
	negative: {
		thickness_m: 85.2e-6,
		activeMaterialFraction: 0.75,
		porosity: 0.25,
		particleRadius_m: 5.86e-6,
		maxConcentration_mol_m3: 33133,
		diffusivity_m2_s: 3.3e-14,
		diffusivityActivation_J_per_mol: 30300,
		rateConstant: 6.48e-7,
		rateActivation_J_per_mol: 53400,
		filmResistance_ohm_m2: 0.002,
		filmActivation_J_per_mol: 35000,
		conductivity_S_per_m: 215,
		conductivityBruggeman: 0,
		ocp: { kind: 'fit', fit: 'graphite' },
		entropic: {
			stoichiometry: [0, 0.1, 0.2, 0.35, 0.5, 0.8, 1],
			dUdT_V_per_K: [3e-4, 2e-4, 5e-5, -5e-5, -1e-4, -5e-5, -2e-5]
		}
	},
	positive: {
		thickness_m: 75.6e-6,
		activeMaterialFraction: 0.665,
		porosity: 0.335,
		particleRadius_m: 5.22e-6,
		maxConcentration_mol_m3: 63104,
		diffusivity_m2_s: 4e-15,
		diffusivityActivation_J_per_mol: 25000,
		rateConstant: 3.42e-6,
		rateActivation_J_per_mol: 43600,
		filmResistance_ohm_m2: 0.0005,
		filmActivation_J_per_mol: 30000,
		conductivity_S_per_m: 0.18,
		conductivityBruggeman: 0,
		ocp: { kind: 'fit', fit: 'nmc811' },
		entropic: {
			stoichiometry: [0, 0.3, 0.5, 0.7, 1],
			dUdT_V_per_K: [-1e-4, -5e-5, 0, 5e-5, 1e-4]
		}
	},
	separator: { thickness_m: 12e-6, porosity: 0.47 },
	electrolyte: {
		concentration_mol_m3: 1000,
		diffusivityModel: { kind: 'nyman2008' },
		diffusivityActivation_J_per_mol: 17000,
		conductivityModel: { kind: 'nyman2008' },
		conductivityActivation_J_per_mol: 17000,
		cationTransference: 0.2594,
		thermodynamicFactor: 1,
		bruggeman: 1.5
	},
	stoichiometry: { negativeAt0Soc: 0.0279, negativeAt100Soc: 0.9014, positiveAt100Soc: 0.2661 },
	contactResistance_ohm: 0.0003,
	thermal: { mass_kg: 0.82, specificHeat_J_per_kgK: 1000, coreToSurfaceResistance_K_per_W: 0.2 },
	limits: { maxVoltage_V: 4.2, minVoltage_V: 2.5, maxTemp_K: celsiusToKelvin(55), anodePotentialMargin_V: 0.01 },
	ageing: { anodeLossPerFade: 0.5, filmGrowthPerFade: 5, contactGrowthPerFade: 2.5 },
	cccvReference: {
		temp_K: [-20, 0, 10, 25, 45].map(celsiusToKelvin),
		currentC: [0.1, 0.3, 0.5, 1.0, 1.0]
	}
};

/**
 * LFP / graphite prismatic, 105 Ah. Graphite OCP fit of Chen et al. (2020);
 * the LFP open-circuit curve is an invented demo table with the usual flat
 * plateau near 3.42 V; LFP c_max from its theoretical capacity (170 mAh/g,
 * 3.6 g/cm³). Electrolyte transport: the correlations of Valøen & Reimers,
 * J. Electrochem. Soc. 152 (2005) A882 (they carry temperature themselves).
 * Everything else is demo data.
 */
export const demoLfpPrismatic: CellParams = {
	id: 'demo-lfp-prismatic',
	name: 'Demo LFP prismatic 105 Ah',
	chemistry: 'LFP/graphite',
	format: 'prismatic',
	electrodeArea_m2: 3.18,
	negative: {
		thickness_m: 70e-6,
		activeMaterialFraction: 0.72,
		porosity: 0.28,
		particleRadius_m: 6e-6,
		maxConcentration_mol_m3: 30555,
		diffusivity_m2_s: 3e-14,
		diffusivityActivation_J_per_mol: 30300,
		rateConstant: 6e-7,
		rateActivation_J_per_mol: 53400,
		filmResistance_ohm_m2: 0.002,
		filmActivation_J_per_mol: 35000,
		conductivity_S_per_m: 100,
		conductivityBruggeman: 1.5,
		ocp: { kind: 'fit', fit: 'graphite' },
		entropic: {
			stoichiometry: [0, 0.1, 0.2, 0.35, 0.5, 0.8, 1],
			dUdT_V_per_K: [3e-4, 2e-4, 5e-5, -5e-5, -1e-4, -5e-5, -2e-5]
		}
	},
	positive: {
		thickness_m: 100e-6,
		activeMaterialFraction: 0.65,
		porosity: 0.3,
		particleRadius_m: 5e-8,
		maxConcentration_mol_m3: 22806,
		diffusivity_m2_s: 2e-18,
		diffusivityActivation_J_per_mol: 35000,
		rateConstant: 3e-7,
		rateActivation_J_per_mol: 40000,
		filmResistance_ohm_m2: 0,
		filmActivation_J_per_mol: 0,
		conductivity_S_per_m: 0.5,
		conductivityBruggeman: 1.5,
		ocp: {
			kind: 'table',
			stoichiometry: [0, 0.02, 0.05, 0.1, 0.2, 0.5, 0.8, 0.9, 0.95, 0.98, 1],
			potential_V: [4.1, 3.6, 3.47, 3.44, 3.43, 3.425, 3.42, 3.4, 3.35, 3.1, 2.7]
		},
		entropic: { stoichiometry: [0, 1], dUdT_V_per_K: [-5e-5, -5e-5] }
	},
	separator: { thickness_m: 16e-6, porosity: 0.45 },
	electrolyte: {
		concentration_mol_m3: 1200,
		diffusivityModel: { kind: 'valoen-reimers2005' },
		diffusivityActivation_J_per_mol: 0,
		conductivityModel: { kind: 'valoen-reimers2005' },
		conductivityActivation_J_per_mol: 0,
		cationTransference: 0.3,
		thermodynamicFactor: 1,
		bruggeman: 1.5
	},
	stoichiometry: { negativeAt0Soc: 0.05, negativeAt100Soc: 0.85, positiveAt100Soc: 0.03 },
	contactResistance_ohm: 0.0002,
	thermal: { mass_kg: 1.98, specificHeat_J_per_kgK: 1050, coreToSurfaceResistance_K_per_W: 0.5 },
	limits: { maxVoltage_V: 3.65, minVoltage_V: 2.5, maxTemp_K: celsiusToKelvin(55), anodePotentialMargin_V: 0.01 },
	ageing: { anodeLossPerFade: 0.4, filmGrowthPerFade: 4, contactGrowthPerFade: 2 },
	cccvReference: {
		temp_K: [-20, 0, 10, 25, 45].map(celsiusToKelvin),
		currentC: [0.1, 0.3, 0.5, 1.0, 1.0]
	}
};

export const demoCells: CellParams[] = [demoNmcPouch, demoLfpPrismatic];

/**
 * Demo van pack: 108 series × 3 parallel cells, one liquid-cooled cold plate
 * loop with a 7 kW PTC heater and an 8 kW refrigerant chiller, two cell
 * groups (a well-cooled majority and a 20 % group at the loop end).
 */
export const demoPack: PackDesign = {
	id: 'demo-van-pack',
	name: 'Demo van pack 108s3p',
	seriesCount: 108,
	parallelCount: 3,
	cellGroups: [
		{ name: 'well-cooled', share: 0.8, coolingFactor: 1.0 },
		{ name: 'loop end', share: 0.2, coolingFactor: 0.7 }
	],
	thermal: {
		plateConductancePerCell_W_per_K: 1.5,
		coolantVolume_m3: 0.008,
		coolantDensity_kg_per_m3: 1075,
		coolantSpecificHeat_J_per_kgK: 3400,
		plateHeatCapacity_J_per_K: 13500,
		cellsToEnclosure_W_per_K: 20,
		coolantToEnclosure_W_per_K: 10,
		enclosureHeatCapacity_J_per_K: 50000,
		enclosureToAmbient_W_per_K: 25
	},
	heater: { kind: 'ptc', maxElectricalPower_W: 7000, heatPerElectrical: 0.95 },
	chiller: { maxHeatRemoval_W: 8000, nominalCop: 2.5, carnotFraction: 0.4, condenserApproach_K: 15 },
	controller: { proportionalGain_W_per_K: 1500, integralTime_s: 600 },
	defaultPolicy: {
		chillAbove_K: celsiusToKelvin(35),
		chillSetpoint_K: celsiusToKelvin(25),
		chargeHeatTarget_K: celsiusToKelvin(20)
	}
};

export const demoPacks: PackDesign[] = [demoPack];

/** A cold-morning fast-charge stop: −10 °C, 30 min drive at 25 kW, 5 min to plug in, 150 kW / 400 A charger, to 80 %. */
export const exampleScenario: Scenario = {
	name: 'Cold morning fast-charge stop',
	ambient_K: celsiusToKelvin(-10),
	stateOfHealth: 1,
	arrivalSoc: 0.2,
	drive: { duration_s: 1800, profile: { kind: 'builtin', name: 'mixed', averagePower_W: 25000 } },
	dwell_s: 300,
	charger: { maxCurrent_A: 400, maxPower_W: 150000 },
	target: { soc: 0.8 },
	timeCap_s: 3 * 3600
};

export function findDemoCell(id: string): CellParams | undefined {
	return demoCells.find((c) => c.id === id);
}
export function findDemoPack(id: string): PackDesign | undefined {
	return demoPacks.find((p) => p.id === id);
}
