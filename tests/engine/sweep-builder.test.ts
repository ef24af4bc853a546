import { describe, expect, it } from 'vitest';
import { checkBuilder, type BuilderValues } from '../../src/lib/sweep-builder';

const valid: BuilderValues = {
	name: '',
	scenarioId: 'depot',
	scenarioVersion: '2',
	cells: ['cell-a'],
	packs: ['pack-1'],
	cellVersions: { 'cell-a': '3' },
	ambients: '-20, −10',
	soh: '100',
	socs: '20',
	leadTimes: '0, 10',
	setpoints: '25',
	heaterCaps: '',
	budget: '1,5'
};

describe('checkBuilder', () => {
	it('should turn the form into the sweep request in SI units, with the versions picked', () => {
		// Unit conversions: °C + 273.15 = K, % / 100, min × 60 = s, kWh × 1000 = Wh (SI definitions).
		const { body, problems } = checkBuilder(valid);
		expect(problems).toEqual([]);
		expect(body).toEqual({
			scenarioId: 'depot@2',
			definition: {
				cellIds: ['cell-a@3'],
				packIds: ['pack-1'],
				ambients_K: [253.14999999999998, 263.15],
				statesOfHealth: [1],
				arrivalSocs: [0.2],
				leadTimes_s: [0, 600],
				setpoints_K: [298.15]
			},
			fastestWithinEnergy_Wh: 1500
		});
	});

	it('should list every problem at once, each for its field, in kWh for the budget', () => {
		const { body, problems } = checkBuilder({ ...valid, cells: [], ambients: '-20, abc, 70', soh: '100, 100', budget: '-1', setpoints: '' });
		expect(body).toBeNull();
		expect(problems.map((p) => p.field)).toEqual(['cells', 'ambients', 'setpoints', 'budget', 'soh']);
		expect(problems.find((p) => p.field === 'budget')!.message).toBe('The energy budget must be zero or more kWh (got -1 kWh).');
		expect(problems.map((p) => p.message).join(' ')).not.toMatch(/watt-hours|more problem/);
	});

	it('should report the grid-size limit only once every list parses', () => {
		const big = { ...valid, leadTimes: Array.from({ length: 200 }, (_, i) => i * 0.5).join(','), setpoints: Array.from({ length: 100 }, (_, i) => 10 + i * 0.25).join(',') };
		expect(checkBuilder(big).problems.map((p) => p.field)).toEqual(['grid']);
		expect(checkBuilder({ ...big, socs: 'x' }).problems.map((p) => p.field)).toEqual(['socs']);
	});
});
