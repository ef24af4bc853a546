import { describe, expect, it } from 'vitest';
import { frontCurve, sharedEnergies, timeSavedAt } from '../../src/lib/engine/front-compare';

const pts = (pairs: [number, number][]) => pairs.map(([energy_Wh, timeSaved_s]) => ({ energy_Wh, timeSaved_s }));

describe('frontCurve', () => {
	it('should start at the baseline origin when nothing dominates it, in energy order', () => {
		// Dominance with the baseline at (0 Wh, 0 s) (definition, common practice, no source).
		expect(frontCurve(pts([[900, 300], [300, 120]]))).toEqual(pts([[0, 0], [300, 120], [900, 300]]));
	});

	it('should leave the origin out when a strategy dominates it, and ignore slower points', () => {
		expect(frontCurve(pts([[-100, 60], [500, 400], [200, -30]]))).toEqual(pts([[-100, 60], [500, 400]]));
	});
});

describe('timeSavedAt', () => {
	// Piecewise-linear interpolation (common practice, no source), hand computed:
	// between (300 Wh, 120 s) and (900 Wh, 300 s), 600 Wh is half way: 120 + 0.5·180 = 210 s;
	// between (0, 0) and (300, 120), 100 Wh gives 40 s.
	const curve = frontCurve(pts([[900, 300], [300, 120]]));

	it('should interpolate linearly between neighbouring front points', () => {
		expect(timeSavedAt(curve, 600)).toBeCloseTo(210, 12);
		expect(timeSavedAt(curve, 100)).toBeCloseTo(40, 12);
		expect(timeSavedAt(curve, 300)).toBe(120);
		expect(timeSavedAt(curve, 900)).toBe(300);
	});

	it('should say nothing outside the front’s energy range', () => {
		expect(timeSavedAt(curve, 901)).toBeNull();
		expect(timeSavedAt(curve, -1)).toBeNull();
		expect(timeSavedAt([], 10)).toBeNull();
		expect(timeSavedAt(curve, NaN)).toBeNull();
	});
});

describe('sharedEnergies', () => {
	it('should space comparison energies evenly over the range all fronts cover', () => {
		// Ranges [0, 900] and [−100, 600] share [0, 600]: 0, 200, 400, 600 (hand computed).
		const a = frontCurve(pts([[900, 300], [300, 120]]));
		const b = frontCurve(pts([[-100, 10], [600, 500]]));
		expect(sharedEnergies([a, b], 4)).toEqual([0, 200, 400, 600]);
	});

	it('should return nothing when the fronts share no range or one is empty', () => {
		expect(sharedEnergies([pts([[0, 0], [100, 10]]), pts([[200, 5], [300, 9]])])).toEqual([]);
		expect(sharedEnergies([pts([[0, 0]]), []])).toEqual([]);
	});
});
