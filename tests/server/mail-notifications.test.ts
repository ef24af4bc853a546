/**
 * Strategy review notifications: who gets an immediate message, who gets the daily summary, and
 * that settings, the author exclusion and the summary's once-a-day rule hold. The demo program
 * (engineer proposes, architect decides, manager and viewer read) is the cast.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';

process.env.PARETHERM_DATA_DIR = fs.mkdtempSync(path.join(os.tmpdir(), 'paretherm-notify-'));
process.env.ORIGIN = 'http://paretherm.example';
delete process.env.SMTP_URL;

const { seedDemo } = await import('../../src/lib/server/demo/seed');
const { MailOutbox, NotificationItem, NotificationSetting, Strategy, StrategyEvent, Sweep } = await import('../../src/lib/server/db/models/index');
const { changeState, addComment } = await import('../../src/lib/server/strategies');
const { processStrategyEvents, runDailySummaries } = await import('../../src/lib/server/mail/strategy-notifications');

const outboxFor = (userId: string, kind: string) => MailOutbox.findAll({ where: { user_id: userId, kind }, order: [['id', 'ASC']] });
const can = { edit: true, decide: true };

describe('strategy notifications', () => {
	let programId: number;
	let ids: Record<string, string>;
	let strategy: InstanceType<typeof Strategy>;

	beforeAll(async () => {
		({ programId, userIds: ids } = await seedDemo());
		// A strategy needs a sweep to point at; the figures are a snapshot as on promotion.
		const sweep = await Sweep.create({
			program_id: programId, name: 'notification test sweep', status: 'done', definition: '{}', inputs: '{}', queue_token: 'x',
			chunk_size: 1, chunk_count: 1, grid_points: 1, simulation_count: 2, created_by: ids.engineer
		});
		strategy = await Strategy.create({
			program_id: programId, sweep_id: sweep.id, point_id: 1, scenario_key: 'k', title: 'Warm early at −10 °C', rationale: '', state: 'proposed',
			figures: JSON.stringify({ scenarioLabel: '−10 °C · SoH 100 %', leadTime_s: 900, setpoint_K: 303.15, timeSaved_s: 468, energy_Wh: 930 }),
			created_by: ids.engineer
		});
		await StrategyEvent.create({ strategy_id: strategy.id, user_id: ids.engineer, kind: 'state', from_state: null, to_state: 'proposed', body: 'Knee point.' });
	});

	it('should notify the proposer and architects at once and queue the rest for the daily summary', async () => {
		await processStrategyEvents(); // the proposal
		await changeState(strategy, 'endorsed', ids.architect, 'Matches the bench data.', can);
		await addComment(strategy, ids.manager, 'Does this hold for the aged cell?');
		await processStrategyEvents(); // also called by the two functions; a second run changes nothing

		// Proposer: endorsement + comment, immediately; not their own proposal.
		const eng = await outboxFor(ids.engineer, 'strategy-event');
		expect(eng.map((m) => m.subject)).toEqual([
			expect.stringContaining(`Strategy #${strategy.id} “Warm early at −10 °C” endorsed`),
			expect.stringContaining(`New comment on strategy #${strategy.id}`)
		]);
		expect(eng[0].text).toContain('Matches the bench data.');
		expect(eng[0].text).toContain('Lead time: 15.0 min');
		expect(eng[0].text).toContain('Energy spent: 0.93 kWh');
		expect(eng[1].text).toContain('Does this hold for the aged cell?');
		expect(eng[1].text).toContain(`http://paretherm.example/programs/${programId}/strategies/${strategy.id}`);
		// Architect: the proposal and the comment, not their own endorsement.
		const arch = await outboxFor(ids.architect, 'strategy-event');
		expect(arch.map((m) => m.subject)).toEqual([expect.stringContaining('proposed'), expect.stringContaining('New comment')]);
		// Manager and viewer: nothing immediate; summary items (the manager not for their own comment).
		expect(await outboxFor(ids.manager, 'strategy-event')).toHaveLength(0);
		expect(await outboxFor(ids.viewer, 'strategy-event')).toHaveLength(0);
		expect(await NotificationItem.count({ where: { user_id: ids.manager } })).toBe(2);
		expect(await NotificationItem.count({ where: { user_id: ids.viewer } })).toBe(3);
	});

	it('should send one daily summary per person and day, and nothing twice', async () => {
		const now = new Date(Date.now() + 60_000);
		expect(await runDailySummaries(now)).toBe(2);
		const [summary] = await outboxFor(ids.viewer, 'strategy-summary');
		expect(summary.subject).toContain('Strategy review summary for');
		expect(summary.subject).toContain('3 updates');
		expect(summary.text).toContain('Tove Ridgeway proposed strategy');
		expect(summary.text).toContain('Omar Castellane endorsed strategy');
		expect(summary.text).toContain('Priya Halloran commented on strategy');
		expect(await runDailySummaries(now)).toBe(0);
		expect(await MailOutbox.count({ where: { kind: 'strategy-summary' } })).toBe(2);
	});

	it('should follow the person’s setting: off sends nothing, immediately overrides the default', async () => {
		await NotificationSetting.create({ user_id: ids.viewer, strategy_mode: 'immediately' });
		await NotificationSetting.create({ user_id: ids.engineer, strategy_mode: 'off' });
		const before = await outboxFor(ids.engineer, 'strategy-event');
		await addComment(strategy, ids.architect, 'Closing the loop.');
		await processStrategyEvents();
		expect(await outboxFor(ids.engineer, 'strategy-event')).toHaveLength(before.length);
		const viewer = await outboxFor(ids.viewer, 'strategy-event');
		expect(viewer).toHaveLength(1);
		expect(viewer[0].text).toContain('Closing the loop.');
		expect(viewer[0].text).toContain('You chose immediate strategy notifications.');
	});
});
