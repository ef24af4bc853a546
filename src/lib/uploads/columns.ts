/**
 * Column names and units of uploaded tables.
 *
 * A header cell names a quantity and, after an underscore or in brackets, its
 * unit: `time_s`, `Time (min)`, `power_kW`, `Speed [km/h]`, `voltage_V`,
 * `current_mA`, `temp_C`, `Cell temperature (°C)`, `coolant_K`. A header
 * without a unit (`time`) takes the unit chosen in the upload form. Columns
 * whose name matches no quantity of the upload's kind are ignored (and
 * listed in the notes), so an exported check with extra simulated columns
 * still reads as a measured log.
 */

export type Quantity =
	| 'time'
	| 'power'
	| 'speed'
	| 'stoichiometry'
	| 'potential'
	| 'voltage'
	| 'current'
	| 'temp'
	| 'ambient'
	| 'coolant';

export interface UnitDef {
	/** How the unit is written in messages. */
	label: string;
	/** Value in this unit → SI. */
	toSi: (x: number) => number;
}

const linear = (label: string, factor: number): UnitDef => ({ label, toSi: (x) => x * factor });
const celsius: UnitDef = { label: '°C', toSi: (x) => x + 273.15 };
const kelvin: UnitDef = { label: 'K', toSi: (x) => x };
const fahrenheit: UnitDef = { label: '°F', toSi: (x) => ((x - 32) * 5) / 9 + 273.15 };
const TEMP_UNITS: Record<string, UnitDef> = { c: celsius, degc: celsius, celsius, k: kelvin, kelvin, f: fahrenheit, degf: fahrenheit };

/** Units each quantity accepts, keyed by the normalised spelling (see normaliseHeader). */
export const UNITS: Record<Quantity, Record<string, UnitDef>> = {
	time: { s: linear('s', 1), sec: linear('s', 1), ms: linear('ms', 1e-3), min: linear('min', 60), h: linear('h', 3600), hr: linear('h', 3600) },
	power: { w: linear('W', 1), kw: linear('kW', 1e3) },
	speed: {
		m_s: linear('m/s', 1),
		mps: linear('m/s', 1),
		km_h: linear('km/h', 1 / 3.6),
		kmh: linear('km/h', 1 / 3.6),
		kph: linear('km/h', 1 / 3.6),
		mph: linear('mph', 0.44704)
	},
	stoichiometry: { '': linear('', 1), frac: linear('', 1) },
	potential: { v: linear('V', 1), mv: linear('mV', 1e-3) },
	voltage: { v: linear('V', 1), mv: linear('mV', 1e-3) },
	current: { a: linear('A', 1), ma: linear('mA', 1e-3) },
	temp: TEMP_UNITS,
	ambient: TEMP_UNITS,
	coolant: TEMP_UNITS
};

/** Names a header may use for each quantity (normalised spelling). */
export const ALIASES: Record<Quantity, string[]> = {
	time: ['time', 't', 'elapsed', 'elapsed_time', 'test_time'],
	power: ['power', 'p', 'battery_power', 'pack_power', 'traction_power'],
	speed: ['speed', 'vehicle_speed', 'velocity'],
	stoichiometry: ['stoichiometry', 'sto', 'x', 'theta', 'lithiation'],
	potential: ['potential', 'ocp', 'u', 'e', 'ocp_potential'],
	voltage: ['voltage', 'v', 'u', 'cell_voltage', 'volt'],
	current: ['current', 'i', 'cell_current'],
	temp: ['temp', 'temperature', 'cell_temp', 'cell_temperature', 't_cell'],
	ambient: ['ambient', 'ambient_temp', 'ambient_temperature', 't_amb', 't_ambient'],
	coolant: ['coolant', 'coolant_temp', 'coolant_temperature', 't_coolant', 'coolant_inlet']
};

export const QUANTITY_WORDS: Record<Quantity, string> = {
	time: 'time',
	power: 'power',
	speed: 'speed',
	stoichiometry: 'stoichiometry',
	potential: 'potential',
	voltage: 'voltage',
	current: 'current',
	temp: 'cell temperature',
	ambient: 'ambient temperature',
	coolant: 'coolant temperature'
};

/** Units offered in the upload form for headers without one (first = suggested). */
export const FORM_UNITS: Partial<Record<Quantity, string[]>> = {
	time: ['s', 'min', 'h', 'ms'],
	power: ['kw', 'w'],
	speed: ['km_h', 'm_s', 'mph'],
	potential: ['v', 'mv'],
	voltage: ['v', 'mv'],
	current: ['a', 'ma'],
	temp: ['c', 'k'],
	ambient: ['c', 'k'],
	coolant: ['c', 'k']
};

/** Lower case; ° dropped; brackets, slashes, dots, dashes and spaces become single underscores. */
export function normaliseHeader(raw: string): string {
	return raw
		.trim()
		.toLowerCase()
		.replace(/°/g, '')
		.replace(/[\s[\](){}/.\-]+/g, '_')
		.replace(/_+/g, '_')
		.replace(/^_|_$/g, '');
}

export interface HeaderMatch {
	quantity: Quantity;
	/** Normalised unit key, '' when the header names none. */
	unit: string;
}

/** Which of the allowed quantities a header names, and in which unit (null = none of them). */
export function matchHeader(raw: string, allowed: readonly Quantity[]): HeaderMatch | null {
	const h = normaliseHeader(raw);
	if (!h) return null;
	let best: (HeaderMatch & { aliasLength: number }) | null = null;
	for (const q of allowed) {
		for (const alias of ALIASES[q]) {
			let unit: string | null = null;
			if (h === alias) unit = '';
			else if (h.startsWith(alias + '_')) {
				const rest = h.slice(alias.length + 1);
				if (rest in UNITS[q]) unit = rest;
			}
			// The longest alias wins: "cell_temp_c" is a temperature, not "cell…".
			if (unit !== null && (!best || alias.length > best.aliasLength)) best = { quantity: q, unit, aliasLength: alias.length };
		}
	}
	return best ? { quantity: best.quantity, unit: best.unit } : null;
}
