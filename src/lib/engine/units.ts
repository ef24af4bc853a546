/**
 * Units, physical constants and the engine's one sign convention.
 *
 * SIGN CONVENTION (stated once, used everywhere in src/lib/engine):
 *   cell current I_A > 0 while CHARGING, < 0 while discharging.
 *   A molar flux into a particle (lithium insertion) is positive.
 *   Heat flows are positive INTO the node they are written for.
 *
 * UNITS: SI inside the engine, with the unit in every name:
 *   temp_K, time_s, power_W, energy_J (Wh only in summaries: *_Wh), current_A,
 *   voltage_V, concentration_mol_m3, length_m, area_m2, conductance_W_per_K.
 *   State of charge and state of health are fractions in 0…1.
 * Conversions to °C, minutes, kW and kWh happen only at the edges (messages,
 * CLI, web pages) through the helpers below.
 */

/** Faraday constant, C/mol (CODATA 2018, exact). */
export const FARADAY_C_per_mol = 96485.33212;
/** Molar gas constant, J/(mol·K) (CODATA 2018, exact). */
export const GAS_CONSTANT_J_per_molK = 8.314462618;
export const ZERO_CELSIUS_K = 273.15;
/** Reference temperature of all parameters unless a cell says otherwise. */
export const REFERENCE_TEMP_K = 298.15;
export const SECONDS_PER_HOUR = 3600;
export const J_PER_WH = 3600;

export const celsiusToKelvin = (temp_C: number): number => temp_C + ZERO_CELSIUS_K;
export const kelvinToCelsius = (temp_K: number): number => temp_K - ZERO_CELSIUS_K;

function trim(value: number, decimals: number): string {
	const s = Number(value.toFixed(decimals)).toString();
	return s === '-0' ? '0' : s;
}

/** Formatting for user-facing messages (edge conversion). */
export const fmt = {
	celsius: (temp_K: number) => `${trim(temp_K - ZERO_CELSIUS_K, 1)} °C`,
	minutes: (time_s: number) => `${trim(time_s / 60, 1)} min`,
	percent: (fraction: number) => `${trim(fraction * 100, 1)} %`,
	power: (power_W: number) =>
		Math.abs(power_W) >= 1000 ? `${trim(power_W / 1000, 2)} kW` : `${trim(power_W, 1)} W`,
	volts: (voltage_V: number) => `${trim(voltage_V, 3)} V`,
	millivolts: (voltage_V: number) => `${trim(voltage_V * 1000, 1)} mV`,
	amps: (current_A: number) => `${trim(current_A, 1)} A`,
	kelvin: (temp_K: number) => `${trim(temp_K, 2)} K`,
	number: (x: number, decimals = 3) => trim(x, decimals)
};

/**
 * Arrhenius factor exp[(Ea/R)(1/T_ref − 1/T)]: multiplies a property given at
 * T_ref to get its value at T (Arrhenius; used for diffusivities, rate
 * constants, conductivity; resistances are divided by it).
 */
export function arrhenius(activation_J_per_mol: number, temp_K: number, refTemp_K = REFERENCE_TEMP_K): number {
	return Math.exp((activation_J_per_mol / GAS_CONSTANT_J_per_molK) * (1 / refTemp_K - 1 / temp_K));
}
