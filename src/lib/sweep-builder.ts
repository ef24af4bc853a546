/**
 * The sweep builder's form, checked the same way in the browser (as the user types) and on the
 * server (when it is posted): engineers' units (°C, %, minutes, kW, kWh) as comma-separated lists
 * in, every problem out — each with the form field it belongs to — or the sweep request in SI
 * units for the sweep API. The grid's own rules (ranges, repeats, the grid-size limit) come from
 * the engine's sweepDefinitionSchema, whose messages already speak the form's units. Cross-checks
 * against stored inputs (a set-point above a cell's limit…) need the server and show after posting.
 */
import { sweepDefinitionSchema, LIMITS, MAX_GRID_POINTS } from './engine/sweep-grid';

export { MAX_GRID_POINTS };

export interface BuilderValues {
	name: string;
	scenarioId: string;
	/** Version of the base scenario (blank = newest). */
	scenarioVersion?: string;
	cells: string[];
	packs: string[];
	/** Chosen version per ticked cell / pack slug (missing or blank = newest). */
	cellVersions?: Record<string, string>;
	packVersions?: Record<string, string>;
	ambients: string;
	soh: string;
	socs: string;
	leadTimes: string;
	setpoints: string;
	heaterCaps: string;
	budget: string;
}

export const BUILDER_FIELDS = {
	ambients: { label: 'Ambient temperatures', unit: '°C', example: '-20, -10, 0, 10' },
	soh: { label: 'States of health', unit: '%', example: '100, 80' },
	socs: { label: 'Arrival states of charge', unit: '%', example: '15, 30' },
	leadTimes: { label: 'Heater lead times before arrival', unit: 'min', example: '0, 5, 10, 15, 20, 30' },
	setpoints: { label: 'Coolant set-points', unit: '°C', example: '15, 20, 25, 30, 35' },
	heaterCaps: { label: 'Heater power caps (optional)', unit: 'kW', example: '4, 7' }
} as const;

export type ListField = keyof typeof BUILDER_FIELDS;

/** One problem with the form, for the field that shows it ('grid' for the whole sweep). */
export interface BuilderProblem {
	field: string;
	message: string;
}

export interface SweepRequestBody {
	name?: string;
	scenarioId: string;
	definition: {
		cellIds: string[];
		packIds: string[];
		ambients_K: number[];
		statesOfHealth: number[];
		arrivalSocs: number[];
		leadTimes_s: number[];
		setpoints_K: number[];
		heaterPowerCaps_W?: number[];
	};
	fastestWithinEnergy_Wh?: number;
}

const MAX_VALUES = 200;
const K = 273.15;

/** "−20, -10; 0" → [-20, -10, 0] (Unicode minus and semicolons accepted), with every bad entry named. */
export function parseList(raw: string, field: ListField, optional = false): { values?: number[]; problems: BuilderProblem[] } {
	const text = raw.replace(/\u2212/g, '-').trim();
	const { label, unit, example } = BUILDER_FIELDS[field];
	if (!text) return optional ? { problems: [] } : { problems: [{ field, message: `${label}: enter at least one value in ${unit}, e.g. “${example}”.` }] };
	const parts = text.split(/[,;\s]+/).filter(Boolean);
	if (parts.length > MAX_VALUES) return { problems: [{ field, message: `${label}: at most ${MAX_VALUES} values (${parts.length} given).` }] };
	const bad = parts.filter((p) => !Number.isFinite(Number(p)));
	if (bad.length)
		return {
			problems: [
				{
					field,
					message: `${label}: ${bad.slice(0, 5).map((p) => `“${p.slice(0, 20)}”`).join(', ')}${bad.length > 5 ? ` and ${bad.length - 5} more` : ''} ${bad.length === 1 ? 'is not a number' : 'are not numbers'}; enter values in ${unit} separated by commas.`
				}
			]
		};
	return { values: parts.map(Number), problems: [] };
}

/** "slug" + "3" → "slug@3" (exactly version 3); blank version → newest. */
function withVersion(slug: string, version: string | undefined, field: string, problems: BuilderProblem[]): string {
	const v = (version ?? '').trim();
	if (!v) return slug;
	if (!/^[1-9][0-9]{0,5}$/.test(v)) {
		problems.push({ field, message: `Version “${v.slice(0, 20)}” of “${slug.slice(0, 60)}” is not a version number; pick one from the list.` });
		return slug;
	}
	return `${slug}@${v}`;
}

/** Which form field an engine path of the sweep definition belongs to. */
const DEFINITION_FIELD: Record<string, string> = {
	cellIds: 'cells',
	packIds: 'packs',
	ambients_K: 'ambients',
	statesOfHealth: 'soh',
	arrivalSocs: 'socs',
	leadTimes_s: 'leadTimes',
	setpoints_K: 'setpoints',
	heaterPowerCaps_W: 'heaterCaps'
};

/** Every problem with the form, and the sweep request when there is none. */
export function checkBuilder(v: BuilderValues): { body: SweepRequestBody | null; problems: BuilderProblem[] } {
	const problems: BuilderProblem[] = [];
	if (v.name.trim().length > 120) problems.push({ field: 'name', message: `Keep the name to 120 characters (it has ${v.name.trim().length}).` });
	if (!v.scenarioId) problems.push({ field: 'scenarioId', message: 'Choose the base scenario (drive, dwell, charger and target).' });
	if (!v.cells.length) problems.push({ field: 'cells', message: 'Tick at least one cell parameter set.' });
	if (!v.packs.length) problems.push({ field: 'packs', message: 'Tick at least one pack design.' });
	const lists = {
		ambients: parseList(v.ambients, 'ambients'),
		soh: parseList(v.soh, 'soh'),
		socs: parseList(v.socs, 'socs'),
		leadTimes: parseList(v.leadTimes, 'leadTimes'),
		setpoints: parseList(v.setpoints, 'setpoints'),
		heaterCaps: parseList(v.heaterCaps, 'heaterCaps', true)
	};
	for (const l of Object.values(lists)) problems.push(...l.problems);
	const budgetText = v.budget.trim().replace(',', '.');
	let budget_kWh: number | undefined;
	if (budgetText) {
		budget_kWh = Number(budgetText);
		if (!Number.isFinite(budget_kWh)) problems.push({ field: 'budget', message: `Energy budget “${budgetText.slice(0, 20)}” is not a number of kWh.` });
		else if (budget_kWh < 0) problems.push({ field: 'budget', message: `The energy budget must be zero or more kWh (got ${budgetText.slice(0, 20)} kWh).` });
	}
	const scenarioId = withVersion(v.scenarioId, v.scenarioVersion, 'scenarioId', problems);
	const cellIds = v.cells.map((slug) => withVersion(slug, v.cellVersions?.[slug], 'cells', problems));
	const packIds = v.packs.map((slug) => withVersion(slug, v.packVersions?.[slug], 'packs', problems));

	// The engine's rules for every list that parsed; a list that did not stands in with one value
	// from its range, and neither it nor the grid size is judged until it parses.
	const failed = new Set(Object.entries(lists).filter(([k, l]) => l.values === undefined && k !== 'heaterCaps').map(([k]) => k));
	if (!cellIds.length) failed.add('cells');
	if (!packIds.length) failed.add('packs');
	const axis = (k: ListField, convert: (v: number) => number, stand: number) => (lists[k].values ? lists[k].values!.map(convert) : [stand]);
	const definition: SweepRequestBody['definition'] = {
		cellIds: cellIds.length ? cellIds : ['-'],
		packIds: packIds.length ? packIds : ['-'],
		ambients_K: axis('ambients', (c) => c + K, LIMITS.ambient_K.min),
		statesOfHealth: axis('soh', (p) => p / 100, LIMITS.stateOfHealth.max),
		arrivalSocs: axis('socs', (p) => p / 100, LIMITS.arrivalSoc.min),
		leadTimes_s: axis('leadTimes', (m) => m * 60, LIMITS.leadTime_s.min),
		setpoints_K: axis('setpoints', (c) => c + K, LIMITS.setpoint_K.min),
		...(lists.heaterCaps.values ? { heaterPowerCaps_W: lists.heaterCaps.values.map((kw) => kw * 1000) } : {})
	};
	const checked = sweepDefinitionSchema.safeParse(definition);
	if (!checked.success) {
		for (const issue of checked.error.issues) {
			const key = issue.path[0];
			const field = typeof key === 'string' ? (DEFINITION_FIELD[key] ?? 'grid') : 'grid';
			if (failed.has(field) || (field === 'grid' && failed.size > 0)) continue;
			problems.push({ field, message: issue.message });
		}
	}
	if (problems.length) return { body: null, problems };
	return {
		body: {
			...(v.name.trim() ? { name: v.name.trim() } : {}),
			scenarioId,
			definition,
			...(budget_kWh !== undefined ? { fastestWithinEnergy_Wh: budget_kWh * 1000 } : {})
		},
		problems
	};
}

/** Maps an API field path ("definition.ambients_K[2]") to the form field that shows the message. */
export function fieldForPath(path: string | undefined): string | null {
	if (!path) return null;
	const map: [RegExp, string][] = [
		[/^definition\.cellIds/, 'cells'],
		[/^definition\.packIds/, 'packs'],
		[/^definition\.ambients_K/, 'ambients'],
		[/^definition\.statesOfHealth/, 'soh'],
		[/^definition\.arrivalSocs/, 'socs'],
		[/^definition\.leadTimes_s/, 'leadTimes'],
		[/^definition\.setpoints_K/, 'setpoints'],
		[/^definition\.heaterPowerCaps_W/, 'heaterCaps'],
		[/^fastestWithinEnergy_Wh/, 'budget'],
		[/^scenarioId/, 'scenarioId'],
		[/^name/, 'name']
	];
	for (const [re, f] of map) if (re.test(path)) return f;
	return path in BUILDER_FIELDS || ['cells', 'packs', 'scenarioId', 'budget', 'name'].includes(path) ? path : null;
}
