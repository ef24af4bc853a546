/**
 * Error statistics of a model check: simulated against measured voltage (and
 * temperature when both exist), overall and by segment.
 *
 * - RMSE and bias over samples (each logged sample counts once, as a logger
 *   at a fixed rate would weight them), maximum absolute error.
 * - Energy ∫V·I dt by the trapezoid rule over each interval, measured and
 *   simulated with the same (measured) current, so the difference is the
 *   voltage error weighted by current. Its percentage is taken of the energy
 *   throughput ∫|V·I| dt, which stays meaningful for a log that both charges
 *   and discharges (the net energy can be near zero).
 * - Segments: an interval (t_{i−1}, t_i] belongs to the band of sample i;
 *   sample 0 counts in its band's RMSE but has no interval. C-rate bands use
 *   the signed current over the cell's capacity at the check's state of
 *   health; temperature bands the measured cell temperature (or the
 *   simulated one when the log has none).
 */
import { J_PER_WH, ZERO_CELSIUS_K } from './units';

export interface ErrorStats {
	samples: number;
	/** Sum of the intervals assigned to this segment, s. */
	duration_s: number;
	rmse_V: number;
	maxAbs_V: number;
	/** Mean of simulated − measured, V. */
	bias_V: number;
	measuredEnergy_Wh: number;
	simulatedEnergy_Wh: number;
	/** Simulated − measured, Wh. */
	energyError_Wh: number;
	/** |V·I| throughput of the measurement, Wh (denominator of the percentage). */
	throughput_Wh: number;
	/** energyError / throughput · 100, or null when there is no throughput. */
	energyError_pct: number | null;
}

export interface SegmentStats extends ErrorStats {
	key: string;
	label: string;
}

export interface TempErrorStats {
	samples: number;
	rmse_K: number;
	maxAbs_K: number;
	bias_K: number;
}

export interface CheckStatistics {
	overall: ErrorStats;
	byCRate: SegmentStats[];
	byTemperature: SegmentStats[];
	/** Only when the temperature was simulated and the log has a measured one. */
	temperature: TempErrorStats | null;
}

export interface CheckSeries {
	t_s: readonly number[];
	current_A: readonly number[];
	measuredVoltage_V: readonly number[];
	simulatedVoltage_V: readonly number[];
	/** Temperature used for the temperature bands, K. */
	bandTemp_K: readonly number[];
	measuredTemp_K?: readonly number[] | null;
	simulatedTemp_K?: readonly number[] | null;
}

/** Signed C-rate bands (charge > 0), upper bounds exclusive. */
export const C_RATE_BANDS: { key: string; label: string; min: number; max: number }[] = [
	{ key: 'discharge-high', label: 'Discharge above 1C', min: -Infinity, max: -1 },
	{ key: 'discharge', label: 'Discharge 0.05C – 1C', min: -1, max: -0.05 },
	{ key: 'rest', label: 'Rest (below 0.05C either way)', min: -0.05, max: 0.05 },
	{ key: 'charge-low', label: 'Charge 0.05C – 0.5C', min: 0.05, max: 0.5 },
	{ key: 'charge-mid', label: 'Charge 0.5C – 1C', min: 0.5, max: 1 },
	{ key: 'charge-high', label: 'Charge 1C – 2C', min: 1, max: 2 },
	{ key: 'charge-fast', label: 'Charge above 2C', min: 2, max: Infinity }
];

/** Cell temperature bands, °C, upper bounds exclusive. */
export const TEMP_BANDS_C: { key: string; label: string; min: number; max: number }[] = [
	{ key: 'below-10', label: 'Below −10 °C', min: -Infinity, max: -10 },
	{ key: '-10-0', label: '−10 °C – 0 °C', min: -10, max: 0 },
	{ key: '0-10', label: '0 °C – 10 °C', min: 0, max: 10 },
	{ key: '10-25', label: '10 °C – 25 °C', min: 10, max: 25 },
	{ key: '25-40', label: '25 °C – 40 °C', min: 25, max: 40 },
	{ key: 'above-40', label: '40 °C and above', min: 40, max: Infinity }
];

class Accumulator {
	samples = 0;
	duration_s = 0;
	sumSq = 0;
	sum = 0;
	maxAbs = 0;
	measured_J = 0;
	simulated_J = 0;
	throughput_J = 0;
	addSample(err: number) {
		this.samples++;
		this.sumSq += err * err;
		this.sum += err;
		if (Math.abs(err) > this.maxAbs) this.maxAbs = Math.abs(err);
	}
	addInterval(dt: number, measured_J: number, simulated_J: number, throughput_J: number) {
		this.duration_s += dt;
		this.measured_J += measured_J;
		this.simulated_J += simulated_J;
		this.throughput_J += throughput_J;
	}
	result(): ErrorStats {
		const n = this.samples;
		const measured = this.measured_J / J_PER_WH;
		const simulated = this.simulated_J / J_PER_WH;
		const throughput = this.throughput_J / J_PER_WH;
		return {
			samples: n,
			duration_s: this.duration_s,
			rmse_V: n ? Math.sqrt(this.sumSq / n) : 0,
			maxAbs_V: this.maxAbs,
			bias_V: n ? this.sum / n : 0,
			measuredEnergy_Wh: measured,
			simulatedEnergy_Wh: simulated,
			energyError_Wh: simulated - measured,
			throughput_Wh: throughput,
			energyError_pct: throughput > 0 ? ((simulated - measured) / throughput) * 100 : null
		};
	}
}

function bandIndex(bands: { min: number; max: number }[], x: number): number {
	for (let b = 0; b < bands.length; b++) if (x >= bands[b].min && x < bands[b].max) return b;
	return bands.length - 1;
}

export function checkStatistics(s: CheckSeries, capacity_Ah: number): CheckStatistics {
	const n = s.t_s.length;
	const overall = new Accumulator();
	const byC = C_RATE_BANDS.map(() => new Accumulator());
	const byT = TEMP_BANDS_C.map(() => new Accumulator());
	const { t_s, current_A: I, measuredVoltage_V: Vm, simulatedVoltage_V: Vs } = s;
	for (let i = 0; i < n; i++) {
		const err = Vs[i] - Vm[i];
		const c = bandIndex(C_RATE_BANDS, I[i] / capacity_Ah);
		const t = bandIndex(TEMP_BANDS_C, s.bandTemp_K[i] - ZERO_CELSIUS_K);
		overall.addSample(err);
		byC[c].addSample(err);
		byT[t].addSample(err);
		if (i === 0) continue;
		const dt = t_s[i] - t_s[i - 1];
		const pm = (Vm[i - 1] * I[i - 1] + Vm[i] * I[i]) / 2;
		const ps = (Vs[i - 1] * I[i - 1] + Vs[i] * I[i]) / 2;
		const pa = (Math.abs(Vm[i - 1] * I[i - 1]) + Math.abs(Vm[i] * I[i])) / 2;
		overall.addInterval(dt, pm * dt, ps * dt, pa * dt);
		byC[c].addInterval(dt, pm * dt, ps * dt, pa * dt);
		byT[t].addInterval(dt, pm * dt, ps * dt, pa * dt);
	}
	const segments = (bands: { key: string; label: string }[], acc: Accumulator[]) =>
		bands.map((b, k) => ({ key: b.key, label: b.label, ...acc[k].result() })).filter((x) => x.samples > 0);

	let temperature: TempErrorStats | null = null;
	if (s.measuredTemp_K && s.simulatedTemp_K) {
		let sumSq = 0;
		let sum = 0;
		let maxAbs = 0;
		for (let i = 0; i < n; i++) {
			const e = s.simulatedTemp_K[i] - s.measuredTemp_K[i];
			sumSq += e * e;
			sum += e;
			maxAbs = Math.max(maxAbs, Math.abs(e));
		}
		temperature = { samples: n, rmse_K: Math.sqrt(sumSq / n), maxAbs_K: maxAbs, bias_K: sum / n };
	}
	return { overall: overall.result(), byCRate: segments(C_RATE_BANDS, byC), byTemperature: segments(TEMP_BANDS_C, byT), temperature };
}
