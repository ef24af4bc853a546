import { describe, it, expect } from 'vitest';
import {
	toCsv,
	csvNumber,
	fixed,
	frontInOrder,
	limitRuns,
	limitsPresent,
	limitDurations,
	phaseStarts,
	niceStep,
	niceRange,
	paretoCsv,
	paretoSummary,
	traceCsv,
	TRACE_CSV_HEADER,
	cellStatus,
	heatmapCsv
} from '$lib/components/charts/chart-data';
import { scaleColour, SEQUENTIAL_SCALE, limitLabel, limitColour, UNKNOWN_LIMIT_COLOUR } from '$lib/components/charts/palette';
import type { ParetoPoint, TraceSeries } from '$lib/components/charts/types';

describe('chart-data', () => {
	describe('toCsv', () => {
		it('should quote only cells that need it and use CRLF', () => {
			const csv = toCsv(['a', 'b (°C)'], [
				['plain', 1.5],
				['with, comma', null],
				['say "hi"', true]
			]);
			expect(csv).toBe('a,b (°C)\r\nplain,1.5\r\n"with, comma",\r\n"say ""hi""",yes\r\n');
		});
		it('should round numbers to six significant figures and blank non-finite ones', () => {
			expect(csvNumber(1 / 3)).toBe('0.333333');
			expect(csvNumber(293.15000000000003)).toBe('293.15');
			expect(csvNumber(Number.NaN)).toBe('');
			expect(csvNumber(0)).toBe('0');
		});
	});

	describe('fixed', () => {
		it('should not print negative zero and should dash missing values', () => {
			expect(fixed(-0.001, 1)).toBe('0.0');
			expect(fixed(null, 1)).toBe('–');
			expect(fixed(12.3456, 2)).toBe('12.35');
			expect(fixed(Number.POSITIVE_INFINITY, 1)).toBe('–');
		});
	});

	describe('frontInOrder', () => {
		it('should sort by energy then time saved and drop non-finite points', () => {
			const pts = [
				{ energy_Wh: 300, timeSaved_s: 600 },
				{ energy_Wh: 100, timeSaved_s: 200 },
				{ energy_Wh: Number.NaN, timeSaved_s: 1 },
				{ energy_Wh: 100, timeSaved_s: 100 }
			];
			expect(frontInOrder(pts).map((p) => p.timeSaved_s)).toEqual([100, 200, 600]);
		});
	});

	describe('limitRuns', () => {
		it('should merge consecutive samples and let runs meet at the next sample', () => {
			const t = [0, 10, 20, 30, 40, 50];
			const limit = [null, 'charger-current', 'charger-current', 'max-voltage', 'max-voltage', 'target'];
			expect(limitRuns(t, limit)).toEqual([
				{ key: 'charger-current', start_s: 10, end_s: 30 },
				{ key: 'max-voltage', start_s: 30, end_s: 50 },
				{ key: 'target', start_s: 50, end_s: 50 }
			]);
			expect(limitsPresent(limit)).toEqual(['charger-current', 'max-voltage', 'target']);
			expect(limitDurations(limitRuns(t, limit)).get('max-voltage')).toBe(20);
		});
		it('should return no runs for an all-null limit', () => {
			expect(limitRuns([0, 1, 2], [null, null, null])).toEqual([]);
		});
	});

	describe('phaseStarts', () => {
		it('should list the first sample and each change of phase', () => {
			expect(phaseStarts([-60, -30, 0, 30], ['drive', 'dwell', 'charge', 'charge'])).toEqual([
				{ t_s: -60, phase: 'drive' },
				{ t_s: -30, phase: 'dwell' },
				{ t_s: 0, phase: 'charge' }
			]);
			expect(phaseStarts([0, 1], undefined)).toEqual([]);
		});
	});

	describe('niceRange', () => {
		it('should include the limit values so limit lines stay on the chart', () => {
			const r = niceRange([3.4, 4.05], [4.2]);
			expect(r.min).toBeLessThanOrEqual(3.4);
			expect(r.max).toBeGreaterThanOrEqual(4.2);
			expect(r.max).toBeLessThan(4.6);
		});
		it('should land on multiples of a nice step', () => {
			expect(niceStep(0.23)).toBe(0.25);
			expect(niceStep(70)).toBe(100);
			const r = niceRange([12, 87], [0]);
			expect(r).toEqual({ min: 0, max: 100, step: 25 });
		});
		it('should widen a flat series and fall back for empty input', () => {
			const r = niceRange([5, 5, 5]);
			expect(r.min).toBeLessThan(5);
			expect(r.max).toBeGreaterThan(5);
			expect(niceRange([])).toEqual({ min: 0, max: 1, step: 0.25 });
		});
	});

	describe('pareto export', () => {
		const points: ParetoPoint[] = [
			{ id: 1, leadTime_s: 1200, setpoint_K: 298.15, heaterPowerCap_W: 5000, timeSaved_s: 600, energy_Wh: 1500, arrivalCellTemp_K: 293.15, onFront: true, feasible: true },
			{ id: 2, leadTime_s: 600, setpoint_K: 308.15, timeSaved_s: 300, energy_Wh: 2000, onFront: false, feasible: true },
			{ id: 3, leadTime_s: 3600, setpoint_K: 318.15, timeSaved_s: Number.NaN, energy_Wh: Number.NaN, onFront: false, feasible: false }
		];
		it('should write display units and flag the knee and the rule pick', () => {
			const lines = paretoCsv(points, 1, 2).trim().split('\r\n');
			expect(lines[0]).toContain('Time saved (min)');
			expect(lines[1]).toBe('1,20,25,5,10,1.5,20,yes,yes,yes,no');
			expect(lines[2]).toBe('2,10,35,,5,2,,no,yes,no,yes');
			expect(lines[3]).toBe('3,60,45,,,,,no,no,no,no');
		});
		it('should list infeasible strategies in the summary', () => {
			const s = paretoSummary(points, 1, null);
			expect(s).toContain('1 infeasible');
			expect(s).toContain('Infeasible: lead time 60 min, set-point 45 °C');
			expect(s).toContain('Knee (recommended): lead time 20 min, set-point 25 °C');
		});
	});

	describe('trace export', () => {
		it('should convert every column and carry units in the header', () => {
			const s: TraceSeries = {
				t_s: [-60, 0],
				current_A: [-50, 200],
				voltage_V: [3.7, 3.9],
				soc: [0.5, 0.45],
				cellTemp_K: [263.15, 268.15],
				coolantTemp_K: [273.15, 283.15],
				anodePotential_V: [0.1, 0.02],
				heaterPower_W: [4000, 0],
				chillerPower_W: [0, 500],
				limit: [null, 'charger-current'],
				phase: ['drive', 'charge']
			};
			const lines = traceCsv(s).trim().split('\r\n');
			expect(lines[0]).toBe(TRACE_CSV_HEADER.join(','));
			expect(lines[1]).toBe('-60,drive,-50,3.7,50,-10,0,100,4,0,');
			expect(lines[2]).toBe('0,charge,200,3.9,45,-5,10,20,0,0.5,charger-current');
		});
	});

	describe('heat map export', () => {
		it('should name each cell status', () => {
			const cells = [
				{ leadIndex: 0, setIndex: 0, timeSaved_s: 120, energy_Wh: 500, dominated: false, feasible: true },
				{ leadIndex: 1, setIndex: 0, timeSaved_s: 60, energy_Wh: 900, dominated: true, feasible: true },
				{ leadIndex: 0, setIndex: 1, timeSaved_s: null, energy_Wh: null, dominated: false, feasible: false },
				{ leadIndex: 1, setIndex: 1, timeSaved_s: null, energy_Wh: null, dominated: false, feasible: true }
			];
			expect(cells.map(cellStatus)).toEqual(['on front', 'dominated', 'infeasible', 'no result']);
			expect(heatmapCsv([600, 1200], [293.15, 303.15], cells).split('\r\n')[1]).toBe('10,20,2,0.5,on front');
		});
	});

	describe('palette', () => {
		it('should interpolate scale colours and clamp outside 0…1', () => {
			expect(scaleColour(SEQUENTIAL_SCALE, 0)).toBe(SEQUENTIAL_SCALE[0]);
			expect(scaleColour(SEQUENTIAL_SCALE, 2)).toBe(SEQUENTIAL_SCALE[SEQUENTIAL_SCALE.length - 1]);
			expect(scaleColour(['#000000', '#ffffff'], 0.5)).toBe('#808080');
		});
		it('should give words and a grey to limits it does not know', () => {
			expect(limitLabel('anode-potential')).toBe('Plating margin (anode potential)');
			expect(limitLabel('brand-new-limit')).toBe('brand-new-limit');
			expect(limitColour('brand-new-limit')).toBe(UNKNOWN_LIMIT_COLOUR);
		});
	});
});
