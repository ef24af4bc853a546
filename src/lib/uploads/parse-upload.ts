/**
 * Parsing and validation of uploaded tables: drive profiles, electrode OCP
 * tables and measured charge or drive logs. Pure (bytes and options in, SI
 * columns or an UploadError out), so every refusal is unit-tested.
 *
 * Every refusal names the row (the file's line number, as a spreadsheet shows
 * it), the column, the value with its unit and what to change. Nothing is
 * partially accepted: one problem refuses the whole file.
 */
import { roadLoadPower_W, vehicleRoadLoadSchema, type VehicleRoadLoad, type VehicleRoadLoadInput } from '../engine/road-load';
import { decodeText, MAX_ISSUES, readCsvRows, UploadError } from './csv-reader';
import { FORM_UNITS, matchHeader, QUANTITY_WORDS, UNITS, type Quantity } from './columns';

export const UPLOAD_KINDS = ['drive-profile', 'ocp-table', 'measured-log'] as const;
export type UploadKind = (typeof UPLOAD_KINDS)[number];
export const UPLOAD_KIND_LABEL: Record<UploadKind, string> = {
	'drive-profile': 'Drive profile',
	'ocp-table': 'OCP table',
	'measured-log': 'Measured log'
};

export function isUploadKind(v: unknown): v is UploadKind {
	return typeof v === 'string' && (UPLOAD_KINDS as readonly string[]).includes(v);
}

export interface UploadOptions {
	kind: UploadKind;
	/** Units of columns whose header names none (normalised keys, e.g. 'kw', 'c'). */
	units?: Partial<Record<Quantity, string>>;
	/** Drive profiles from a speed trace: the vehicle's road-load parameters. */
	vehicle?: VehicleRoadLoadInput;
	/** OCP tables: which electrode the table describes (checked for plausibility). */
	electrode?: 'negative' | 'positive';
	/** Measured logs: sign of the logged current. */
	currentSign?: 'charge-positive' | 'discharge-positive';
	/** Measured logs per module or pack: cells in series (voltage is divided) and in parallel (current is divided). */
	seriesCells?: number;
	parallelCells?: number;
}

/** Canonical SI column names per kind; the export writes them in this order. */
export const CANONICAL_COLUMNS: Record<UploadKind, string[]> = {
	'drive-profile': ['time_s', 'power_W', 'speed_m_s'],
	'ocp-table': ['stoichiometry', 'potential_V'],
	'measured-log': ['time_s', 'current_A', 'voltage_V', 'temp_K', 'ambient_K', 'coolant_K']
};

export interface ColumnSource {
	quantity: Quantity;
	header: string;
	unit: string;
	/** Where the unit came from. */
	unitFrom: 'header' | 'form';
}

export interface ParsedUpload {
	kind: UploadKind;
	/** SI columns of equal length, named as in CANONICAL_COLUMNS. */
	columns: Record<string, number[]>;
	rowCount: number;
	headerFound: boolean;
	sources: ColumnSource[];
	ignoredColumns: string[];
	notes: string[];
	/** Kind-specific facts kept with the upload (road-load parameters, electrode, time offset…). */
	meta: Record<string, unknown>;
}

interface KindSpec {
	required: Quantity[][];
	optional: Quantity[];
	/** Column order of a file without a header. */
	headerless: (opts: UploadOptions) => Quantity[];
}

const SPECS: Record<UploadKind, KindSpec> = {
	'drive-profile': {
		// Time and power, or time and speed (converted with the road-load model).
		required: [['time'], ['power', 'speed']],
		optional: [],
		headerless: (o) => ['time', o.units?.speed && !o.units?.power ? 'speed' : 'power']
	},
	'ocp-table': { required: [['stoichiometry'], ['potential']], optional: [], headerless: () => ['stoichiometry', 'potential'] },
	'measured-log': {
		required: [['time'], ['current'], ['voltage']],
		optional: ['temp', 'ambient', 'coolant'],
		headerless: () => ['time', 'current', 'voltage', 'temp', 'ambient', 'coolant']
	}
};

/** Plausible ranges in SI, with the words shown when a value falls outside. */
interface RangeRule {
	min: number;
	max: number;
	/** SI value shown in the range's display unit. */
	show: (si: number) => string;
	hint: (si: number, unit: string, opts: UploadOptions) => string;
}

const C = (k: number) => k - 273.15;
const num = (x: number, d = 3) => String(Number(x.toFixed(d)));
const tempHint = (si: number, unit: string) =>
	unit === 'c' && si > 473 ? 'is the column in kelvin? Write _K in the header' : unit === 'k' && si < 200 ? 'is the column in °C? Write _C in the header' : 'check the sensor or the unit';

const RANGES: Partial<Record<UploadKind, Partial<Record<Quantity, RangeRule>>>> = {
	'drive-profile': {
		power: {
			min: -500e3,
			max: 1000e3,
			show: (w) => `${num(w / 1000, 2)} kW`,
			hint: (si, unit) => (unit === 'kw' ? 'is the column in W rather than kW? Write power_W in the header' : 'check the unit in the header (power_W or power_kW)')
		},
		speed: {
			min: 0,
			max: 300 / 3.6,
			show: (ms) => `${num(ms * 3.6, 1)} km/h`,
			hint: (si) => (si < 0 ? 'speed must not be negative' : 'is the column in m/s or km/h? Write the unit in the header (speed_kmh, speed_m_s)')
		}
	},
	'ocp-table': {
		stoichiometry: {
			min: 0,
			max: 1,
			show: (x) => num(x, 4),
			hint: (si) => (si > 1 && si <= 100 ? 'give it as a fraction (0.5, not 50 %)' : 'stoichiometry is the lithiation fraction 0 … 1')
		},
		potential: {
			min: 0,
			max: 5,
			show: (v) => `${num(v, 4)} V`,
			hint: (si, unit) => (unit === 'v' && si > 5 ? 'is the column in mV? Write potential_mV in the header' : 'an electrode potential versus Li/Li+ lies between 0 and 5 V')
		}
	},
	'measured-log': {
		voltage: {
			min: 0,
			max: 5,
			show: (v) => `${num(v, 4)} V`,
			hint: (si, unit, o) =>
				unit === 'v' && si > 5 && si < 1000
					? (o.seriesCells ?? 1) > 1
						? `is the number of cells in series (${o.seriesCells}) right?`
						: 'is the file per cell or per pack? For a module or pack log, give the number of cells in series in the form'
					: unit === 'v' && si >= 1000
						? 'is the column in mV? Write voltage_mV in the header'
						: 'a cell voltage lies between 0 and 5 V'
		},
		current: {
			min: -2000,
			max: 2000,
			show: (a) => `${num(a, 2)} A`,
			hint: (si, unit) =>
				unit === 'ma' ? 'check the unit in the header' : 'is the file per pack with cells in parallel (give their number in the form), or is the column in mA (write current_mA)?'
		},
		temp: { min: 223.15, max: 393.15, show: (k) => `${num(C(k), 1)} °C`, hint: tempHint },
		ambient: { min: 213.15, max: 353.15, show: (k) => `${num(C(k), 1)} °C`, hint: tempHint },
		coolant: { min: 223.15, max: 393.15, show: (k) => `${num(C(k), 1)} °C`, hint: tempHint }
	}
};

const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

function rangeText(rule: RangeRule): string {
	return `${rule.show(rule.min)} … ${rule.show(rule.max)}`.replace(/-?Infinity/g, '∞');
}

function unitLabel(q: Quantity, unit: string): string {
	return UNITS[q][unit]?.label ?? unit;
}

/** Bytes of a CSV upload → validated SI columns, or UploadError with every problem found (up to MAX_ISSUES). */
export function parseUpload(bytes: Uint8Array, options: UploadOptions): ParsedUpload {
	if (!isUploadKind(options.kind)) throw new UploadError('Choose what the file holds: a drive profile, an OCP table or a measured log.', 'kind');
	const kind = options.kind;
	const spec = SPECS[kind];
	const { text, notes } = decodeText(bytes);
	const { rows, lines } = readCsvRows(text);

	// Header detection: a first row with any non-numeric cell is the header.
	const first = rows[0];
	const headerFound = first.some((c) => c.trim() !== '' && !NUMBER.test(c.trim()));
	const allowed = [...spec.required.flat(), ...spec.optional];
	const sources: (ColumnSource & { index: number })[] = [];
	const ignored: string[] = [];
	if (headerFound) {
		const seen = new Map<Quantity, string>();
		first.forEach((raw, index) => {
			const m = matchHeader(raw, allowed);
			if (!m) {
				if (raw.trim()) ignored.push(raw.trim());
				return;
			}
			if (seen.has(m.quantity))
				throw new UploadError(
					`Two columns hold the ${QUANTITY_WORDS[m.quantity]} (“${seen.get(m.quantity)}” and “${raw.trim()}”); keep one of them.`
				);
			seen.set(m.quantity, raw.trim());
			sources.push({ quantity: m.quantity, header: raw.trim(), unit: m.unit, unitFrom: 'header', index });
		});
	} else {
		const order = spec.headerless(options);
		for (let index = 0; index < Math.min(order.length, first.length); index++) {
			sources.push({ quantity: order[index], header: `column ${index + 1}`, unit: '', unitFrom: 'form', index });
		}
		if (first.length > order.length) ignored.push(...first.slice(order.length).map((_, k) => `column ${order.length + k + 1}`));
	}

	// Required columns: each group needs one of its quantities.
	const have = new Set(sources.map((s) => s.quantity));
	const missing = spec.required.filter((group) => !group.some((q) => have.has(q)));
	if (missing.length) {
		const need = missing.map((g) => g.map((q) => QUANTITY_WORDS[q]).join(' or ')).join(', ');
		const found = headerFound ? `Found columns: ${first.map((c) => `“${c.trim()}”`).join(', ')}.` : `The file has no header row and ${first.length} column${first.length === 1 ? '' : 's'}.`;
		throw new UploadError(
			`The file has no ${need} column. ${found} Name the columns with their units, for example ${exampleHeader(kind)}.`,
			'file'
		);
	}
	// Units: from the header, else from the form.
	for (const s of sources) {
		if (s.unit !== '' || '' in UNITS[s.quantity]) continue;
		const chosen = options.units?.[s.quantity];
		if (chosen && chosen in UNITS[s.quantity]) {
			s.unit = chosen;
			s.unitFrom = 'form';
			continue;
		}
		const offered = (FORM_UNITS[s.quantity] ?? Object.keys(UNITS[s.quantity])).map((u) => unitLabel(s.quantity, u)).join(', ');
		throw new UploadError(
			`The ${QUANTITY_WORDS[s.quantity]} column (“${s.header}”) has no unit; write it in the header (e.g. ${s.quantity === 'temp' ? 'temp_C' : `${s.quantity}_${unitLabel(s.quantity, FORM_UNITS[s.quantity]?.[0] ?? '')}`}) or choose it in the form (${offered}).`,
			`unit_${s.quantity}`
		);
	}

	// Cells → numbers, row by row.
	const data = rows.slice(headerFound ? 1 : 0);
	const dataLines = lines.slice(headerFound ? 1 : 0);
	if (data.length < 2) throw new UploadError(`The file has ${data.length === 0 ? 'no data rows' : 'only one data row'}; a table needs at least two rows of numbers.`);
	const width = headerFound ? first.length : data.reduce((w, r) => Math.max(w, r.length), 0);
	const issues: string[] = [];
	const raw: Partial<Record<Quantity, number[]>> = {};
	for (const s of sources) raw[s.quantity] = new Array<number>(data.length);
	for (let r = 0; r < data.length && issues.length < MAX_ISSUES; r++) {
		const row = data[r];
		if (row.length !== width) {
			issues.push(
				`row ${dataLines[r]} has ${row.length} value${row.length === 1 ? '' : 's'} but the ${headerFound ? 'header has' : 'first row has'} ${width}; check for a missing value or a decimal comma (use “.” for decimals)`
			);
			continue;
		}
		for (const s of sources) {
			const cell = (row[s.index] ?? '').trim();
			const col = headerFound ? `column “${s.header}”` : s.header;
			if (cell === '') {
				issues.push(`row ${dataLines[r]}, ${col}: the ${QUANTITY_WORDS[s.quantity]} is empty; fill it in or delete the row`);
				continue;
			}
			if (!NUMBER.test(cell)) {
				issues.push(
					`row ${dataLines[r]}, ${col}: “${cell.length > 24 ? cell.slice(0, 24) + '…' : cell}” is not a number; write the ${QUANTITY_WORDS[s.quantity]} as a plain number with “.” for decimals, or delete the row`
				);
				continue;
			}
			raw[s.quantity]![r] = UNITS[s.quantity][s.unit].toSi(Number(cell));
		}
	}
	if (issues.length) throw new UploadError(issues);

	// Per-kind conversions before the range checks (sign and per-pack scaling of logs).
	if (kind === 'measured-log') {
		const series = options.seriesCells ?? 1;
		const parallel = options.parallelCells ?? 1;
		if (!Number.isInteger(series) || series < 1 || series > 1000) throw new UploadError('Cells in series must be a whole number from 1 to 1000.', 'seriesCells');
		if (!Number.isInteger(parallel) || parallel < 1 || parallel > 100) throw new UploadError('Cells in parallel must be a whole number from 1 to 100.', 'parallelCells');
		const sign = options.currentSign === 'discharge-positive' ? -1 : 1;
		if (series !== 1) raw.voltage = raw.voltage!.map((v) => v / series);
		if (sign !== 1 || parallel !== 1) raw.current = raw.current!.map((a) => (sign * a) / parallel);
		if (series !== 1 || parallel !== 1) notes.push(`per-cell values: voltage divided by ${series} cells in series, current by ${parallel} in parallel`);
		if (sign === -1) notes.push('current sign flipped so that charging is positive');
	}

	// Ranges, row by row, with the value as the file wrote it.
	const rules = RANGES[kind] ?? {};
	for (const s of sources) {
		const rule = rules[s.quantity];
		if (!rule) continue;
		const values = raw[s.quantity]!;
		for (let r = 0; r < values.length && issues.length < MAX_ISSUES; r++) {
			const v = values[r];
			if (v < rule.min || v > rule.max) {
				issues.push(
					`row ${dataLines[r]}: ${QUANTITY_WORDS[s.quantity]} ${rule.show(v)} is outside ${rangeText(rule)}; ${rule.hint(v, s.unit, options)}`
				);
			}
		}
	}
	if (issues.length) throw new UploadError(issues);

	const base = { kind, rowCount: data.length, headerFound, sources: sources.map(({ index: _i, ...s }) => s), ignoredColumns: ignored, notes };
	if (ignored.length) notes.push(`ignored column${ignored.length === 1 ? '' : 's'}: ${ignored.join(', ')}`);
	switch (kind) {
		case 'drive-profile':
			return { ...base, ...driveProfile(raw, dataLines, options, notes) };
		case 'ocp-table':
			return { ...base, ...ocpTable(raw, dataLines, options, notes) };
		case 'measured-log':
			return { ...base, ...measuredLog(raw, dataLines, notes) };
	}
}

function exampleHeader(kind: UploadKind): string {
	switch (kind) {
		case 'drive-profile':
			return '“time_s,power_kW” or “time_s,speed_kmh”';
		case 'ocp-table':
			return '“stoichiometry,potential_V”';
		case 'measured-log':
			return '“time_s,current_A,voltage_V,temp_C”';
	}
}

/** Times strictly increasing; shifted to start at 0 (the offset goes to meta). */
function checkTime(time_s: number[], lines: number[], notes: string[]): { time_s: number[]; offset_s: number } {
	const issues: string[] = [];
	for (let r = 1; r < time_s.length && issues.length < MAX_ISSUES; r++) {
		if (!(time_s[r] > time_s[r - 1])) {
			issues.push(
				`row ${lines[r]}: time ${num(time_s[r], 3)} s is ${time_s[r] === time_s[r - 1] ? 'the same as' : 'before'} the previous row's ${num(time_s[r - 1], 3)} s; times must increase row by row (sort the file by time and remove repeated rows)`
			);
		}
	}
	if (issues.length) throw new UploadError(issues);
	const offset = time_s[0];
	if (offset !== 0) {
		notes.push(`times shifted by ${num(-offset, 3)} s so that the table starts at 0 s`);
		return { time_s: time_s.map((t) => t - offset), offset_s: offset };
	}
	return { time_s, offset_s: 0 };
}

/** Road-load parameter → words in messages, and the upload form field that holds it. */
const VEHICLE_WORDS: Record<string, string> = {
	mass_kg: 'vehicle mass (kg)',
	dragArea_m2: 'drag area c_d·A (m²)',
	rollingResistance: 'rolling-resistance coefficient',
	drivetrainEfficiency: 'drivetrain efficiency (%)',
	regenFraction: 'share of braking recuperated (%)',
	auxiliaryPower_W: 'auxiliary power (kW)'
};
const VEHICLE_FIELDS: Record<string, string> = {
	mass_kg: 'vehicle_mass_kg',
	dragArea_m2: 'vehicle_dragArea_m2',
	rollingResistance: 'vehicle_rollingResistance',
	drivetrainEfficiency: 'vehicle_drivetrainEfficiency_pct',
	regenFraction: 'vehicle_regenFraction_pct',
	auxiliaryPower_W: 'vehicle_auxiliaryPower_kW'
};

function driveProfile(raw: Partial<Record<Quantity, number[]>>, lines: number[], options: UploadOptions, notes: string[]) {
	const { time_s, offset_s } = checkTime(raw.time!, lines, notes);
	const end = time_s[time_s.length - 1];
	if (end > 86_400) throw new UploadError(`The profile lasts ${num(end / 3600, 2)} h; a drive is at most 24 h. Upload one drive per file.`);
	const columns: Record<string, number[]> = { time_s };
	let vehicle: VehicleRoadLoad | null = null;
	if (raw.power) {
		columns.power_W = raw.power;
		if (raw.speed) columns.speed_m_s = raw.speed;
	} else {
		const parsed = vehicleRoadLoadSchema.safeParse(options.vehicle ?? {});
		if (!parsed.success) {
			const issue = parsed.error.issues[0];
			const key = String(issue.path[0] ?? '');
			const words = VEHICLE_WORDS[key] ?? key;
			throw new UploadError(
				`The file gives speed, so the road-load model needs the vehicle: ${issue.message === 'Required' ? `give the ${words}` : issue.message}.`,
				VEHICLE_FIELDS[key] ?? 'file'
			);
		}
		vehicle = parsed.data;
		columns.speed_m_s = raw.speed!;
		columns.power_W = roadLoadPower_W(time_s, raw.speed!, vehicle);
		notes.push('battery power computed from the speed trace with the road-load model (flat road)');
		const rule = RANGES['drive-profile']!.power!;
		const bad = columns.power_W.findIndex((p) => p < rule.min || p > rule.max);
		if (bad >= 0)
			throw new UploadError(
				`row ${lines[bad]}: the road-load model gives ${rule.show(columns.power_W[bad])}, outside ${rangeText(rule)}; check the speed unit and the vehicle parameters (a jump in speed means a huge acceleration)`
			);
	}
	const p = columns.power_W;
	let energy_J = 0;
	for (let i = 1; i < time_s.length; i++) energy_J += ((p[i] + p[i - 1]) / 2) * (time_s[i] - time_s[i - 1]);
	return {
		columns: orderColumns('drive-profile', columns),
		meta: {
			source: raw.power ? 'power' : 'speed',
			vehicle,
			timeOffset_s: offset_s,
			duration_s: end,
			energy_Wh: energy_J / 3600,
			averagePower_W: end > 0 ? energy_J / end : 0,
			peakPower_W: largest(p)
		}
	};
}

function ocpTable(raw: Partial<Record<Quantity, number[]>>, lines: number[], options: UploadOptions, notes: string[]) {
	let sto = raw.stoichiometry!;
	let pot = raw.potential!;
	let order = lines;
	// Monotonic stoichiometry, either way; stored increasing.
	const rising = sto[1] > sto[0];
	for (let r = 1; r < sto.length; r++) {
		const ok = rising ? sto[r] > sto[r - 1] : sto[r] < sto[r - 1];
		if (!ok)
			throw new UploadError(
				`row ${lines[r]}: stoichiometry ${num(sto[r], 4)} ${sto[r] === sto[r - 1] ? 'repeats the previous row' : `breaks the ${rising ? 'rising' : 'falling'} order after ${num(sto[r - 1], 4)}`}; an OCP table needs stoichiometries that only rise (or only fall) — sort the table and remove repeated rows`
			);
	}
	if (!rising) {
		sto = [...sto].reverse();
		pot = [...pot].reverse();
		order = [...lines].reverse();
		notes.push('rows reversed so that stoichiometry increases');
	}
	for (let r = 1; r < pot.length; r++) {
		if (pot[r] > pot[r - 1])
			throw new UploadError(
				`row ${order[r]}: the potential rises from ${num(pot[r - 1], 4)} V to ${num(pot[r], 4)} V as stoichiometry goes from ${num(sto[r - 1], 4)} to ${num(sto[r], 4)}; an open-circuit potential falls as the electrode fills with lithium — check that the columns are not swapped and that stoichiometry is the lithiation fraction`
			);
	}
	const sorted = [...pot].sort((a, b) => a - b);
	const median = sorted[Math.floor(sorted.length / 2)];
	if (options.electrode === 'negative' && median > 2.5)
		throw new UploadError(
			`These potentials (median ${num(median, 3)} V vs Li/Li+) look like a positive electrode; choose “positive electrode” in the form or check the file.`,
			'electrode'
		);
	if (options.electrode === 'positive' && median < 2)
		throw new UploadError(
			`These potentials (median ${num(median, 3)} V vs Li/Li+) look like a negative electrode; choose “negative electrode” in the form or check the file.`,
			'electrode'
		);
	return {
		columns: { stoichiometry: sto, potential_V: pot },
		meta: { electrode: options.electrode ?? null, stoichiometryRange: [sto[0], sto[sto.length - 1]], potentialRange_V: [pot[pot.length - 1], pot[0]] }
	};
}

function measuredLog(raw: Partial<Record<Quantity, number[]>>, lines: number[], notes: string[]) {
	const { time_s, offset_s } = checkTime(raw.time!, lines, notes);
	const columns: Record<string, number[]> = { time_s, current_A: raw.current!, voltage_V: raw.voltage! };
	if (raw.temp) columns.temp_K = raw.temp;
	if (raw.ambient) columns.ambient_K = raw.ambient;
	if (raw.coolant) columns.coolant_K = raw.coolant;
	let charge_C = 0;
	let energy_J = 0;
	const I = columns.current_A;
	const V = columns.voltage_V;
	for (let i = 1; i < time_s.length; i++) {
		const dt = time_s[i] - time_s[i - 1];
		charge_C += ((I[i] + I[i - 1]) / 2) * dt;
		energy_J += ((I[i] * V[i] + I[i - 1] * V[i - 1]) / 2) * dt;
	}
	return {
		columns: orderColumns('measured-log', columns),
		meta: {
			timeOffset_s: offset_s,
			duration_s: time_s[time_s.length - 1],
			netCharge_Ah: charge_C / 3600,
			netEnergy_Wh: energy_J / 3600,
			maxCurrent_A: largest(I),
			minCurrent_A: -largest(I.map((a) => -a)),
			hasTemp: Boolean(raw.temp),
			hasAmbient: Boolean(raw.ambient),
			hasCoolant: Boolean(raw.coolant)
		}
	};
}

/** Largest value by a loop: Math.max(...values) overflows the call stack for 200 000 rows. */
function largest(values: readonly number[]): number {
	let m = -Infinity;
	for (const v of values) if (v > m) m = v;
	return m;
}

function orderColumns(kind: UploadKind, columns: Record<string, number[]>): Record<string, number[]> {
	const out: Record<string, number[]> = {};
	for (const name of CANONICAL_COLUMNS[kind]) if (columns[name]) out[name] = columns[name];
	return out;
}
