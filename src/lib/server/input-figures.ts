/** Key figures shown on an input's page, derived by the engine and put in engineers' units. */
import { cellDerived, cellParamsSchema, packDesignSchema, scenarioSchema, type CellParams } from '../engine/index';
import type { ParameterKind } from './db/models/index';

type Item = { label: string; value: string };
type Curve = { label: string; x: number[]; y: number[] };
export interface InputFigures {
	items: Item[];
	notes: string[];
	curves: { cell: Curve[]; electrodes: Curve[] } | null;
}

const C = (k: number) => `${(k - 273.15).toFixed(1)} °C`;
const pct = (f: number) => `${(f * 100).toFixed(0)} %`;
const min = (s: number) => `${(s / 60).toFixed(0)} min`;
const kW = (w: number) => `${(w / 1000).toFixed(1)} kW`;

function describeCell(cell: CellParams): InputFigures {
	const fresh = cellDerived(cell, 1);
	const aged = cellDerived(cell, 0.8);
	return {
		items: [
			{ label: 'Chemistry · format', value: `${cell.chemistry} · ${cell.format}` },
			{ label: 'Capacity (new)', value: `${fresh.capacity_Ah.toFixed(1)} Ah` },
			{ label: 'Energy (new)', value: `${fresh.nominalEnergy_Wh.toFixed(0)} Wh` },
			{ label: 'Nominal voltage', value: `${fresh.nominalVoltage_V.toFixed(3)} V` },
			{ label: 'Voltage window', value: `${cell.limits.minVoltage_V.toFixed(2)}–${cell.limits.maxVoltage_V.toFixed(2)} V` },
			{ label: 'Maximum temperature', value: C(cell.limits.maxTemp_K) },
			{ label: 'Plating margin', value: `${(cell.limits.anodePotentialMargin_V * 1000).toFixed(0)} mV` },
			{ label: 'Anode stoichiometry 0→100 %', value: `${fresh.usableSocWindow.negativeAt0Soc.toFixed(3)} → ${fresh.usableSocWindow.negativeAt100Soc.toFixed(3)}` },
			{ label: 'Capacity at 80 % state of health', value: `${aged.capacity_Ah.toFixed(1)} Ah` },
			{ label: 'Mass · heat capacity', value: `${cell.thermal.mass_kg.toFixed(2)} kg · ${(cell.thermal.mass_kg * cell.thermal.specificHeat_J_per_kgK).toFixed(0)} J/K` }
		],
		notes: [`Anode OCP: ${fresh.anodeOcp.source}.`, `Cathode OCP: ${fresh.cathodeOcp.source}.`],
		curves: {
			cell: [
				{ label: 'New', x: fresh.ocvCurve.soc.map((s) => s * 100), y: fresh.ocvCurve.ocv_V },
				{ label: '80 % state of health', x: aged.ocvCurve.soc.map((s) => s * 100), y: aged.ocvCurve.ocv_V }
			],
			electrodes: [
				{ label: 'Anode', x: fresh.anodeOcp.stoichiometry, y: fresh.anodeOcp.potential_V },
				{ label: 'Cathode', x: fresh.cathodeOcp.stoichiometry, y: fresh.cathodeOcp.potential_V }
			]
		}
	};
}

export function describeInput(kind: ParameterKind, raw: unknown): InputFigures {
	if (kind === 'cell') {
		const parsed = cellParamsSchema.safeParse(raw);
		if (parsed.success) return describeCell(parsed.data);
	}
	if (kind === 'pack') {
		const parsed = packDesignSchema.safeParse(raw);
		if (parsed.success) {
			const p = parsed.data;
			const coolant_kg = p.thermal.coolantVolume_m3 * p.thermal.coolantDensity_kg_per_m3;
			return {
				items: [
					{ label: 'Layout', value: `${p.seriesCount}s${p.parallelCount}p = ${p.seriesCount * p.parallelCount} cells` },
					{ label: 'Heater', value: `${p.heater.kind === 'ptc' ? 'PTC' : 'heat pump'} · ${kW(p.heater.maxElectricalPower_W)} electrical` },
					{ label: 'Chiller', value: `${kW(p.chiller.maxHeatRemoval_W)} heat removal · COP ${p.chiller.nominalCop}` },
					{ label: 'Coolant', value: `${(p.thermal.coolantVolume_m3 * 1000).toFixed(1)} L · ${(coolant_kg * p.thermal.coolantSpecificHeat_J_per_kgK / 1000).toFixed(1)} kJ/K` },
					{ label: 'Plate conductance', value: `${(p.thermal.plateConductancePerCell_W_per_K * p.seriesCount * p.parallelCount).toFixed(0)} W/K (pack)` },
					{ label: 'Enclosure to ambient', value: `${p.thermal.enclosureToAmbient_W_per_K} W/K` },
					{ label: 'Default policy: chill above', value: C(p.defaultPolicy.chillAbove_K) },
					{ label: 'Default policy: heat during charge to', value: p.defaultPolicy.chargeHeatTarget_K == null ? 'no heating' : C(p.defaultPolicy.chargeHeatTarget_K) }
				],
				notes: ['The default policy is the baseline every strategy is compared with: no pre-conditioning before plug-in.'],
				curves: null
			};
		}
	}
	if (kind === 'scenario') {
		const parsed = scenarioSchema.safeParse(raw);
		if (parsed.success) {
			const s = parsed.data;
			const profile = s.drive.profile;
			const power = profile.kind === 'constant' ? kW(profile.power_W) : profile.kind === 'builtin' ? `${profile.name}, ${kW(profile.averagePower_W)} average` : `table of ${profile.time_s.length} points`;
			return {
				items: [
					{ label: 'Ambient', value: C(s.ambient_K) },
					{ label: 'State of health', value: pct(s.stateOfHealth) },
					{ label: 'Arrival state of charge', value: pct(s.arrivalSoc) },
					{ label: 'Drive', value: `${min(s.drive.duration_s)} · ${power}` },
					{ label: 'Dwell', value: min(s.dwell_s) },
					{ label: 'Charger', value: `${kW(s.charger.maxPower_W)} · ${s.charger.maxCurrent_A} A` },
					{ label: 'Target', value: [s.target.soc != null ? pct(s.target.soc) : null, s.target.energy_Wh != null ? `${(s.target.energy_Wh / 1000).toFixed(1)} kWh` : null].filter(Boolean).join(' and ') },
					{ label: 'Time cap', value: min(s.timeCap_s) }
				],
				notes: [],
				curves: null
			};
		}
	}
	return { items: [], notes: ['These parameters no longer pass the current checks; save a corrected version.'], curves: null };
}
