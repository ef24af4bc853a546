/**
 * Data shapes the charts accept. SI units, unit in every name; the charts convert
 * (K→°C, s→min, Wh→kWh, W→kW, V→mV for anode potential) only for display.
 */

export type PointId = number | string;

/** One strategy of a sweep, placed against the scenario's baseline (no pre-conditioning). */
export interface ParetoPoint {
	id: PointId;
	leadTime_s: number;
	setpoint_K: number;
	heaterPowerCap_W?: number | null;
	/** Charging time saved against the baseline, s (positive = faster). */
	timeSaved_s: number;
	/** Energy spent on pre-conditioning, Wh. */
	energy_Wh: number;
	arrivalCellTemp_K?: number | null;
	onFront: boolean;
	feasible: boolean;
}

export interface FrontPoint {
	energy_Wh: number;
	timeSaved_s: number;
	leadTime_s: number;
	setpoint_K: number;
}

/** The front of one scenario (a cell variant, a state of health, an ambient…). */
export interface FrontSeries {
	label: string;
	points: FrontPoint[];
	/** The front starts at the baseline (0 kWh, 0 min): no strategy dominates it. */
	startsAtBaseline?: boolean;
}

/** One cell of the lead-time × set-point grid. */
export interface HeatmapCell {
	leadIndex: number;
	setIndex: number;
	timeSaved_s: number | null;
	energy_Wh: number | null;
	dominated: boolean;
	feasible: boolean;
}

/** Time series of one simulated strategy. All arrays have the length of `t_s`. */
export interface TraceSeries {
	/** Time, s; 0 = arrival / plug-in, negative = drive. */
	t_s: number[];
	/** Cell current, A (positive while charging). */
	current_A: number[];
	voltage_V: number[];
	/** State of charge, fraction 0…1. */
	soc: number[];
	cellTemp_K: number[];
	coolantTemp_K: number[];
	anodePotential_V: number[];
	heaterPower_W: number[];
	chillerPower_W: number[];
	/** Limit in force at each instant (see LimitKey), null when none applies. */
	limit: (string | null)[];
	/** Phase name at each instant (e.g. drive, dwell, charge). */
	phase?: string[];
}

export interface TraceLimits {
	chargerMaxCurrent_A?: number;
	maxVoltage_V: number;
	maxCellTemp_K: number;
	/** Plating margin: the anode potential is held at or above this, V. */
	anodeMargin_V: number;
}

export interface OcpCurve {
	label: string;
	x: number[];
	y: number[];
	color?: string;
}

/**
 * One entry of a chart's legend, drawn as HTML above the chart (full names, wrapping, never over
 * the plot, no paging). `symbol` is an ECharts symbol name ('circle', 'rect', 'triangle',
 * 'diamond', 'roundRect', 'pin') or 'cross'; `line` draws a line through the swatch.
 */
export interface LegendEntry {
	name: string;
	color: string;
	line?: 'solid' | 'dashed' | 'dotted' | null;
	symbol?: string | null;
	/** Outline only (e.g. the baseline's white square, the knee's ring). */
	hollow?: boolean;
	/** Clicking hides or shows the series (default true). */
	toggle?: boolean;
}
