import { describe, expect, it } from 'vitest';
import { EngineInputError } from '../../src/lib/engine/index';
import {
	MAX_ROBUST_SIMULATIONS,
	MIN_SAMPLES,
	MIN_SAMPLES_SENSITIVITY,
	robustSimulationCount,
	uncertaintyScenarioIssues,
	validateUncertaintySet
} from '../../src/lib/engine/robust/index';
import { demoPack, exampleScenario } from '../../src/lib/engine/index';
import { nmc } from './helpers';

// Bad input must be refused with the field named (product rule: clear, specific errors; no source needed).
function errorOf(input: unknown, study?: { scenarioCount: number; strategyCount: number }): EngineInputError {
	try {
		validateUncertaintySet(input, study);
	} catch (e) {
		expect(e).toBeInstanceOf(EngineInputError);
		return e as EngineInputError;
	}
	throw new Error('expected the uncertainty set to be refused');
}

const good = { seed: 1, samples: 16, inputs: { ambientError_K: { kind: 'normal', sd: 2, lower: -6, upper: 6 } } };

describe('uncertainty set: bad input names the field', () => {
	it('accepts a good set and fills the defaults', () => {
		const u = validateUncertaintySet(good);
		expect(u.design).toBe('latin-hypercube');
		expect(u.sensitivity).toBe(false);
		expect(u.inputs.ambientError_K).toMatchObject({ kind: 'normal', mean: 0, sd: 2 });
	});

	it('negative spread', () => {
		const e = errorOf({ ...good, inputs: { ambientError_K: { kind: 'normal', sd: -1, lower: -6, upper: 6 } } });
		expect(e.field).toBe('uncertainty.inputs.ambientError_K.sd');
		expect(e.message).toMatch(/must not be negative/);
	});

	it('bounds that exclude the mean', () => {
		const e = errorOf({ ...good, inputs: { arrivalTimeError_s: { kind: 'normal', mean: 900, sd: 300, lower: -600, upper: 600 } } });
		expect(e.field).toBe('uncertainty.inputs.arrivalTimeError_s.mean');
		expect(e.message).toMatch(/exclude its mean 15 min/);
	});

	it('triangular mode outside its bounds, and an upper bound below the lower one', () => {
		expect(errorOf({ ...good, inputs: { cellResistanceSpread: { kind: 'triangular', lower: 0, mode: 0.3, upper: 0.2 } } }).field).toBe(
			'uncertainty.inputs.cellResistanceSpread.mode'
		);
		expect(errorOf({ ...good, inputs: { arrivalSocError: { kind: 'uniform', lower: 0.05, upper: -0.05 } } }).field).toBe(
			'uncertainty.inputs.arrivalSocError.upper'
		);
	});

	it('a bound beyond what the input can mean (a −60 % capacity spread)', () => {
		const e = errorOf({ ...good, inputs: { cellCapacitySpread: { kind: 'uniform', lower: -0.6, upper: 0.1 } } });
		expect(e.field).toBe('uncertainty.inputs.cellCapacitySpread.lower');
		expect(e.message).toMatch(/-60 %/);
	});

	it('sample count below what the estimator needs', () => {
		const q = errorOf({ ...good, samples: MIN_SAMPLES - 1 });
		expect(q.field).toBe('uncertainty.samples');
		expect(q.message).toMatch(/quantiles/);
		const s = errorOf({ ...good, samples: MIN_SAMPLES_SENSITIVITY - 1, sensitivity: true });
		expect(s.field).toBe('uncertainty.samples');
		expect(s.message).toMatch(/sensitivity indices need at least 16 samples/);
	});

	it('sensitivity without any uncertain input', () => {
		expect(errorOf({ seed: 1, samples: 32, sensitivity: true, inputs: {} }).field).toBe('uncertainty.inputs');
	});

	it('unknown input, unknown distribution, missing seed', () => {
		expect(errorOf({ ...good, inputs: { windError: { kind: 'uniform', lower: 0, upper: 1 } } }).field).toBe('uncertainty.inputs');
		expect(errorOf({ ...good, inputs: { ambientError_K: { kind: 'lognormal', lower: 0, upper: 1 } } }).field).toBe('uncertainty.inputs.ambientError_K.kind');
		const { seed: _omit, ...noSeed } = good;
		expect(errorOf(noSeed).field).toBe('uncertainty.seed');
	});

	it('more simulations than the set maximum', () => {
		const u = validateUncertaintySet({ ...good, samples: 64, sensitivity: true });
		// 1 input: 64 × (1 + 2) = 192 rows; 480 strategies + baseline → 92 352 per scenario.
		expect(robustSimulationCount(u, 1, 480)).toBe(481 * 192);
		expect(() => validateUncertaintySet({ ...good, samples: 64, sensitivity: true }, { scenarioCount: 1, strategyCount: 480 })).not.toThrow();
		const e = errorOf({ ...good, samples: 64, sensitivity: true }, { scenarioCount: 3, strategyCount: 480 });
		expect(e.field).toBe('uncertainty.samples');
		expect(e.message).toContain(MAX_ROBUST_SIMULATIONS.toLocaleString('en-GB'));
	});
});

describe('uncertainty set against a scenario', () => {
	const base = { cell: nmc, pack: demoPack, scenario: exampleScenario }; // arrival SOC 20 %, target 80 %, −10 °C
	it('refuses bounds that take the arrival state of charge below 2 %', () => {
		const u = validateUncertaintySet({ seed: 1, samples: 10, inputs: { arrivalSocError: { kind: 'uniform', lower: -0.19, upper: 0.05 } } });
		expect(uncertaintyScenarioIssues(u, base).map((i) => i.field)).toEqual(['uncertainty.inputs.arrivalSocError.lower']);
	});
	it('refuses an ambient error beyond −40 °C', () => {
		const u = validateUncertaintySet({ seed: 1, samples: 10, inputs: { ambientError_K: { kind: 'normal', sd: 5, lower: -20, upper: 5 } } }); // still fine: −30 °C
		expect(uncertaintyScenarioIssues(u, base)).toEqual([]);
		const cold = { ...base, scenario: { ...exampleScenario, ambient_K: 273.15 - 35 } };
		expect(uncertaintyScenarioIssues(u, cold).map((i) => i.field)).toEqual(['uncertainty.inputs.ambientError_K.lower']);
		const warm = validateUncertaintySet({ seed: 1, samples: 10, inputs: { initialPackTempOffset_K: { kind: 'uniform', lower: 0, upper: 20 } } });
		const hot = { ...base, scenario: { ...exampleScenario, ambient_K: 273.15 + 40 } }; // cell maximum 55 °C
		expect(uncertaintyScenarioIssues(warm, hot).map((i) => i.field)).toEqual(['uncertainty.inputs.initialPackTempOffset_K.upper']);
	});
});
