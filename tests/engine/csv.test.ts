/**
 * The one CSV writer (src/lib/csv.ts) and every export built on it: RFC 4180 quoting, CRLF, and
 * formula escaping (OWASP "CSV Injection": a text cell starting with = + - @, tab or carriage
 * return gets an apostrophe) for the chart downloads, the calibration table and the upload and
 * check exports. papaparse's parser is the independent reader.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import Papa from 'papaparse';
import { FORMULA_START, writeCsv } from '../../src/lib/csv';
import { frontsCsv, heatmapCsv, paretoCsv, toCsv, traceCsv } from '../../src/lib/components/charts/chart-data';
import { calibrateScenario, calibrationCsv, calibrationTable, type EvaluatedPoint } from '../../src/lib/engine/calibration';
import { columnsToCsv } from '../../src/lib/uploads/export';

const read = (csv: string) => Papa.parse<string[]>(csv, { delimiter: ',', newline: '\r\n' }).data;
const FORMULAS = ['=1+1', '+SUM(A1:A2)', '-2+3', '@SUM(A1)', '\t=1', '\r=1', '=HYPERLINK("http://x","y")', '=1+1\nmore'];

describe('the CSV writer', () => {
	it('should quote only where RFC 4180 needs it and end every record with CRLF', () => {
		// RFC 4180 §2: fields with a comma, double quote, CR or LF are quoted, inner quotes doubled.
		expect(writeCsv(['a', 'b (°C)'], [['plain', 1.5], ['with, comma', null], ['say "hi"', -2], ['a\nb', 0]])).toBe(
			'a,b (°C)\r\nplain,1.5\r\n"with, comma",\r\n"say ""hi""",-2\r\n"a\nb",0\r\n'
		);
		expect(writeCsv(['only'], [])).toBe('only\r\n');
	});

	it('should escape text that a spreadsheet runs as a formula, and leave numbers alone', () => {
		// OWASP "CSV Injection": prefix with an apostrophe; the prefixed cell is quoted.
		for (const f of FORMULAS) {
			const csv = writeCsv(['x'], [[f]]);
			expect(read(csv)[1][0], JSON.stringify(f)).toBe(`'${f}`);
		}
		expect(writeCsv(['x'], [['a=b'], [-5], [Number.NaN], [Number.POSITIVE_INFINITY], [-0]])).toBe('x\r\na=b\r\n-5\r\n\r\n\r\n0\r\n');
	});

	it('should round-trip any text through an independent parser (papaparse)', () => {
		const text = fc.string({ unit: fc.constantFrom('a', ' ', ',', '"', '\r', '\n', '\t', '=', '+', '-', '@', "'", 'é'), maxLength: 12 });
		fc.assert(
			fc.property(text, text, (a, b) => {
				const rows = read(writeCsv(['a', 'b'], [[a, b]]));
				const guard = (s: string) => (FORMULA_START.test(s) ? `'${s}` : s);
				expect(rows[1]).toEqual([guard(a), guard(b)]);
			}),
			{ numRuns: 300 }
		);
	});
});

describe('every export goes through it', () => {
	it('should escape a formula in a chart export label (fronts, heat map status, traces, Pareto)', () => {
		// Scenario labels carry cell and pack ids people type.
		const fronts = frontsCsv([{ label: '=HYPERLINK("http://x","y")', points: [{ leadTime_s: 600, setpoint_K: 298.15, timeSaved_s: 120, energy_Wh: 500 }] }]);
		expect(read(fronts)[1][0]).toBe('\'=HYPERLINK("http://x","y")');
		expect(read(fronts)[1].slice(1)).toEqual(['10', '25', '2', '0.5']);

		const trace = traceCsv({
			t_s: [0],
			current_A: [-50],
			voltage_V: [3.7],
			soc: [0.5],
			cellTemp_K: [263.15],
			coolantTemp_K: [273.15],
			anodePotential_V: [0.1],
			heaterPower_W: [0],
			chillerPower_W: [0],
			limit: ['+cmd'],
			phase: ['@drive']
		});
		const row = read(trace)[1];
		expect(row[1]).toBe("'@drive");
		expect(row[2]).toBe('-50'); // a negative number stays a number
		expect(row[10]).toBe("'+cmd");

		expect(read(toCsv(['h'], [['-1+2'], [-3], [true]])).slice(1, 4)).toEqual([["'-1+2"], ['-3'], ['yes']]);
		expect(paretoCsv([{ id: 1, leadTime_s: 0, setpoint_K: 273.15, timeSaved_s: -60, energy_Wh: -100, onFront: true, feasible: true }]).split('\r\n')[1]).toBe('1,0,0,,-1,-0.1,,yes,yes,no,no');
		expect(heatmapCsv([0], [273.15], [{ leadIndex: 0, setIndex: 0, timeSaved_s: -60, energy_Wh: 0, dominated: false, feasible: true }]).split('\r\n')[1]).toBe('0,0,-1,0,on front');
	});

	it('should escape ids in the calibration table', () => {
		const pt = (leadTime_s: number, energy_Wh: number, timeToTarget_s: number): EvaluatedPoint => ({
			leadTime_s,
			setpoint_K: 298.15,
			energy_Wh,
			energyPreArrival_Wh: energy_Wh,
			energyDuringCharge_Wh: 0,
			timeToTarget_s,
			feasible: true
		});
		const cal = calibrateScenario({
			scenario: { ambient_K: 263.15, stateOfHealth: 1, arrivalSoc: 0.2, cellId: '=cmd|x', packId: '@pack' },
			baselineTimeToTarget_s: 3000,
			points: [pt(600, 200, 2800), pt(1200, 400, 2400)]
		});
		const rows = read(calibrationCsv(calibrationTable([cal])));
		expect(rows[1][3]).toBe("'=cmd|x");
		expect(rows[1][4]).toBe("'@pack");
		expect(rows[1][0]).toBe('-10');
	});

	it('should write upload columns as plain numbers, negative ones unescaped', () => {
		expect(columnsToCsv(['time_s', 'current_A'], { time_s: [0, 1], current_A: [-12.5, 3e-7] })).toBe('time_s,current_A\n0,-12.5\n1,3e-7\n');
	});
});
