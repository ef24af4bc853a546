/**
 * The scenario form speaks the units engineers think in (°C, %, minutes, kW, A); the engine gets
 * SI. Conversion happens here and only here for scenarios.
 */
import { InputError } from './inputs';

export const SCENARIO_FIELDS = [
	{ name: 'ambient_C', label: 'Ambient temperature', unit: '°C', min: -40, max: 55, step: 1 },
	{ name: 'initialPackTemp_C', label: 'Pack temperature at departure (blank = ambient)', unit: '°C', min: -40, max: 60, step: 1, optional: true },
	{ name: 'stateOfHealth_pct', label: 'State of health', unit: '%', min: 60, max: 100, step: 1 },
	{ name: 'arrivalSoc_pct', label: 'Arrival state of charge', unit: '%', min: 2, max: 95, step: 1 },
	{ name: 'driveDuration_min', label: 'Drive duration', unit: 'min', min: 0, max: 1440, step: 1 },
	{ name: 'drivePower_kW', label: 'Average drive power', unit: 'kW', min: 0, max: 500, step: 0.5 },
	{ name: 'dwell_min', label: 'Dwell between arrival and plug-in', unit: 'min', min: 0, max: 1440, step: 1 },
	{ name: 'chargerPower_kW', label: 'Charger maximum power', unit: 'kW', min: 1, max: 2000, step: 1 },
	{ name: 'chargerCurrent_A', label: 'Charger maximum current', unit: 'A', min: 1, max: 5000, step: 1 },
	{ name: 'targetSoc_pct', label: 'Target state of charge', unit: '%', min: 5, max: 100, step: 1 },
	{ name: 'timeCap_min', label: 'Charge time cap', unit: 'min', min: 1, max: 1440, step: 1 }
] as const;

export type ScenarioFormValues = Record<(typeof SCENARIO_FIELDS)[number]['name'], string>;

const K = 273.15;

export function scenarioToForm(s: Record<string, any>): ScenarioFormValues {
	const drive = s.drive ?? {};
	const profile = drive.profile ?? {};
	const power_W = profile.kind === 'constant' ? profile.power_W : profile.averagePower_W ?? '';
	const r = (v: number, d = 2) => String(Math.round(v * 10 ** d) / 10 ** d);
	return {
		ambient_C: r(s.ambient_K - K),
		initialPackTemp_C: s.initialPackTemp_K != null ? r(s.initialPackTemp_K - K) : '',
		stateOfHealth_pct: r(s.stateOfHealth * 100),
		arrivalSoc_pct: r(s.arrivalSoc * 100),
		driveDuration_min: r((drive.duration_s ?? 0) / 60),
		drivePower_kW: power_W === '' ? '' : r(power_W / 1000),
		dwell_min: r(s.dwell_s / 60),
		chargerPower_kW: r(s.charger.maxPower_W / 1000),
		chargerCurrent_A: r(s.charger.maxCurrent_A),
		targetSoc_pct: s.target?.soc != null ? r(s.target.soc * 100) : '',
		timeCap_min: r((s.timeCap_s ?? 10800) / 60)
	};
}

/** Reads the form; `base` supplies everything the form does not show (drive profile kind, target energy…). */
export function scenarioFromForm(form: FormData, base: Record<string, any> = {}): { values: ScenarioFormValues; scenario: Record<string, any> } {
	const values = {} as ScenarioFormValues;
	const nums = {} as Record<string, number | null>;
	for (const f of SCENARIO_FIELDS) {
		const raw = String(form.get(f.name) ?? '').trim().replace(',', '.');
		values[f.name] = raw;
		if (raw === '') {
			if ('optional' in f && f.optional) {
				nums[f.name] = null;
				continue;
			}
			if (f.name === 'targetSoc_pct' && base.target?.energy_Wh) {
				nums[f.name] = null;
				continue;
			}
			throw new InputError(`${f.label} is missing; enter a value in ${f.unit}.`, f.name);
		}
		const v = Number(raw);
		if (!Number.isFinite(v)) throw new InputError(`${f.label} “${raw.slice(0, 30)}” is not a number; enter a value in ${f.unit}.`, f.name);
		if (v < f.min || v > f.max)
			throw new InputError(`${f.label} ${v} ${f.unit} is outside ${f.min}…${f.max} ${f.unit}.`, f.name);
		nums[f.name] = v;
	}
	const baseProfile = base.drive?.profile;
	const power_W = (nums.drivePower_kW ?? 0) * 1000;
	const profile =
		baseProfile?.kind === 'table'
			? baseProfile // an uploaded time–power table is kept; the form's average power does not apply
			: baseProfile?.kind === 'builtin'
			? { ...baseProfile, averagePower_W: power_W }
			: { kind: 'constant', power_W };
	const scenario: Record<string, any> = {
		...base,
		ambient_K: nums.ambient_C! + K,
		stateOfHealth: nums.stateOfHealth_pct! / 100,
		arrivalSoc: nums.arrivalSoc_pct! / 100,
		drive: { ...(base.drive ?? {}), duration_s: nums.driveDuration_min! * 60, profile },
		dwell_s: nums.dwell_min! * 60,
		charger: { maxCurrent_A: nums.chargerCurrent_A!, maxPower_W: nums.chargerPower_kW! * 1000 },
		target: { ...(base.target ?? {}), ...(nums.targetSoc_pct != null ? { soc: nums.targetSoc_pct / 100 } : {}) },
		timeCap_s: nums.timeCap_min! * 60
	};
	if (nums.initialPackTemp_C != null) scenario.initialPackTemp_K = nums.initialPackTemp_C + K;
	else delete scenario.initialPackTemp_K;
	return { values, scenario };
}
