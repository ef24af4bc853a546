/**
 * The upload form's text fields → UploadOptions. Engineers type the units they think in (kg, m²,
 * %, kW); the parser gets SI. Pure, so the form's refusals are tested with the parser's.
 */
import { UploadError } from './csv-reader';
import { FORM_UNITS, UNITS, type Quantity } from './columns';
import { isUploadKind, type UploadOptions } from './parse-upload';
import { DEMO_VAN_ROAD_LOAD } from '../engine/road-load';

type Get = (name: string) => string | null;

/** Form defaults for the road-load fields (the invented demo van), in form units. */
export const VEHICLE_FORM_DEFAULTS: Record<string, string> = {
	vehicle_mass_kg: String(DEMO_VAN_ROAD_LOAD.mass_kg),
	vehicle_dragArea_m2: String(DEMO_VAN_ROAD_LOAD.dragArea_m2),
	vehicle_rollingResistance: String(DEMO_VAN_ROAD_LOAD.rollingResistance),
	vehicle_drivetrainEfficiency_pct: String(DEMO_VAN_ROAD_LOAD.drivetrainEfficiency * 100),
	vehicle_regenFraction_pct: String(DEMO_VAN_ROAD_LOAD.regenFraction * 100),
	vehicle_auxiliaryPower_kW: String(DEMO_VAN_ROAD_LOAD.auxiliaryPower_W / 1000)
};

function number(get: Get, name: string, label: string): number | undefined {
	const raw = (get(name) ?? '').trim();
	if (raw === '') return undefined;
	const v = Number(raw.replace(/\s/g, ''));
	if (!Number.isFinite(v)) throw new UploadError(`${label} “${raw.slice(0, 20)}” is not a number; write it with “.” for decimals.`, name);
	return v;
}

function whole(get: Get, name: string, label: string): number | undefined {
	const v = number(get, name, label);
	if (v !== undefined && !Number.isInteger(v)) throw new UploadError(`${label} must be a whole number.`, name);
	return v;
}

export function uploadOptionsFromForm(get: Get): UploadOptions {
	const kind = get('kind');
	if (!isUploadKind(kind)) throw new UploadError('Choose what the file holds: a drive profile, an OCP table or a measured log.', 'kind');
	const units: Partial<Record<Quantity, string>> = {};
	for (const q of Object.keys(FORM_UNITS) as Quantity[]) {
		const u = (get(`unit_${q}`) ?? '').trim().toLowerCase();
		if (!u) continue;
		if (!(u in UNITS[q])) throw new UploadError(`Unknown unit “${u.slice(0, 12)}” for ${q}; choose one from the list.`, `unit_${q}`);
		units[q] = u;
	}
	const options: UploadOptions = { kind, units };
	if (kind === 'drive-profile') {
		const pct = (name: string, label: string) => {
			const v = number(get, name, label);
			return v === undefined ? undefined : v / 100;
		};
		const aux = number(get, 'vehicle_auxiliaryPower_kW', 'Auxiliary power');
		options.vehicle = {
			mass_kg: number(get, 'vehicle_mass_kg', 'Vehicle mass') as number,
			dragArea_m2: number(get, 'vehicle_dragArea_m2', 'Drag area') as number,
			rollingResistance: number(get, 'vehicle_rollingResistance', 'Rolling-resistance coefficient') as number,
			drivetrainEfficiency: pct('vehicle_drivetrainEfficiency_pct', 'Drivetrain efficiency') as number,
			regenFraction: pct('vehicle_regenFraction_pct', 'Regeneration share') as number,
			...(aux === undefined ? {} : { auxiliaryPower_W: aux * 1000 })
		};
	}
	if (kind === 'ocp-table') {
		const e = get('electrode');
		if (e !== 'negative' && e !== 'positive') throw new UploadError('Choose which electrode the OCP table describes (negative or positive).', 'electrode');
		options.electrode = e;
	}
	if (kind === 'measured-log') {
		const sign = get('currentSign') ?? 'charge-positive';
		if (sign !== 'charge-positive' && sign !== 'discharge-positive') throw new UploadError('Choose the sign of the logged current.', 'currentSign');
		options.currentSign = sign;
		options.seriesCells = whole(get, 'seriesCells', 'Cells in series') ?? 1;
		options.parallelCells = whole(get, 'parallelCells', 'Cells in parallel') ?? 1;
	}
	return options;
}

/** The file name without folders or control characters, at most 200 characters. */
export function cleanFileName(raw: string): string {
	const base = raw.split(/[\\/]/).pop() ?? '';
	const clean = base.replace(/[\u0000-\u001f\u007f]/g, '').trim().slice(0, 200);
	return clean || 'upload.csv';
}
