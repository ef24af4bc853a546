/**
 * The upload form's fields (units engineers type: kg, %, kW) into parser options, citations of a
 * check in strategy text, and thinning of long series for the check page. Common practice, no source.
 */
import { describe, expect, it } from 'vitest';
import { cleanFileName, uploadOptionsFromForm } from '../../src/lib/uploads/upload-form';
import { chartIndices, citesCheck } from '../../src/lib/uploads/check-helpers';
import { UploadError } from '../../src/lib/uploads/index';

const form = (fields: Record<string, string>) => (name: string) => fields[name] ?? null;
function refusal(fields: Record<string, string>): UploadError {
	try {
		uploadOptionsFromForm(form(fields));
	} catch (e) {
		expect(e).toBeInstanceOf(UploadError);
		return e as UploadError;
	}
	throw new Error('expected the form to be refused');
}

describe('upload form', () => {
	it('should turn percentages and kilowatts into fractions and watts for the road-load model', () => {
		const o = uploadOptionsFromForm(
			form({ kind: 'drive-profile', vehicle_mass_kg: '3 200', vehicle_dragArea_m2: '1.9', vehicle_rollingResistance: '0.009', vehicle_drivetrainEfficiency_pct: '88', vehicle_regenFraction_pct: '60', vehicle_auxiliaryPower_kW: '1.5', unit_time: 'min' })
		);
		expect(o).toEqual({ kind: 'drive-profile', units: { time: 'min' }, vehicle: { mass_kg: 3200, dragArea_m2: 1.9, rollingResistance: 0.009, drivetrainEfficiency: 0.88, regenFraction: 0.6, auxiliaryPower_W: 1500 } });
	});

	it('should read the measured-log options with per-cell scaling defaults of 1', () => {
		expect(uploadOptionsFromForm(form({ kind: 'measured-log' }))).toEqual({ kind: 'measured-log', units: {}, currentSign: 'charge-positive', seriesCells: 1, parallelCells: 1 });
	});

	it('should keep only the file name of a path and drop control characters', () => {
		expect(cleanFileName('C:\\logs\\bench\u0007 2.csv')).toBe('bench 2.csv');
		expect(cleanFileName('')).toBe('upload.csv');
	});

	it('should find a citation of check #12 but not of #1 or #123', () => {
		expect(citesCheck('See Check #12 for the fit.', 12)).toBe(true);
		expect(citesCheck('see check#12.', 12)).toBe(true);
		expect(citesCheck('see check #123', 12)).toBe(false);
		expect(citesCheck('see check #12', 1)).toBe(false);
		expect(citesCheck('recheck #12', 12)).toBe(false);
	});

	it('should thin a long series to the worst error of each stretch, keeping both ends', () => {
		const measured = Array.from({ length: 10_000 }, () => 3.7);
		const simulated = measured.map((v, i) => (i === 5_003 ? v + 0.05 : v));
		const pick = chartIndices(measured, simulated, 100);
		expect(pick.length).toBeLessThanOrEqual(102);
		expect(pick).toContain(5_003);
		expect(pick[0]).toBe(0);
		expect(pick[pick.length - 1]).toBe(9_999);
		expect(chartIndices([1, 2], [1, 2], 100)).toEqual([0, 1]);
	});

	describe('error handling', () => {
		it('should refuse an unknown kind, unit, sign or electrode, naming the field', () => {
			expect(refusal({ kind: 'spreadsheet' }).field).toBe('kind');
			expect(refusal({ kind: 'measured-log', unit_time: 'fortnights' }).field).toBe('unit_time');
			expect(refusal({ kind: 'measured-log', currentSign: 'up' }).field).toBe('currentSign');
			expect(refusal({ kind: 'ocp-table' }).message).toMatch(/Choose which electrode/);
		});

		it('should refuse numbers that are not numbers and cell counts that are not whole', () => {
			expect(refusal({ kind: 'drive-profile', vehicle_mass_kg: 'heavy' }).message).toBe('Vehicle mass “heavy” is not a number; write it with “.” for decimals.');
			expect(refusal({ kind: 'measured-log', seriesCells: '96.5' }).field).toBe('seriesCells');
		});
	});
});
