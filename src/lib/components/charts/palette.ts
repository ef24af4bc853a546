/**
 * Paretherm's chart colours: the one place they are chosen.
 *
 * - One colour per physical quantity, the same in every chart of the product.
 * - One shade per limit in force (the band under the trace time axis and the dashed
 *   limit lines share it), with the words used in legends.
 * - A cold→warm scale (glacier → neutral → ember) reserved for temperature-coded data.
 * - A sequential scale for everything else that is graded (time saved on the heat map).
 *
 * Colours are mid-to-dark so lines survive a black-and-white laser printer; where
 * series must be told apart in grey print they also differ in line type or symbol.
 */

/** Quantities plotted across the product. */
export type Quantity =
	| 'current'
	| 'voltage'
	| 'cellTemp'
	| 'coolantTemp'
	| 'anodePotential'
	| 'heaterPower'
	| 'chillerPower'
	| 'soc';

export const QUANTITY_COLOURS: Record<Quantity, string> = {
	current: '#6a3fb3', // violet: kept clear of the "current" action accent (#3048c2)
	voltage: '#3f8a1c', // leaf green
	cellTemp: '#d9621f', // ember (warm end of the temperature axis)
	coolantTemp: '#2f8bc9', // glacier (cold end)
	anodePotential: '#b0306e', // plum
	heaterPower: '#9e2a2a', // brick
	chillerPower: '#11857f', // teal
	soc: '#37414f' // shale
};

/** Legend words for the quantities, units added where they are plotted. */
export const QUANTITY_LABELS: Record<Quantity, string> = {
	current: 'Cell current',
	voltage: 'Cell voltage',
	cellTemp: 'Cell temperature',
	coolantTemp: 'Coolant temperature',
	anodePotential: 'Anode potential',
	heaterPower: 'Heater power',
	chillerPower: 'Chiller power',
	soc: 'State of charge'
};

/** What holds the charge back at an instant ("limit in force"). */
export type LimitKey =
	| 'charger-current'
	| 'charger-power'
	| 'max-voltage'
	| 'max-temperature'
	| 'anode-potential'
	| 'electrolyte-depletion'
	| 'target';

export const LIMIT_KEYS: readonly LimitKey[] = [
	'charger-current',
	'charger-power',
	'max-voltage',
	'max-temperature',
	'anode-potential',
	'electrolyte-depletion',
	'target'
];

/**
 * One shade per limit. Each echoes the quantity it limits (charger current → violet,
 * cell voltage → green, temperature → ember, plating margin → plum) so a dashed limit
 * line, the band under the axis and the trace it bounds read as one family.
 */
export const LIMIT_COLOURS: Record<LimitKey, string> = {
	'charger-current': '#9479d6',
	'charger-power': '#d4a72c',
	'max-voltage': '#7fb04f',
	'max-temperature': '#ef9a5b',
	'anode-potential': '#d0679c',
	'electrolyte-depletion': '#3f8fa6',
	target: '#8e9aab'
};

export const LIMIT_LABELS: Record<LimitKey, string> = {
	'charger-current': 'Charger current',
	'charger-power': 'Charger power',
	'max-voltage': 'Cell voltage limit',
	'max-temperature': 'Cell temperature limit',
	'anode-potential': 'Plating margin (anode potential)',
	'electrolyte-depletion': 'Electrolyte depletion',
	target: 'Target reached'
};

/** Shade for a limit name the palette does not know (new engine limits show up, in grey). */
export const UNKNOWN_LIMIT_COLOUR = '#b8c0cc';

export function isLimitKey(key: string): key is LimitKey {
	return (LIMIT_KEYS as readonly string[]).includes(key);
}
export function limitColour(key: string): string {
	return isLimitKey(key) ? LIMIT_COLOURS[key] : UNKNOWN_LIMIT_COLOUR;
}
export function limitLabel(key: string): string {
	return isLimitKey(key) ? LIMIT_LABELS[key] : key;
}

/** Cold→warm scale for temperature-coded data only (never for status). */
export const TEMPERATURE_SCALE: readonly string[] = ['#2f8bc9', '#8cc2e6', '#ece8e2', '#f7b27a', '#e2702a'];

/**
 * Sequential scale for graded non-temperature data (time saved): pale straw → deep indigo.
 * Monotone in lightness, so it also reads in grey print.
 */
export const SEQUENTIAL_SCALE: readonly string[] = ['#f6f3d9', '#cfe6b8', '#86c6a8', '#3f9c9b', '#2a6a8e', '#263a73'];

/** Colour at fraction f ∈ [0, 1] along a scale (linear RGB interpolation between stops). */
export function scaleColour(scale: readonly string[], f: number): string {
	const x = Math.min(1, Math.max(0, Number.isFinite(f) ? f : 0)) * (scale.length - 1);
	const i = Math.min(scale.length - 2, Math.floor(x));
	const t = x - i;
	const a = hexToRgb(scale[i]);
	const b = hexToRgb(scale[i + 1]);
	const mix = a.map((v, k) => Math.round(v + (b[k] - v) * t));
	return '#' + mix.map((v) => v.toString(16).padStart(2, '0')).join('');
}

function hexToRgb(hex: string): [number, number, number] {
	const h = hex.replace('#', '');
	return [0, 2, 4].map((o) => parseInt(h.slice(o, o + 2), 16)) as [number, number, number];
}

/** Pareto chart marks. Shapes differ as well as colours, so they survive grey print. */
export const PARETO_COLOURS = {
	front: '#263a9c',
	dominated: '#98a4b4',
	infeasible: '#7a889b',
	baseline: '#171c24',
	recommended: '#171c24',
	rule: '#a84a12'
} as const;

/** Scenario colours for overlaid fronts and curves; paired with line types and symbols. */
export const SCENARIO_COLOURS: readonly string[] = [
	'#263a9c',
	'#c2571a',
	'#2e7f6e',
	'#8a3b8f',
	'#5b687b',
	'#a8870f',
	'#b8324b',
	'#2f8bc9'
];
export const SCENARIO_LINE_TYPES: readonly ('solid' | 'dashed' | 'dotted')[] = ['solid', 'dashed', 'dotted'];
export const SCENARIO_SYMBOLS: readonly string[] = ['circle', 'rect', 'triangle', 'diamond', 'roundRect', 'pin'];

/** Chrome: axes, grid lines, text. Dark on white so charts print as they look. */
export const CHROME = {
	text: '#262e39',
	mutedText: '#5b687b',
	axis: '#7a889b',
	grid: '#e6eaef',
	background: '#ffffff'
} as const;

export const FONT_FAMILY = 'Manrope, system-ui, sans-serif';
