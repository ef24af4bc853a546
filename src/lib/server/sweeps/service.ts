/**
 * The sweep service: create, persist chunk results, finalise (baseline, time saved, Pareto front,
 * knee, rule), cancel, fail, and reconcile the database with the queue.
 *
 * Invariants:
 * - A chunk's result is stored at most once: the chunk receipt (UNIQUE sweep_id, chunk_index) and
 *   its points are inserted in one transaction; a second delivery fails on the receipt and rolls
 *   back. Points have their own unique index as a second guard.
 * - Only the web process writes (one SQLite writer); within it, every write path runs through
 *   `serialized`, so "is this chunk stored?" checks and the writes they guard never interleave.
 * - Jobs are built from the sweep's input snapshot, never from live parameter sets.
 */
import crypto from 'node:crypto';
import { gunzipSync } from 'node:zlib';
import { LRUCache } from 'lru-cache';
import { Op, UniqueConstraintError, literal, type Transaction } from 'sequelize';
import { sequelize } from '../db/index';
import { serialized } from '../db/write-queue';
import { ACTIVE_SWEEP_STATUSES, Sweep, SweepChunk, SweepPoint, SweepScenario, SweepSeries, type SweepStatus } from '../db/models/index';
import { chunkTasks, expandScenarios, expandStrategies, gridSize, simulationCount, type Scenario as GridScenario, type SweepDefinition, type TaskChunk } from '../../engine/sweep-grid';
import { calibrateScenario, fastestWithin, type EvaluatedPoint } from '../../engine/calibration';
import type { SimulationSummary } from '../../engine/index';
import type { ChunkJobData, ChunkJobResult, SeriesJobData, SeriesJobResult } from '../queue/jobs';
import { STORED_SERIES_INTERVAL_S } from '../queue/jobs';
import { JOB_ATTEMPTS, JOB_FRONT_SERIES, JOB_SWEEP_CHUNK, chunkJobId, seriesJobId } from '../queue/names';
import type { SweepQueue } from '../queue/producer';
import { activeQueue, clearProgress } from './registry';
import { resolveSweepInputs, scenarioInputsFor, strategyInput, type SweepInputs } from './inputs';
import { parseSweepRequest } from './request';
import { assertQueueRoom, chunkPriority, programBacklogChunks } from './admission';
import { notifySweepFinished } from '../mail/sweep-digest';

export { SweepInputError } from './request';

const log = (m: string) => console.log(`[paretherm sweeps] ${m}`);

// Every write runs in the process's one write queue (db/write-queue.ts).
export { serialized };

// ---------------------------------------------------------------------------------------------
// Plans: what a sweep row expands to (cached; definition and inputs never change after creation)

export interface SweepPlan {
	definition: SweepDefinition;
	inputs: SweepInputs;
	scenarios: GridScenario[];
	chunks: TaskChunk[];
}

// LRU rather than a map cleared when full: a list page of 100 sweeps must not re-parse every
// sweep's definition and inputs on each load.
const plans = new LRUCache<number, SweepPlan>({ max: 500 });

export function planFor(sweep: Sweep): SweepPlan {
	let plan = plans.get(sweep.id);
	if (!plan) {
		const stored = JSON.parse(sweep.definition) as { definition: SweepDefinition };
		const definition = stored.definition;
		plan = {
			definition,
			inputs: JSON.parse(sweep.inputs) as SweepInputs,
			scenarios: expandScenarios(definition),
			chunks: chunkTasks(definition, sweep.chunk_size)
		};
		plans.set(sweep.id, plan);
	}
	return plan;
}

export function chunkJobData(sweep: Sweep, chunkIndex: number): ChunkJobData {
	const plan = planFor(sweep);
	const chunk = plan.chunks[chunkIndex];
	if (!chunk) throw new RangeError(`Sweep ${sweep.id} has no chunk ${chunkIndex}.`);
	const scenarios: ChunkJobData['scenarios'] = {};
	const strategies: ChunkJobData['strategies'] = {};
	for (const t of chunk.tasks) {
		scenarios[t.scenarioIndex] ??= scenarioInputsFor(plan.inputs, plan.scenarios[t.scenarioIndex]);
		if (t.strategyIndex !== null) strategies[t.strategyIndex] ??= strategyInput(plan.definition, t.strategyIndex);
	}
	return { sweepId: sweep.id, queueToken: sweep.queue_token, chunkIndex, tasks: chunk.tasks, scenarios, strategies };
}

/** Simulations per queue job: at least ~32 jobs per sweep so many workers can share it, at most 16 each. */
export function defaultChunkSize(simulations: number): number {
	return Math.max(1, Math.min(16, Math.ceil(simulations / 32)));
}

// ---------------------------------------------------------------------------------------------
// Create

/**
 * Validate `body` (see request.ts), resolve and snapshot its parameter sets, store the sweep and
 * enqueue its chunks. Throws SweepInputError (with `field`) for bad input, and with status 429
 * when the sweep would pass a queued-simulation cap (admission.ts). If the queue is not reachable
 * right now the sweep stays 'queued' and is enqueued by the next reconciliation.
 */
export async function createSweep(programId: number, userId: string | null, body: unknown): Promise<Sweep> {
	const req = parseSweepRequest(body);
	const inputs = await resolveSweepInputs(programId, req);
	const def = req.definition;
	const sims = simulationCount(def);
	const chunkSize = req.chunkSize ?? defaultChunkSize(sims);
	const chunkCount = chunkTasks(def, chunkSize).length;
	const points = gridSize(def);
	const sweep = await serialized(async () => {
		await assertQueueRoom(programId, userId, sims);
		return Sweep.create({
			program_id: programId,
			name: req.name ?? `${points} strategies × ${expandScenarios(def).length} scenarios, ${new Date().toISOString().slice(0, 16).replace('T', ' ')} UTC`,
			status: 'queued',
			definition: JSON.stringify({ scenarioId: req.scenarioId, definition: def, fastestWithinEnergy_Wh: req.fastestWithinEnergy_Wh ?? null }),
			inputs: JSON.stringify(inputs),
			rule_max_energy_Wh: req.fastestWithinEnergy_Wh ?? null,
			queue_token: crypto.randomBytes(4).toString('hex'),
			chunk_size: chunkSize,
			chunk_count: chunkCount,
			grid_points: points,
			simulation_count: sims,
			created_by: userId
		});
	});
	const queue = activeQueue();
	if (queue) {
		try {
			await enqueueAllChunks(sweep, queue);
		} catch (e) {
			log(`sweep ${sweep.id} stored but not yet queued (${(e as Error).message}); it will be queued when Redis is reachable`);
		}
	}
	return sweep;
}

/** Every chunk, each behind the chunks its program already has waiting (fair order, admission.ts). */
async function enqueueAllChunks(sweep: Sweep, queue: SweepQueue): Promise<void> {
	const backlog = await programBacklogChunks(sweep.program_id, sweep.id);
	const chunks = [];
	for (let i = 0; i < sweep.chunk_count; i++) chunks.push({ data: chunkJobData(sweep, i), priority: chunkPriority(backlog, i) });
	await queue.addChunks(chunks);
}

// ---------------------------------------------------------------------------------------------
// Persist chunk results

export type PersistOutcome = 'stored' | 'duplicate' | 'discarded';

function finite(v: unknown): number | null {
	return typeof v === 'number' && Number.isFinite(v) ? v : null;
}

/**
 * Store one chunk's points. Idempotent: a second call for the same (sweep, chunk) returns
 * 'duplicate' and changes nothing. Results for sweeps that are no longer running (cancelled,
 * failed) or from another queue incarnation (token mismatch) are 'discarded'. A result that does
 * not match the chunk's tasks throws (the job was produced by different code).
 */
export function persistChunkResult(result: ChunkJobResult, queueToken: string): Promise<PersistOutcome> {
	return serialized(async () => {
		const sweep = await Sweep.findByPk(result.sweepId);
		if (!sweep || sweep.queue_token !== queueToken) return 'discarded';
		if (sweep.status !== 'queued' && sweep.status !== 'running') {
			const stored = await SweepChunk.count({ where: { sweep_id: sweep.id, chunk_index: result.chunkIndex } });
			return stored ? 'duplicate' : 'discarded';
		}
		if (result.cancelled) return 'discarded';
		const plan = planFor(sweep);
		const chunk = plan.chunks[result.chunkIndex];
		if (!chunk) throw new Error(`Sweep ${sweep.id} has no chunk ${result.chunkIndex}; the result belongs to a different sweep layout.`);
		if (
			result.points.length !== chunk.tasks.length ||
			result.points.some((p, i) => p.scenarioIndex !== chunk.tasks[i].scenarioIndex || p.strategyIndex !== chunk.tasks[i].strategyIndex)
		)
			throw new Error(`The result of chunk ${result.chunkIndex} of sweep ${sweep.id} does not match the chunk's simulations; it was not stored.`);

		const rows = result.points.map((p) => {
			const s = p.summary as SimulationSummary;
			const strat = p.strategyIndex === null ? null : strategyInput(plan.definition, p.strategyIndex);
			return {
				sweep_id: sweep.id,
				scenario_index: p.scenarioIndex,
				strategy_index: p.strategyIndex,
				chunk_index: result.chunkIndex,
				lead_time_s: strat?.leadTime_s ?? null,
				coolant_setpoint_K: strat?.coolantSetpoint_K ?? null,
				heater_power_cap_W: strat?.heaterPowerCap_W ?? null,
				reached_target: Boolean(s.reachedTarget),
				feasible: Boolean(s.reachedTarget) && (s.violations?.length ?? 0) === 0,
				time_to_target_s: finite(s.timeToTarget_s),
				thermal_energy_Wh: finite(s.thermalEnergyTotal_Wh),
				summary: JSON.stringify(s),
				compute_ms: p.compute_ms
			};
		});
		try {
			await sequelize.transaction(async (transaction) => {
				await SweepChunk.create(
					{
						sweep_id: sweep.id,
						chunk_index: result.chunkIndex,
						simulations: rows.length,
						worker: String(result.worker).slice(0, 200),
						attempt: result.attempt,
						elapsed_ms: Math.round(result.elapsed_ms)
					},
					{ transaction }
				);
				await SweepPoint.bulkCreate(rows, { transaction });
				await Sweep.update(
					{
						simulations_done: literal(`simulations_done + ${rows.length}`),
						chunks_done: literal('chunks_done + 1'),
						status: 'running',
						started_at: sweep.started_at ?? new Date()
					},
					{ where: { id: sweep.id }, transaction }
				);
			});
		} catch (e) {
			if (e instanceof UniqueConstraintError) return 'duplicate';
			throw e;
		}
		return 'stored';
	});
}

// ---------------------------------------------------------------------------------------------
// Finalise: baseline, time saved, energy attributable to the strategy, front, knee, rule

function driveEnergy_Wh(s: SimulationSummary): number {
	return (s.heaterEnergyDrive_Wh ?? 0) + (s.chillerEnergyDrive_Wh ?? 0);
}
function chargeEnergy_Wh(s: SimulationSummary): number {
	return (s.heaterEnergyCharge_Wh ?? 0) + (s.chillerEnergyCharge_Wh ?? 0);
}

/**
 * Once every chunk is stored: per scenario compare each strategy with its baseline and pick.
 *
 * Energy attributable to a strategy = its heater + chiller electrical energy minus the
 * baseline's in the same scenario, split into before arrival (from the pack) and during the
 * charge (from the grid). It can be negative: warming the pack early can save more heater energy
 * during the charge than it costs before arrival. With this definition the baseline sits at
 * (0 Wh, 0 s), the origin the calibration module's knee rule measures from.
 *
 * Idempotent: re-running replaces the scenario rows and point columns it wrote.
 */
export function finalizeSweep(sweepId: number): Promise<'finalized' | 'not-ready' | 'skipped'> {
	return serialized(async () => {
		const sweep = await Sweep.findByPk(sweepId);
		if (!sweep || (sweep.status !== 'queued' && sweep.status !== 'running')) return 'skipped';
		const storedChunks = await SweepChunk.count({ where: { sweep_id: sweepId } });
		if (storedChunks < sweep.chunk_count) return 'not-ready';
		const plan = planFor(sweep);
		const points = await SweepPoint.findAll({ where: { sweep_id: sweepId }, order: [['scenario_index', 'ASC'], ['strategy_index', 'ASC']] });
		if (points.length !== sweep.simulation_count)
			throw new Error(`Sweep ${sweepId}: ${points.length} points stored but ${sweep.simulation_count} expected.`);

		const byScenario = new Map<number, SweepPoint[]>();
		for (const p of points) {
			const list = byScenario.get(p.scenario_index) ?? [];
			list.push(p);
			byScenario.set(p.scenario_index, list);
		}

		const pointUpdates: { id: number; time_saved_s: number | null; energy_Wh: number | null; energy_pre_arrival_Wh: number | null; energy_during_charge_Wh: number | null; on_front: boolean }[] = [];
		const scenarioRows: Record<string, unknown>[] = [];
		let needsSeries = false;

		for (const scenario of plan.scenarios) {
			const list = byScenario.get(scenario.index) ?? [];
			const baseline = list.find((p) => p.strategy_index === null);
			const strategies = list.filter((p) => p.strategy_index !== null);
			const axes = { ambient_K: scenario.ambient_K, stateOfHealth: scenario.stateOfHealth, arrivalSoc: scenario.arrivalSoc, cellId: scenario.cellId, packId: scenario.packId };
			if (!baseline) throw new Error(`Sweep ${sweepId}: scenario ${scenario.index} has no baseline point.`);
			const bs = JSON.parse(baseline.summary) as SimulationSummary;
			const baselineTime = finite(bs.timeToTarget_s);
			const notes: string[] = [];
			pointUpdates.push({ id: baseline.id, time_saved_s: 0, energy_Wh: 0, energy_pre_arrival_Wh: 0, energy_during_charge_Wh: 0, on_front: false });

			const evaluated: EvaluatedPoint[] = strategies.map((p) => {
				const s = JSON.parse(p.summary) as SimulationSummary;
				const pre = driveEnergy_Wh(s) - driveEnergy_Wh(bs);
				const during = chargeEnergy_Wh(s) - chargeEnergy_Wh(bs);
				return {
					leadTime_s: p.lead_time_s ?? NaN,
					setpoint_K: p.coolant_setpoint_K ?? NaN,
					...(p.heater_power_cap_W !== null ? { heaterPowerCap_W: p.heater_power_cap_W } : {}),
					energy_Wh: pre + during,
					energyPreArrival_Wh: pre,
					energyDuringCharge_Wh: during,
					// A point that never reached the target has no time to target; NaN keeps it off the front.
					timeToTarget_s: p.reached_target && p.time_to_target_s !== null ? p.time_to_target_s : NaN,
					feasible: p.feasible
				};
			});

			let frontIds: number[] = [];
			let kneeId: number | null = null;
			let kneeMethod: string | null = null;
			let ruleId: number | null = null;
			let noneBeats = true;
			if (baselineTime === null) {
				notes.push('The baseline did not report a time to target, so time saved cannot be computed; raise the scenario’s charge time cap (timeCap_s) or lower its target.');
				evaluated.forEach((e, i) =>
					pointUpdates.push({ id: strategies[i].id, time_saved_s: null, energy_Wh: e.energy_Wh, energy_pre_arrival_Wh: e.energyPreArrival_Wh, energy_during_charge_Wh: e.energyDuringCharge_Wh, on_front: false })
				);
			} else {
				if (!baseline.reached_target)
					notes.push('The baseline did not reach the target within the charge time cap; time saved is measured from the cap and is a lower bound.');
				const cal = calibrateScenario({ scenario: axes, baselineTimeToTarget_s: baselineTime, points: evaluated });
				const idOf = (rp: unknown) => strategies[cal.points.indexOf(rp as (typeof cal.points)[number])].id;
				frontIds = cal.front.map(idOf);
				const onFront = new Set(frontIds);
				if (cal.knee) {
					kneeId = idOf(cal.knee.point);
					kneeMethod = cal.knee.method;
				}
				if (sweep.rule_max_energy_Wh !== null) {
					const pick = fastestWithin(cal.front, sweep.rule_max_energy_Wh);
					ruleId = pick ? idOf(pick) : null;
				}
				noneBeats = cal.noStrategyBeatsBaseline;
				if (noneBeats) notes.push('No strategy charges faster than the pack’s own thermal policy in this scenario; keep the default policy.');
				cal.points.forEach((rp, i) =>
					pointUpdates.push({
						id: strategies[i].id,
						time_saved_s: Number.isFinite(rp.timeSaved_s) ? rp.timeSaved_s : null,
						energy_Wh: rp.energy_Wh,
						energy_pre_arrival_Wh: rp.energyPreArrival_Wh,
						energy_during_charge_Wh: rp.energyDuringCharge_Wh,
						on_front: onFront.has(strategies[i].id)
					})
				);
			}
			needsSeries = true; // the baseline's series is always kept, front points' when there are any
			scenarioRows.push({
				sweep_id: sweepId,
				scenario_index: scenario.index,
				scenario_key: scenario.scenarioKey,
				axes: JSON.stringify(axes),
				baseline_point_id: baseline.id,
				baseline_time_to_target_s: baselineTime,
				baseline_reached_target: baseline.reached_target,
				front_point_ids: JSON.stringify(frontIds),
				knee_point_id: kneeId,
				knee_method: kneeMethod,
				rule_point_id: ruleId,
				no_strategy_beats_baseline: noneBeats,
				series_status: 'pending',
				note: notes.length ? notes.join(' ') : null
			});
		}

		await sequelize.transaction(async (transaction) => {
			await SweepScenario.destroy({ where: { sweep_id: sweepId }, transaction });
			await SweepScenario.bulkCreate(scenarioRows, { transaction });
			for (const u of pointUpdates) {
				const { id, ...values } = u;
				await SweepPoint.update(values, { where: { id }, transaction });
			}
			await Sweep.update(
				needsSeries ? { status: 'finalizing' } : { status: 'done', finished_at: new Date() },
				{ where: { id: sweepId }, transaction }
			);
		});
		return 'finalized';
	}).then(async (outcome) => {
		if (outcome === 'finalized') {
			const queue = activeQueue();
			const sweep = await Sweep.findByPk(sweepId);
			if (queue && sweep) {
				await removeChunkJobs(sweep, queue);
				await enqueuePendingSeries(sweep, queue);
			}
		}
		return outcome;
	});
}

/** Points whose time series a finished sweep keeps: the baseline and the front, per scenario. */
async function seriesPointsOf(sweepId: number, scenarioIndex: number, t?: Transaction): Promise<SweepPoint[]> {
	return SweepPoint.findAll({
		where: { sweep_id: sweepId, scenario_index: scenarioIndex, [Op.or]: [{ strategy_index: null }, { on_front: true }] },
		order: [['strategy_index', 'ASC']],
		transaction: t
	});
}

export async function seriesJobData(sweep: Sweep, scenarioIndex: number): Promise<SeriesJobData> {
	const plan = planFor(sweep);
	const pts = await seriesPointsOf(sweep.id, scenarioIndex);
	const have = new Set((await SweepSeries.findAll({ where: { sweep_id: sweep.id, point_id: pts.map((p) => p.id) }, attributes: ['point_id'] })).map((r) => r.point_id));
	return {
		sweepId: sweep.id,
		queueToken: sweep.queue_token,
		scenarioIndex,
		inputs: scenarioInputsFor(plan.inputs, plan.scenarios[scenarioIndex]),
		tasks: pts
			.filter((p) => !have.has(p.id))
			.map((p) => ({ pointId: p.id, strategyIndex: p.strategy_index, strategy: p.strategy_index === null ? null : strategyInput(plan.definition, p.strategy_index) })),
		seriesInterval_s: STORED_SERIES_INTERVAL_S
	};
}

async function enqueuePendingSeries(sweep: Sweep, queue: SweepQueue): Promise<number> {
	const pending = await SweepScenario.findAll({ where: { sweep_id: sweep.id, series_status: 'pending' } });
	let added = 0;
	for (const sc of pending) {
		const jobId = seriesJobId(sweep.id, sweep.queue_token, sc.scenario_index);
		const job = await queue.getJob(jobId);
		const state = await queue.state(job);
		if (state === 'completed') await collectJob(queue, jobId);
		else if (state === 'failed' && job && job.attemptsMade >= (job.opts.attempts ?? JOB_ATTEMPTS)) await handleJobFailed(queue, jobId, job.failedReason);
		else if (state === 'unknown') {
			const data = await seriesJobData(sweep, sc.scenario_index);
			await queue.addSeries(data);
			added++;
		}
	}
	return added;
}

/** Store front/baseline time series (idempotent: a point's series is inserted once). */
export function persistSeriesResult(result: SeriesJobResult, queueToken: string): Promise<PersistOutcome> {
	return serialized(async () => {
		const sweep = await Sweep.findByPk(result.sweepId);
		if (!sweep || sweep.queue_token !== queueToken || result.cancelled) return 'discarded';
		if (sweep.status !== 'finalizing') return 'duplicate';
		const sc = await SweepScenario.findOne({ where: { sweep_id: sweep.id, scenario_index: result.scenarioIndex } });
		if (!sc) return 'discarded';
		if (sc.series_status !== 'pending') return 'duplicate';
		const wanted = new Set((await seriesPointsOf(sweep.id, result.scenarioIndex)).map((p) => p.id));
		const rows = result.series
			.filter((s) => wanted.has(s.pointId))
			.map((s) => ({
				sweep_id: sweep.id,
				point_id: s.pointId,
				encoding: 'json+gzip',
				series_interval_s: STORED_SERIES_INTERVAL_S,
				data: Buffer.from(s.gzipBase64, 'base64')
			}));
		await sequelize.transaction(async (transaction) => {
			await SweepSeries.bulkCreate(rows, { transaction, ignoreDuplicates: true });
			await SweepScenario.update({ series_status: 'stored' }, { where: { id: sc.id }, transaction });
			await completeIfSeriesDone(sweep.id, transaction);
		});
		return 'stored';
	});
}

async function completeIfSeriesDone(sweepId: number, transaction: Transaction): Promise<void> {
	const pending = await SweepScenario.count({ where: { sweep_id: sweepId, series_status: 'pending' }, transaction });
	if (pending === 0) {
		const [n] = await Sweep.update({ status: 'done', finished_at: new Date() }, { where: { id: sweepId, status: 'finalizing' }, transaction });
		if (n > 0) transaction.afterCommit(() => digestAfter(sweepId));
	}
}

const pendingDigests = new Set<Promise<void>>();

/** Mail digest (src/lib/server/mail), written after the status change; a mail problem never fails the sweep. */
function digestAfter(sweepId: number): void {
	const later = (e: unknown) => log(`digest of sweep ${sweepId} not written now (${(e as Error)?.message}); the mail dispatcher retries`);
	try {
		const p = notifySweepFinished(sweepId).catch(later);
		pendingDigests.add(p);
		void p.finally(() => pendingDigests.delete(p));
	} catch (e) {
		later(e);
	}
}

/** Resolves when digests started so far are written; a short-lived process awaits it before closing the database. */
export async function settleDigests(): Promise<void> {
	while (pendingDigests.size) await Promise.all([...pendingDigests]);
}

// ---------------------------------------------------------------------------------------------
// Cancel and fail

const ACTIVE = new Set<SweepStatus>(ACTIVE_SWEEP_STATUSES);

/**
 * Engineer's cancel. Returns false if the sweep had already ended. Answers as soon as the sweep is
 * marked cancelled in the database (results that arrive later are discarded); telling workers and
 * removing the queued chunks happens in the background, however many chunks there are.
 */
export async function cancelSweep(sweepId: number): Promise<boolean> {
	const changed = await serialized(async () => {
		const [n] = await Sweep.update(
			{ status: 'cancelled', finished_at: new Date() },
			{ where: { id: sweepId, status: { [Op.in]: ACTIVE_SWEEP_STATUSES } } }
		);
		return n > 0;
	});
	if (changed) inBackground(withdrawJobs(sweepId));
	return changed;
}

const background = new Set<Promise<void>>();

function inBackground(p: Promise<void>): void {
	const tracked = p.catch((e) => log(`background work failed: ${(e as Error)?.message}`));
	background.add(tracked);
	void tracked.finally(() => background.delete(tracked));
}

/** Resolves when background withdrawals started so far are done (tests, shutdown). */
export async function settleWithdrawals(): Promise<void> {
	while (background.size) await Promise.all([...background]);
}

/** Mark the sweep failed with a reason the engineer can act on, and withdraw its queued jobs. */
export async function failSweep(sweepId: number, reason: string): Promise<boolean> {
	const changed = await serialized(async () => {
		const [n] = await Sweep.update(
			{ status: 'failed', failure_reason: reason.slice(0, 4000), finished_at: new Date() },
			{ where: { id: sweepId, status: { [Op.in]: ['queued', 'running'] } } }
		);
		return n > 0;
	});
	if (changed) {
		log(`sweep ${sweepId} failed: ${reason}`);
		digestAfter(sweepId);
		await withdrawJobs(sweepId);
	}
	return changed;
}

async function withdrawJobs(sweepId: number): Promise<void> {
	const queue = activeQueue();
	const sweep = await Sweep.findByPk(sweepId);
	if (!queue || !sweep) return;
	try {
		await queue.markCancelled(sweep.id, sweep.queue_token);
		await removeChunkJobs(sweep, queue);
		for (const s of planFor(sweep).scenarios) await queue.removeJob(seriesJobId(sweep.id, sweep.queue_token, s.index));
	} catch (e) {
		log(`could not withdraw the jobs of sweep ${sweepId} (${(e as Error).message}); workers will discard them`);
	}
}

/** Remove chunk jobs that are not running (waiting, prioritized, delayed, completed, failed), 100 at a time. */
async function removeChunkJobs(sweep: Sweep, queue: SweepQueue): Promise<void> {
	for (let start = 0; start < sweep.chunk_count; start += 100) {
		const ids: string[] = [];
		for (let i = start; i < Math.min(start + 100, sweep.chunk_count); i++) ids.push(chunkJobId(sweep.id, sweep.queue_token, i));
		await Promise.all(ids.map((id) => queue.removeJob(id).then(() => clearProgress(id))));
	}
}

// ---------------------------------------------------------------------------------------------
// Queue events and reconciliation

/** Store the result of a completed job and remove the job. Safe to call twice. */
export async function collectJob(queue: SweepQueue, jobId: string): Promise<PersistOutcome | 'gone'> {
	const job = await queue.getJob(jobId);
	if (!job) return 'gone';
	if ((await queue.state(job)) !== 'completed') return 'gone';
	const token = (job.data as { queueToken: string }).queueToken;
	let outcome: PersistOutcome;
	try {
		if (job.name === JOB_SWEEP_CHUNK) outcome = await persistChunkResult(job.returnvalue as ChunkJobResult, token);
		else if (job.name === JOB_FRONT_SERIES) outcome = await persistSeriesResult(job.returnvalue as SeriesJobResult, token);
		else outcome = 'discarded';
	} catch (e) {
		// A result that cannot be stored is a failure of its sweep, not of the web process.
		const sweepId = (job.data as { sweepId: number }).sweepId;
		await failSweep(sweepId, `A result could not be stored: ${(e as Error).message}`);
		outcome = 'discarded';
	}
	clearProgress(jobId);
	await queue.removeJob(jobId);
	if (outcome === 'stored' && job.name === JOB_SWEEP_CHUNK) {
		const sweepId = (job.data as ChunkJobData).sweepId;
		const sweep = await Sweep.findByPk(sweepId, { attributes: ['id', 'chunks_done', 'chunk_count'] });
		if (sweep && sweep.chunks_done >= sweep.chunk_count) await finalizeOrFail(sweepId);
	}
	return outcome;
}

/**
 * Finalise; if that throws (a bug or corrupt data, not a passing condition), fail the sweep with
 * the reason instead of retrying it on every reconciliation forever.
 */
async function finalizeOrFail(sweepId: number): Promise<void> {
	try {
		await finalizeSweep(sweepId);
	} catch (e) {
		await failSweep(sweepId, `All simulations finished, but the results could not be evaluated: ${(e as Error).message}`);
	}
}

/** A job failed: if it has no attempts left, the sweep fails with its reason (chunk) or loses its stored series (series). */
export async function handleJobFailed(queue: SweepQueue, jobId: string, reason?: string): Promise<void> {
	const job = await queue.getJob(jobId);
	if (!job || (await queue.state(job)) !== 'failed') return;
	if (job.attemptsMade < (job.opts.attempts ?? 1)) return;
	clearProgress(jobId);
	const why = reason ?? job.failedReason ?? 'unknown reason';
	if (job.name === JOB_SWEEP_CHUNK) {
		const d = job.data as ChunkJobData;
		const sweep = await Sweep.findByPk(d.sweepId);
		if (!sweep || sweep.queue_token !== d.queueToken) return void (await queue.removeJob(jobId));
		const first = d.tasks[0];
		await failSweep(
			d.sweepId,
			`Chunk ${d.chunkIndex + 1} of ${sweep.chunk_count} (${d.tasks.length} simulations from scenario ${first?.scenarioIndex ?? '?'}) failed after ${job.attemptsMade} attempts: ${why}`
		);
	} else if (job.name === JOB_FRONT_SERIES) {
		const d = job.data as SeriesJobData;
		log(`time series of sweep ${d.sweepId} scenario ${d.scenarioIndex} could not be recorded (${why}); they will be recomputed when opened`);
		await serialized(async () => {
			const sc = await SweepScenario.findOne({ where: { sweep_id: d.sweepId, scenario_index: d.scenarioIndex } });
			if (!sc || sc.series_status !== 'pending') return;
			await sequelize.transaction(async (transaction) => {
				await SweepScenario.update(
					{ series_status: 'failed', note: [sc.note, `Time series could not be recorded (${why}); they are recomputed when opened.`].filter(Boolean).join(' ') },
					{ where: { id: sc.id }, transaction }
				);
				await completeIfSeriesDone(d.sweepId, transaction);
			});
		});
		await queue.removeJob(jobId);
	}
}

export interface ReconcileReport {
	sweeps: number;
	requeued: number;
	collected: number;
}

/**
 * Bring the queue in line with the database. For every sweep the database shows as queued,
 * running or finalizing: store results of jobs that completed while nobody was listening,
 * fail sweeps whose chunk failed for good, finalise sweeps whose chunks are all stored, and
 * re-enqueue jobs the queue no longer holds (e.g. Redis lost its data). Runs at start-up and
 * periodically as a safety net for missed events.
 */
export async function reconcileSweeps(queue: SweepQueue): Promise<ReconcileReport> {
	const report: ReconcileReport = { sweeps: 0, requeued: 0, collected: 0 };
	const sweeps = await Sweep.findAll({ where: { status: { [Op.in]: ACTIVE_SWEEP_STATUSES } }, order: [['id', 'ASC']] });
	for (const sweep of sweeps) {
		report.sweeps++;
		if (sweep.status === 'finalizing') {
			report.requeued += await enqueuePendingSeries(sweep, queue);
			await serialized(() => sequelize.transaction((t) => completeIfSeriesDone(sweep.id, t)));
			continue;
		}
		const stored = new Set((await SweepChunk.findAll({ where: { sweep_id: sweep.id }, attributes: ['chunk_index'] })).map((c) => c.chunk_index));
		for (let i = 0; i < sweep.chunk_count; i++) {
			if (stored.has(i)) continue;
			const jobId = chunkJobId(sweep.id, sweep.queue_token, i);
			const job = await queue.getJob(jobId);
			const state = await queue.state(job);
			if (state === 'completed') {
				if ((await collectJob(queue, jobId)) === 'stored') report.collected++;
			} else if (state === 'failed') {
				if (job && job.attemptsMade >= (job.opts.attempts ?? 1)) {
					await handleJobFailed(queue, jobId);
					break;
				}
			} else if (state === 'unknown') {
				// Re-check under the write lock: the chunk may have been stored (and its job removed)
				// since `stored` was read, and adding it again would compute it twice.
				const added = await serialized(async () => {
					if (await SweepChunk.count({ where: { sweep_id: sweep.id, chunk_index: i } })) return false;
					const current = await Sweep.findByPk(sweep.id, { attributes: ['status'] });
					if (!current || (current.status !== 'queued' && current.status !== 'running')) return false;
					await queue.addChunk(chunkJobData(sweep, i), chunkPriority(await programBacklogChunks(sweep.program_id, sweep.id), i));
					return true;
				});
				if (added) report.requeued++;
			}
		}
		const fresh = await Sweep.findByPk(sweep.id, { attributes: ['id', 'status', 'chunks_done', 'chunk_count'] });
		if (fresh && (fresh.status === 'queued' || fresh.status === 'running') && fresh.chunks_done >= fresh.chunk_count) await finalizeOrFail(sweep.id);
	}
	return report;
}

/** Decompress a stored series. */
export function decodeSeries(row: SweepSeries): unknown {
	if (row.encoding !== 'json+gzip') throw new Error(`Unknown series encoding “${row.encoding}”.`);
	return JSON.parse(gunzipSync(row.data).toString('utf8'));
}
