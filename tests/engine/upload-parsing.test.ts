/**
 * Uploaded CSV tables: well-formed files in their many spellings, and every kind of broken file
 * refused with a message that says what to change. Expectations are common practice, no source,
 * except where a line names one (the road-load equation: Guzzella & Sciarretta, Vehicle Propulsion
 * Systems, 3rd ed., Springer 2013, ch. 2; CSV injection characters: OWASP "CSV Injection").
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { MAX_UPLOAD_BYTES, MAX_UPLOAD_ROWS, parseUpload, uploadToCsv, UploadError, type UploadOptions, looksLikeFormula } from '../../src/lib/uploads/index';
import { roadLoadPower_W, STANDARD_GRAVITY_m_s2, DEMO_VAN_ROAD_LOAD } from '../../src/lib/engine/road-load';

const enc = (s: string) => new TextEncoder().encode(s);
const parse = (s: string | Uint8Array, o: UploadOptions) => parseUpload(typeof s === 'string' ? enc(s) : s, o);
function refusal(s: string | Uint8Array, o: UploadOptions): UploadError {
	try {
		parse(s, o);
	} catch (e) {
		expect(e).toBeInstanceOf(UploadError);
		return e as UploadError;
	}
	throw new Error('expected the file to be refused');
}
const log: UploadOptions = { kind: 'measured-log' };
const LOG_OK = 'time_s,current_A,voltage_V,temp_C\n0,0,3.60,24.8\n1,60,3.72,24.9\n2,60,3.73,25.0\n3,60,3.74,25.1\n';

describe('upload parsing', () => {
	describe('well-formed files', () => {
		it('should read a drive profile in minutes and kW into seconds and watts', () => {
			const p = parse('time_min,power_kW\n0,12.5\n0.5,30\n1,-8\n', { kind: 'drive-profile' });
			expect(p.columns).toEqual({ time_s: [0, 30, 60], power_W: [12500, 30000, -8000] });
			expect(p.meta.source).toBe('power');
		});

		it('should accept bracketed units, a BOM, Windows line ends, comment lines and shift times to start at 0', () => {
			const text = '\ufeff# logger: bench 3\r\n# cell: demo\r\nTime (s),Current [A],Voltage (V),Cell temperature (°C)\r\n100,1,3.6,20\r\n101,2,3.61,20.5\r\n';
			const p = parse(text, log);
			expect(p.columns.time_s).toEqual([0, 1]);
			expect(p.columns.temp_K).toEqual([293.15, 293.65]);
			expect(p.meta.timeOffset_s).toBe(100);
			expect(p.notes.join(' ')).toMatch(/shifted/);
		});

		it('should read a Windows-1252 file whose header says °C, and say so', () => {
			const bytes = new Uint8Array([...enc('time_s,current_A,voltage_V,temp_'), 0xb0, ...enc('C\n0,1,3.6,20\n1,1,3.6,21\n')]);
			const p = parse(bytes, log);
			expect(p.columns.temp_K).toEqual([293.15, 294.15]);
			expect(p.notes.join(' ')).toMatch(/Windows-1252/);
		});

		it('should take units from the form when the header names none, and read a file without a header', () => {
			const p = parse('time,current,voltage\n0,1000,3600\n60,2000,3610\n', { kind: 'measured-log', units: { time: 'min', current: 'ma', voltage: 'mv' } });
			expect(p.columns).toEqual({ time_s: [0, 3600], current_A: [1, 2], voltage_V: [3.6, 3.61] });
			const headerless = parse('0,5\n10,6\n', { kind: 'drive-profile', units: { time: 's', power: 'kw' } });
			expect(headerless.headerFound).toBe(false);
			expect(headerless.columns.power_W).toEqual([5000, 6000]);
		});

		it('should turn a pack log into per-cell values and flip a discharge-positive current', () => {
			const p = parse('time_s,current_A,voltage_V\n0,-300,388.8\n1,-300,389.0\n', { kind: 'measured-log', seriesCells: 108, parallelCells: 3, currentSign: 'discharge-positive' });
			expect(p.columns.current_A).toEqual([100, 100]);
			expect(p.columns.voltage_V[0]).toBeCloseTo(3.6, 12);
		});

		it('should accept a log at the row limit (no call-stack overflow on 200 000 rows)', () => {
			const rows = Array.from({ length: MAX_UPLOAD_ROWS }, (_, i) => `${i},${i % 2 ? 30 : -30},3.7`);
			const p = parse(['time_s,current_A,voltage_V', ...rows].join('\n'), log);
			expect(p.rowCount).toBe(MAX_UPLOAD_ROWS);
			expect([p.meta.minCurrent_A, p.meta.maxCurrent_A]).toEqual([-30, 30]);
		});

		it('should ignore columns it does not know and list them', () => {
			const p = parse('time_s,current_A,voltage_V,simulated_voltage_V,comment\n0,1,3.6,3.61,\n1,1,3.6,3.61,\n', log);
			expect(Object.keys(p.columns)).toEqual(['time_s', 'current_A', 'voltage_V']);
			expect(p.ignoredColumns).toEqual(['simulated_voltage_V', 'comment']);
		});

		it('should store an OCP table with stoichiometry increasing, reversing a falling one', () => {
			const p = parse('x,ocp_mV\n0.9,90\n0.5,120\n0.1,400\n', { kind: 'ocp-table', electrode: 'negative' });
			expect(p.columns).toEqual({ stoichiometry: [0.1, 0.5, 0.9], potential_V: [0.4, 0.12, 0.09] });
		});

		it('should convert a speed trace to battery power with the road-load equation (Guzzella & Sciarretta ch. 2)', () => {
			const vehicle = { mass_kg: 3000, dragArea_m2: 2, rollingResistance: 0.01, drivetrainEfficiency: 0.9, regenFraction: 0.5, auxiliaryPower_W: 0, rotatingMassShare: 0, airDensity_kg_m3: 1.2 };
			const p = parse('time_s,speed_m_s\n0,20\n10,20\n20,20\n', { kind: 'drive-profile', vehicle });
			// Steady 20 m/s, flat: P = v·(½ρ·cdA·v² + c_r·m·g)/η, hand-calculated.
			const expected = (20 * (0.5 * 1.2 * 2 * 400 + 0.01 * 3000 * STANDARD_GRAVITY_m_s2)) / 0.9;
			for (const w of p.columns.power_W) expect(w).toBeCloseTo(expected, 6);
			expect(p.meta.source).toBe('speed');
		});
	});

	describe('road-load model', () => {
		it('should recuperate only the regenerative share of braking power through the drivetrain twice', () => {
			const v = { ...DEMO_VAN_ROAD_LOAD, dragArea_m2: 0.1, rollingResistance: 0, airDensity_kg_m3: 0.5, rotatingMassShare: 0 };
			// Constant deceleration 1 m/s² from 20 m/s: wheel power at 10 m/s ≈ −m·1·10 (drag small), battery = that·η·regen.
			const t = [0, 10, 20];
			const s = [20, 10, 0];
			const p = roadLoadPower_W(t, s, v);
			const wheel = (-v.mass_kg * 1 + 0.5 * 0.5 * 0.1 * 100) * 10;
			expect(p[1]).toBeCloseTo(wheel * v.drivetrainEfficiency * v.regenFraction, 6);
			expect(p[2]).toBe(0); // standing still: no rolling resistance, no power
		});
	});

	describe('exports', () => {
		it('should give identical columns when an export is uploaded again (any finite values)', () => {
			fc.assert(
				fc.property(
					fc.array(fc.tuple(fc.double({ min: -2000, max: 2000, noNaN: true }), fc.double({ min: 0.001, max: 5, noNaN: true }), fc.double({ min: 223.15, max: 393.15, noNaN: true })), { minLength: 2, maxLength: 40 }),
					(rows) => {
						const t = rows.map((_, i) => i * 0.1 + i * 1e-7);
						const csv = ['time_s,current_A,voltage_V,temp_K', ...rows.map((r, i) => `${t[i]},${r[0]},${r[1]},${r[2]}`)].join('\n');
						const first = parse(csv, log);
						const again = parse(uploadToCsv('measured-log', first.columns), log);
						expect(again.columns).toEqual(first.columns);
					}
				),
				{ numRuns: 60 }
			);
		});

		it('should round-trip a drive profile built from speed and an OCP table given in mV', () => {
			const drive = parse('time_min,speed_kmh\n0,0\n0.5,40\n1,55\n2,0\n', { kind: 'drive-profile', vehicle: DEMO_VAN_ROAD_LOAD });
			const drive2 = parse(uploadToCsv('drive-profile', drive.columns), { kind: 'drive-profile' });
			expect(drive2.columns).toEqual(drive.columns);
			const ocp = parse('stoichiometry,potential_mV\n0.95,3100\n0.5,3420\n0.05,3800\n', { kind: 'ocp-table' });
			expect(parse(uploadToCsv('ocp-table', ocp.columns), { kind: 'ocp-table' }).columns).toEqual(ocp.columns);
		});
	});

	describe('error handling', () => {
		it('should refuse an empty file and one of blank lines', () => {
			expect(refusal('', log).message).toMatch(/empty/);
			expect(refusal('\n\n  \n', log).message).toMatch(/blank lines/);
		});

		it('should refuse files that are not CSV: a workbook, an image, binary data, UTF-16', () => {
			expect(refusal(new Uint8Array([0x50, 0x4b, 0x03, 0x04, 1, 2, 3]), log).message).toMatch(/Excel workbook.*export it as CSV/);
			expect(refusal(new Uint8Array([0x89, 0x50, 0x4e, 0x47, 13, 10]), log).message).toMatch(/PNG image/);
			expect(refusal(new Uint8Array([65, 66, 0, 1, 2, 200, 201]), log).message).toMatch(/binary data/);
			expect(refusal(new Uint8Array([0xff, 0xfe, 65, 0]), log).message).toMatch(/UTF-16/);
			expect(refusal('time_s,current_A\u0007,voltage_V\n0,1,2\n', log).message).toMatch(/control character/);
		});

		it('should refuse a file over the size limit and one over the row limit', () => {
			const huge = new Uint8Array(MAX_UPLOAD_BYTES + 1024 * 1024).fill(0x31);
			expect(refusal(huge, log).message).toMatch(/6\.0 MB; the limit is 5\.0 MB\. Thin the log/);
			const many = 'time_s,current_A,voltage_V\n' + '1,1,3\n'.repeat(MAX_UPLOAD_ROWS + 1);
			expect(refusal(many, log).message).toMatch(/200,001 rows; the limit is 200,000/);
		});

		it('should refuse semicolon- and tab-separated files and say how to save them', () => {
			expect(refusal('time_s;current_A;voltage_V\n0;1,5;3,6\n', log).message).toMatch(/semicolons.*“,” between values and “\.” as the decimal mark/);
			expect(refusal('time_s\tcurrent_A\tvoltage_V\n0\t1\t3.6\n', log).message).toMatch(/tabs/);
		});

		it('should name missing columns and show the ones found', () => {
			const e = refusal('time_s,current_A\n0,1\n1,1\n', log);
			expect(e.message).toMatch(/no voltage column\. Found columns: “time_s”, “current_A”\. Name the columns/);
			expect(refusal('time_s,torque_Nm\n0,1\n1,2\n', { kind: 'drive-profile' }).message).toMatch(/no power or speed column/);
		});

		it('should refuse text in a numeric column, naming row, column and value', () => {
			const e = refusal('time_s,current_A,voltage_V\n0,1,3.6\n1,n/a,3.6\n2,1,3,6\n', log);
			expect(e.issues[0]).toBe('row 3, column “current_A”: “n/a” is not a number; write the current as a plain number with “.” for decimals, or delete the row');
			expect(e.issues[1]).toMatch(/^row 4 has 4 values but the header has 3; check for a missing value or a decimal comma/);
		});

		it('should refuse times that do not increase', () => {
			const e = refusal('time_s,current_A,voltage_V\n0,1,3.6\n1,1,3.6\n1,1,3.6\n0.5,1,3.6\n', log);
			expect(e.issues).toEqual([
				"row 4: time 1 s is the same as the previous row's 1 s; times must increase row by row (sort the file by time and remove repeated rows)",
				"row 5: time 0.5 s is before the previous row's 1 s; times must increase row by row (sort the file by time and remove repeated rows)"
			]);
		});

		it('should refuse a per-pack voltage with the question whether the file is per cell', () => {
			const e = refusal('time_s,current_A,voltage_V\n0,1,3.6\n1,1,42.1\n', log);
			expect(e.message).toBe('row 3: voltage 42.1 V is outside 0 V … 5 V; is the file per cell or per pack? For a module or pack log, give the number of cells in series in the form');
			expect(refusal('time_s,current_A,voltage_V,temp_C\n0,1,3.6,298\n1,1,3.6,298\n', log).message).toMatch(/cell temperature 298 °C .*kelvin/);
		});

		it('should refuse formula cells (CSV injection) anywhere, header included', () => {
			for (const cell of ['=cmd|\' /C calc\'!A0', '+SUM(A1:A2)', '-A1+1', '@SUM(1)', '\t=1+2']) {
				const e = refusal(`time_s,current_A,voltage_V\n0,1,3.6\n1,"${cell}",3.6\n`, log);
				expect(e.message).toMatch(/^row 3, column 2 \(“current_A”\): “.*” starts like a spreadsheet formula/);
			}
			expect(refusal('time_s,=HYPERLINK("x"),voltage_V\n0,1,3.6\n', log).message).toMatch(/^row 1, column 2/);
			expect(looksLikeFormula('-0.25')).toBe(false);
			expect(looksLikeFormula('+1e3')).toBe(false);
		});

		it('should ask for a unit the header does not give', () => {
			const e = refusal('time,current_A,voltage_V\n0,1,3.6\n1,1,3.6\n', log);
			expect(e.message).toMatch(/time column \(“time”\) has no unit; write it in the header \(e\.g\. time_s\) or choose it in the form/);
			expect(e.field).toBe('unit_time');
		});

		it('should refuse two columns of the same quantity and an unclosed quote', () => {
			expect(refusal('time_s,current_A,current_mA,voltage_V\n0,1,1000,3.6\n', log).message).toMatch(/Two columns hold the current/);
			expect(refusal('time_s,current_A,voltage_V\n0,"1,3.6\n1,1,3.6\n', log).message).toMatch(/quoted value is not closed/);
		});

		it('should refuse OCP tables that are not monotonic, rise with lithiation, or belong to the other electrode', () => {
			const ocp: UploadOptions = { kind: 'ocp-table', electrode: 'negative' };
			expect(refusal('stoichiometry,potential_V\n0.1,0.5\n0.3,0.2\n0.2,0.15\n', ocp).message).toMatch(/^row 4: stoichiometry 0\.2 breaks the rising order after 0\.3/);
			expect(refusal('stoichiometry,potential_V\n0.1,0.5\n0.3,0.6\n', ocp).message).toMatch(/^row 3: the potential rises from 0\.5 V to 0\.6 V/);
			expect(refusal('stoichiometry,potential_V\n0.1,4.1\n0.9,3.6\n', ocp).message).toMatch(/look like a positive electrode/);
			expect(refusal('stoichiometry,potential_V\n10,0.5\n50,0.2\n', ocp).message).toMatch(/fraction \(0\.5, not 50 %\)/);
		});

		it('should refuse a speed trace without valid vehicle parameters and a drive longer than a day', () => {
			expect(refusal('time_s,speed_kmh\n0,0\n10,30\n', { kind: 'drive-profile' }).message).toMatch(/road-load model needs the vehicle: give the vehicle mass \(kg\)/);
			const low = refusal('time_s,speed_kmh\n0,0\n10,30\n', { kind: 'drive-profile', vehicle: { ...DEMO_VAN_ROAD_LOAD, drivetrainEfficiency: 0.1 } });
			expect(low.message).toMatch(/drivetrain efficiency must be at least 30 %/);
			expect(low.field).toBe('vehicle_drivetrainEfficiency_pct');
			expect(refusal('time_h,power_kW\n0,10\n25,10\n', { kind: 'drive-profile' }).message).toMatch(/lasts 25 h; a drive is at most 24 h/);
		});

		it('should refuse a table with fewer than two rows', () => {
			expect(refusal(LOG_OK.split('\n').slice(0, 2).join('\n'), log).message).toMatch(/only one data row/);
		});
	});
});
