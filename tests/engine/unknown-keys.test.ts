import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { closestKey, editDistance, unknownKeys, unknownKeysMessage } from '../../src/lib/unknown-keys';
import { cellParamsSchema, scenarioSchema } from '../../src/lib/engine/schemas';
import { demoNmcPouch, exampleScenario } from '../../src/lib/engine/index';

describe('editDistance', () => {
	it('should give the textbook Levenshtein distances', () => {
		// kitten → sitting = 3 and flaw → lawn = 2, the usual worked examples (from memory).
		expect(editDistance('kitten', 'sitting')).toBe(3);
		expect(editDistance('flaw', 'lawn')).toBe(2);
		expect(editDistance('', 'abc')).toBe(3);
		expect(editDistance('same', 'same')).toBe(0);
	});
});

describe('closestKey', () => {
	it('should suggest the key with another unit suffix, another case or a small typo', () => {
		expect(closestKey('anodePotentialMargin_mV', ['maxVoltage_V', 'anodePotentialMargin_V'])).toBe('anodePotentialMargin_V');
		expect(closestKey('MAXVOLTAGE_V', ['maxVoltage_V'])).toBe('maxVoltage_V');
		expect(closestKey('negatve', ['negative', 'positive'])).toBe('negative');
	});

	it('should suggest nothing when no known key is close', () => {
		expect(closestKey('colour', ['maxVoltage_V', 'anodePotentialMargin_V'])).toBeNull();
	});
});

describe('unknownKeys', () => {
	const schema = z.object({
		name: z.string(),
		limits: z.object({ maxVoltage_V: z.number(), margin_V: z.number().default(0.01) }),
		drive: z.discriminatedUnion('kind', [
			z.object({ kind: z.literal('constant'), power_W: z.number() }),
			z.object({ kind: z.literal('table'), time_s: z.array(z.number()), power_W: z.array(z.number()) })
		]),
		steps: z.array(z.object({ t_s: z.number() })).optional()
	});

	it('should find unknown keys at every depth, through unions and arrays, with suggestions', () => {
		const found = unknownKeys(schema, {
			name: 'x',
			limits: { maxVoltage_V: 4.2, margin_mV: 10 },
			drive: { kind: 'table', time_s: [0, 1], power_W: [1, 2], powr_W: 3 },
			steps: [{ t_s: 0 }, { ts: 1 }],
			extra: true
		});
		expect(found).toEqual([
			{ path: 'limits.margin_mV', key: 'margin_mV', suggestion: 'margin_V' },
			{ path: 'drive.powr_W', key: 'powr_W', suggestion: 'power_W' },
			{ path: 'steps[1].ts', key: 'ts', suggestion: 't_s' },
			{ path: 'extra', key: 'extra', suggestion: null }
		]);
		expect(unknownKeysMessage(found)).toMatch(/^Unknown keys “limits\.margin_mV” \(did you mean “margin_V”\?\), “drive\.powr_W”/);
	});

	it('should find nothing in the demo cell and scenario, and name a typo in the cell', () => {
		expect(unknownKeys(cellParamsSchema, demoNmcPouch)).toEqual([]);
		expect(unknownKeys(scenarioSchema, exampleScenario)).toEqual([]);
		const typo = JSON.parse(JSON.stringify(demoNmcPouch));
		typo.limits.anodePotentialMargin_mV = 20;
		expect(unknownKeys(cellParamsSchema, typo)).toEqual([
			{ path: 'limits.anodePotentialMargin_mV', key: 'anodePotentialMargin_mV', suggestion: 'anodePotentialMargin_V' }
		]);
	});
});
