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

/** Signed kWh with a true minus sign and an explicit plus, for parts that add up ("+2.44 kWh", "−0.27 kWh"). */
export const signedKWh = (wh: number | null | undefined, digits = 2): string => {
	if (wh == null || !Number.isFinite(wh)) return '–';
	const v = Number((wh / 1000).toFixed(digits));
	if (v === 0) return `${(0).toFixed(digits)} kWh`;
	return `${v > 0 ? '+' : '\u2212'}${Math.abs(v).toFixed(digits)} kWh`;
};

/**
 * The energy a strategy spends beyond the baseline, written as the sum it is: what it spends
 * before arrival (from the pack) plus what it spends during the charge (from the grid) equals the
 * net. Each part is relative to the baseline, so the during-charge part is negative when warming
 * the pack early saves heater energy at the charger. The parts are rounded first and the net is
 * their rounded sum, so the figures on screen add up exactly.
 */
export function energySplit(pre_Wh: number | null | undefined, during_Wh: number | null | undefined, digits = 2): { pre: string; during: string; net: string; sum: string } | null {
	if (pre_Wh == null || during_Wh == null || !Number.isFinite(pre_Wh) || !Number.isFinite(during_Wh)) return null;
	const scale = 10 ** digits;
	const pre = Math.round(pre_Wh / 1000 * scale);
	const during = Math.round(during_Wh / 1000 * scale);
	const net = (pre + during) / scale;
	const pre_ = signedKWh(pre * 1000 / scale, digits);
	const during_ = signedKWh(during * 1000 / scale, digits);
	const net_ = `${net < 0 ? '\u2212' : ''}${Math.abs(net).toFixed(digits)} kWh`;
	const first = `${pre < 0 ? '\u2212' : ''}${Math.abs(pre / scale).toFixed(digits)} kWh`;
	return { pre: pre_, during: during_, net: net_, sum: `${first} before arrival ${during < 0 ? '\u2212' : '+'} ${Math.abs(during / scale).toFixed(digits)} kWh during charge = ${net_}` };
}
