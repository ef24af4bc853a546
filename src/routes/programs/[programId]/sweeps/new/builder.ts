/**
 * The sweep builder form speaks engineers' units (°C, %, minutes, kW, kWh) as comma-separated
 * lists; the sweep API takes SI. Shared by the page (live grid size) and the action.
 */
import { SweepInputError } from '$lib/server/sweeps/request';

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

type ListField = keyof typeof BUILDER_FIELDS;

/** "−20, -10; 0" → [-20, -10, 0]; accepts the Unicode minus and semicolons. */
export function parseList(raw: string, field: ListField, optional = false): number[] | undefined {
	const text = raw.replace(/\u2212/g, '-').trim();
	const { label, unit, example } = BUILDER_FIELDS[field];
	if (!text) {
		if (optional) return undefined;
		throw new SweepInputError(`${label}: enter at least one value in ${unit}, e.g. “${example}”.`, field);
	}
	const parts = text.split(/[,;\s]+/).filter(Boolean);
	if (parts.length > 200) throw new SweepInputError(`${label}: at most 200 values.`, field);
	return parts.map((p) => {
		const v = Number(p);
		if (!Number.isFinite(v)) throw new SweepInputError(`${label}: “${p.slice(0, 20)}” is not a number; enter values in ${unit} separated by commas.`, field);
		return v;
	});
}

/** "slug" + "3" → "slug@3" (the sweep then uses exactly version 3); blank version → newest. */
function withVersion(slug: string, version: string | undefined, field: string): string {
	const v = (version ?? '').trim();
	if (!v) return slug;
	if (!/^[1-9][0-9]{0,5}$/.test(v)) throw new SweepInputError(`Version “${v.slice(0, 20)}” of “${slug.slice(0, 60)}” is not a version number; pick one from the list.`, field);
	return `${slug}@${v}`;
}

/** The versions chosen in the form: fields named `<prefix><slug>` (e.g. "cellVersion:demo-nmc-pouch"). */
export function versionsFromForm(form: FormData, prefix: string): Record<string, string> {
	const out: Record<string, string> = {};
	for (const [k, v] of form.entries()) if (k.startsWith(prefix) && typeof v === 'string') out[k.slice(prefix.length)] = v;
	return out;
}

export function builderToRequest(v: BuilderValues) {
	const K = 273.15;
	if (!v.scenarioId) throw new SweepInputError('Choose the base scenario (drive, dwell, charger and target).', 'scenarioId');
	if (!v.cells.length) throw new SweepInputError('Tick at least one cell parameter set.', 'cells');
	if (!v.packs.length) throw new SweepInputError('Tick at least one pack design.', 'packs');
	const budgetText = v.budget.trim();
	const budget_kWh = budgetText ? Number(budgetText.replace(',', '.')) : undefined;
	if (budget_kWh !== undefined && !Number.isFinite(budget_kWh))
		throw new SweepInputError(`Energy budget “${budgetText.slice(0, 20)}” is not a number of kWh.`, 'budget');
	const caps = parseList(v.heaterCaps, 'heaterCaps', true);
	return {
		...(v.name.trim() ? { name: v.name.trim() } : {}),
		scenarioId: withVersion(v.scenarioId, v.scenarioVersion, 'scenarioId'),
		definition: {
			cellIds: v.cells.map((slug) => withVersion(slug, v.cellVersions?.[slug], 'cells')),
			packIds: v.packs.map((slug) => withVersion(slug, v.packVersions?.[slug], 'packs')),
			ambients_K: parseList(v.ambients, 'ambients')!.map((c) => c + K),
			statesOfHealth: parseList(v.soh, 'soh')!.map((p) => p / 100),
			arrivalSocs: parseList(v.socs, 'socs')!.map((p) => p / 100),
			leadTimes_s: parseList(v.leadTimes, 'leadTimes')!.map((m) => m * 60),
			setpoints_K: parseList(v.setpoints, 'setpoints')!.map((c) => c + K),
			...(caps ? { heaterPowerCaps_W: caps.map((kw) => kw * 1000) } : {})
		},
		...(budget_kWh !== undefined ? { fastestWithinEnergy_Wh: budget_kWh * 1000 } : {})
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
