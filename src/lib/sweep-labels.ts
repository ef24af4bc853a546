/** Words and units for sweep scenarios and points, shared by the sweep, point and calibration pages. */
export interface ScenarioAxes {
	ambient_K: number;
	stateOfHealth: number;
	arrivalSoc: number;
	cellId: string;
	packId: string;
}

export const degC = (k: number | null | undefined, digits = 0) => (k == null ? '–' : `${(k - 273.15).toFixed(digits)} °C`);
export const minutes = (s: number | null | undefined, digits = 1) => (s == null ? '–' : `${(s / 60).toFixed(digits)} min`);
export const kWh = (wh: number | null | undefined, digits = 2) => (wh == null ? '–' : `${(wh / 1000).toFixed(digits)} kWh`);
export const percent = (f: number | null | undefined, digits = 0) => (f == null ? '–' : `${(f * 100).toFixed(digits)} %`);

export function scenarioLabel(axes: ScenarioAxes, names: Record<string, string> = {}): string {
	return [
		names[axes.cellId] ?? axes.cellId,
		names[axes.packId] ?? axes.packId,
		degC(axes.ambient_K),
		`SOH ${percent(axes.stateOfHealth)}`,
		`arrival ${percent(axes.arrivalSoc)}`
	].join(' · ');
}
