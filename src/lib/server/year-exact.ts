/**
 * Year of use, exact mode, stored and queued: an engineer starts an exact run of an evaluation;
 * every distinct sampled charge (baseline and each policy's strategy) is simulated by the sweep
 * workers as chunk jobs on the sweep queue; the web process stores each chunk once and, when all
 * are in, adds up the exact year and the lookup's error (src/lib/year/exact.ts).
 *
 * The same guarantees as sweeps (sweeps/service.ts):
 * - A chunk's result is stored at most once: its receipt row (UNIQUE run_id, chunk_index) and the
 *   run's counters change in one transaction; a second delivery fails on the receipt and rolls back.
 * - Every write runs through the sweeps' `serialized` chain (one SQLite writer, no interleaving).
 * - Jobs are built from the run's stored plan and the sweep's input snapshot, so a restart can
 *   rebuild and re-queue any chunk the queue lost (reconcileYearRuns, at start-up and periodically).
 * - One active or finished run per evaluation; a cancelled or failed one may be started again.
 */
import crypto from 'node:crypto';
import { Op, UniqueConstraintError, literal } from 'sequelize';
import { sequelize } from './db/index';
import { ACTIVE_EXACT_STATUSES, Climate, ChargingPatternRow, Sweep, YearEvaluation, YearExactChunk, YearExactRun } from './db/models/index';
import { JOB_ATTEMPTS, JOB_YEAR_CHUNK, YEAR_JOB_PREFIX, yearChunkJobId } from './queue/names';
import type { SweepQueue } from './queue/producer';
import type { ScenarioInputs, StrategyInput, YearChunkJobData, YearChunkJobResult } from './queue/jobs';
import { activeQueue, clearProgress, inFlightSimulations } from './sweeps/registry';
import { defaultChunkSize, planFor, serialized } from './sweeps/service';
import { scenarioInputsFor } from './sweeps/inputs';
import { climateAmbient_K, sweepNodes, YearError, type EvaluationSettings } from './year';
import { sampleEvents } from '../year/sampler';
import { exactYear, planExact, taskFigures, type ExactPlan, type ExactYear, type TaskFigures } from '../year/exact';
import type { ChargingPattern } from '../year/pattern';
import type { YearResult } from '../year/evaluate';
import type { SimulationSummary } from '../engine/index';

const log = (m: string) => console.log(`[paretherm year] ${m}`);

export function isYearJob(jobId: string): boolean {
	return jobId.startsWith(YEAR_JOB_PREFIX);
}

// ---------------------------------------------------------------------------------------------
// Plans and jobs

const plans = new Map<number, ExactPlan>();
function planOf(run: YearExactRun): ExactPlan {
	let p = plans.get(run.id);
	if (!p) {
		p = JSON.parse(run.plan) as ExactPlan;
		if (plans.size > 200) plans.clear();
		plans.set(run.id, p);
	}
	return p;
}

function chunkRange(run: YearExactRun, chunkIndex: number): [number, number] {
	const from = chunkIndex * run.chunk_size;
	return [from, Math.min(from + run.chunk_size, run.simulation_count)];
}

async function chunkJobData(run: YearExactRun, chunkIndex: number): Promise<YearChunkJobData> {
	const ev = await YearEvaluation.findByPk(run.evaluation_id);
	const sweep = ev ? await Sweep.findByPk(ev.sweep_id) : null;
	if (!ev || !sweep) throw new Error(`Exact run ${run.id}: its evaluation or sweep is gone.`);
	const settings = JSON.parse(ev.settings) as EvaluationSettings;
	const sweepPlan = planFor(sweep);
	const plan = planOf(run);
	const [from, to] = chunkRange(run, chunkIndex);
	const tasks = plan.tasks.slice(from, to);
	const scenarios: Record<string, ScenarioInputs> = {};
	const strategies: Record<string, StrategyInput> = {};
	for (const t of tasks) {
		const k = plan.keys[t.key];
		scenarios[t.key] ??= scenarioInputsFor(sweepPlan.inputs, { cellId: settings.cellId, packId: settings.packId, ambient_K: k.ambient_K, stateOfHealth: plan.stateOfHealth, arrivalSoc: k.arrivalSoc });
		if (t.strategy !== null) strategies[t.strategy] ??= plan.strategies[t.strategy];
	}
	return {
		runId: run.id,
		queueToken: run.queue_token,
		chunkIndex,
		tasks: tasks.map((t) => ({ scenarioIndex: t.key, strategyIndex: t.strategy })),
		scenarios,
		strategies
	};
}

async function enqueueChunks(run: YearExactRun, queue: SweepQueue, indices: number[]): Promise<void> {
	const data: YearChunkJobData[] = [];
	for (const i of indices) data.push(await chunkJobData(run, i));
	await queue.addYearChunks(data);
}

// ---------------------------------------------------------------------------------------------
// Start and cancel

export interface ExactRunView {
	id: number;
	status: YearExactRun['status'];
	simulations: number;
	simulationsDone: number;
	chunks: number;
	chunksDone: number;
	events: number;
	failureReason: string | null;
	createdAt: string;
	finishedAt: string | null;
	result: ExactYear | null;
}

function view(run: YearExactRun): ExactRunView {
	const active = run.status === 'queued' || run.status === 'running';
	const inFlight = active ? inFlightSimulations(`${YEAR_JOB_PREFIX}${run.id}-${run.queue_token}-`) : 0;
	const plan = planOf(run);
	return {
		id: run.id,
		status: run.status,
		simulations: run.simulation_count,
		simulationsDone: Math.min(run.simulation_count, run.simulations_done + inFlight),
		chunks: run.chunk_count,
		chunksDone: run.chunks_done,
		events: plan.keys.reduce((n, k) => n + k.months.reduce((a, b) => a + b, 0), 0),
		failureReason: run.failure_reason,
		createdAt: new Date(run.created_at).toISOString(),
		finishedAt: run.finished_at ? new Date(run.finished_at).toISOString() : null,
		result: run.result ? (JSON.parse(run.result) as ExactYear) : null
	};
}

export async function evaluationInProgram(programId: number, evaluationId: number): Promise<boolean> {
	return (await YearEvaluation.count({ where: { id: evaluationId, program_id: programId } })) > 0;
}

/** The evaluation's latest exact run, or null. */
export async function latestExactRun(evaluationId: number): Promise<ExactRunView | null> {
	const run = await YearExactRun.findOne({ where: { evaluation_id: evaluationId }, order: [['id', 'DESC']] });
	return run ? view(run) : null;
}

/**
 * Plans the exact run of an evaluation and queues its chunks. Refused (YearError, nothing stored)
 * when the evaluation is not in this program (404), when a run is already active or finished
 * (409), or when its inputs are gone.
 */
export async function startExactRun(programId: number, evaluationId: number, userId: string | null, chunkSizeOverride?: number): Promise<YearExactRun> {
	const ev = await YearEvaluation.findOne({ where: { id: evaluationId, program_id: programId } });
	if (!ev) throw new YearError(`No evaluation with id ${evaluationId} in this program.`, 'evaluationId', 404);
	const [climate, patternRow, sweep] = await Promise.all([Climate.findByPk(ev.climate_id), ChargingPatternRow.findByPk(ev.pattern_id), Sweep.findByPk(ev.sweep_id)]);
	if (!climate || !patternRow || !sweep || sweep.status !== 'done')
		throw new YearError('This evaluation’s climate, pattern or finished sweep is no longer available, so it cannot be simulated.', 'evaluationId', 409);
	const settings = JSON.parse(ev.settings) as EvaluationSettings;
	const pattern = JSON.parse(patternRow.data) as ChargingPattern;
	const climate_K = climateAmbient_K(climate);
	const events = sampleEvents(pattern, climate_K.length === 8784);
	const nodes = await sweepNodes(sweep, settings.cellId, settings.packId);
	let plan: ExactPlan;
	try {
		plan = planExact({ events, climate_K, stateOfHealth: settings.stateOfHealth, nodes, fixed: settings.fixed });
	} catch (e) {
		throw new YearError((e as Error).message, 'evaluationId', 409);
	}
	if (plan.tasks.length === 0) throw new YearError('This evaluation has no charges to simulate.', 'evaluationId', 409);
	const chunkSize = chunkSizeOverride ?? defaultChunkSize(plan.tasks.length);
	const run = await serialized(async () => {
		const existing = await YearExactRun.findOne({ where: { evaluation_id: ev.id, status: { [Op.in]: [...ACTIVE_EXACT_STATUSES, 'done'] } }, order: [['id', 'DESC']] });
		if (existing)
			throw new YearError(
				existing.status === 'done'
					? `The exact run of this evaluation has already finished (run ${existing.id}); its figures are shown below.`
					: `An exact run of this evaluation is already ${existing.status} (run ${existing.id}, ${existing.simulations_done} of ${existing.simulation_count} simulations done); wait for it or cancel it first.`,
				'evaluationId',
				409
			);
		return YearExactRun.create({
			evaluation_id: ev.id,
			status: 'queued',
			queue_token: crypto.randomBytes(4).toString('hex'),
			plan: JSON.stringify(plan),
			chunk_size: chunkSize,
			chunk_count: Math.ceil(plan.tasks.length / chunkSize),
			simulation_count: plan.tasks.length,
			result: null,
			failure_reason: null,
			created_by: userId,
			started_at: null,
			finished_at: null
		});
	});
	const queue = activeQueue();
	if (queue) {
		try {
			await enqueueChunks(run, queue, Array.from({ length: run.chunk_count }, (_, i) => i));
		} catch (e) {
			log(`exact run ${run.id} stored but not yet queued (${(e as Error).message}); it will be queued when Redis is reachable`);
		}
	}
	return run;
}

/** Cancels the evaluation's active exact run; false when there is none. */
export async function cancelExactRun(programId: number, evaluationId: number): Promise<boolean> {
	const ev = await YearEvaluation.findOne({ where: { id: evaluationId, program_id: programId }, attributes: ['id'] });
	if (!ev) throw new YearError(`No evaluation with id ${evaluationId} in this program.`, 'evaluationId', 404);
	const run = await serialized(async () => {
		const r = await YearExactRun.findOne({ where: { evaluation_id: ev.id, status: { [Op.in]: ACTIVE_EXACT_STATUSES } } });
		if (!r) return null;
		await YearExactRun.update({ status: 'cancelled', finished_at: new Date() }, { where: { id: r.id } });
		return r;
	});
	if (!run) return false;
	await withdraw(run);
	return true;
}

async function withdraw(run: YearExactRun): Promise<void> {
	const queue = activeQueue();
	if (!queue) return;
	try {
		await queue.markYearCancelled(run.id, run.queue_token);
		for (let i = 0; i < run.chunk_count; i++) {
			const id = yearChunkJobId(run.id, run.queue_token, i);
			await queue.removeJob(id);
			clearProgress(id);
		}
	} catch (e) {
		log(`could not withdraw the jobs of exact run ${run.id} (${(e as Error).message}); workers will discard them`);
	}
}

async function failRun(runId: number, reason: string): Promise<void> {
	const changed = await serialized(async () => {
		const [n] = await YearExactRun.update(
			{ status: 'failed', failure_reason: reason.slice(0, 4000), finished_at: new Date() },
			{ where: { id: runId, status: { [Op.in]: ACTIVE_EXACT_STATUSES } } }
		);
		return n > 0;
	});
	if (changed) {
		log(`exact run ${runId} failed: ${reason}`);
		const run = await YearExactRun.findByPk(runId);
		if (run) await withdraw(run);
	}
}

// ---------------------------------------------------------------------------------------------
// Results

export type YearPersistOutcome = 'stored' | 'duplicate' | 'discarded';

/** Stores one chunk (idempotent: a second delivery is 'duplicate' and changes nothing). */
export function persistYearChunk(result: YearChunkJobResult, queueToken: string): Promise<YearPersistOutcome> {
	return serialized(async () => {
		const run = await YearExactRun.findByPk(result.runId);
		if (!run || run.queue_token !== queueToken) return 'discarded';
		if (run.status !== 'queued' && run.status !== 'running') {
			const stored = await YearExactChunk.count({ where: { run_id: run.id, chunk_index: result.chunkIndex } });
			return stored ? 'duplicate' : 'discarded';
		}
		if (result.cancelled) return 'discarded';
		const plan = planOf(run);
		const [from, to] = chunkRange(run, result.chunkIndex);
		const tasks = plan.tasks.slice(from, to);
		if (from >= to || result.points.length !== tasks.length || result.points.some((p, i) => p.scenarioIndex !== tasks[i].key || p.strategyIndex !== tasks[i].strategy))
			throw new Error(`The result of chunk ${result.chunkIndex} of exact run ${run.id} does not match the chunk's simulations; it was not stored.`);
		const figures = result.points.map((p) => taskFigures(p.summary as SimulationSummary));
		try {
			await sequelize.transaction(async (transaction) => {
				await YearExactChunk.create(
					{ run_id: run.id, chunk_index: result.chunkIndex, figures: JSON.stringify(figures), worker: String(result.worker).slice(0, 200), attempt: result.attempt, elapsed_ms: Math.round(result.elapsed_ms) },
					{ transaction }
				);
				await YearExactRun.update(
					{ simulations_done: literal(`simulations_done + ${figures.length}`), chunks_done: literal('chunks_done + 1'), status: 'running', started_at: run.started_at ?? new Date() },
					{ where: { id: run.id }, transaction }
				);
			});
		} catch (e) {
			if (e instanceof UniqueConstraintError) return 'duplicate';
			throw e;
		}
		return 'stored';
	});
}

/** Once every chunk is stored: the exact year and the lookup's error. Idempotent. */
export function finalizeYearRun(runId: number): Promise<'finalized' | 'not-ready' | 'skipped'> {
	return serialized(async () => {
		const run = await YearExactRun.findByPk(runId);
		if (!run || (run.status !== 'queued' && run.status !== 'running')) return 'skipped';
		const chunks = await YearExactChunk.findAll({ where: { run_id: run.id }, order: [['chunk_index', 'ASC']] });
		if (chunks.length < run.chunk_count) return 'not-ready';
		const figures: TaskFigures[] = chunks.flatMap((c) => JSON.parse(c.figures) as TaskFigures[]);
		const ev = await YearEvaluation.findByPk(run.evaluation_id);
		if (!ev?.result) throw new Error(`Exact run ${run.id}: the evaluation's lookup figures are missing.`);
		const result = exactYear(planOf(run), figures, JSON.parse(ev.result) as YearResult);
		await YearExactRun.update({ status: 'done', result: JSON.stringify(result), finished_at: new Date() }, { where: { id: run.id } });
		log(`exact run ${run.id} of evaluation ${ev.id}: ${result.simulations} simulations for ${result.events} charges; ${result.verdict}`);
		return 'finalized';
	});
}

async function finalizeOrFail(runId: number): Promise<void> {
	try {
		await finalizeYearRun(runId);
	} catch (e) {
		await failRun(runId, `All simulations finished, but the year could not be added up: ${(e as Error).message}`);
	}
}

/** Stores the result of a completed exact-run job and removes the job. Safe to call twice. */
export async function collectYearJob(queue: SweepQueue, jobId: string): Promise<YearPersistOutcome | 'gone'> {
	const job = await queue.getJob(jobId);
	if (!job || (await queue.state(job)) !== 'completed') return 'gone';
	const data = job.data as YearChunkJobData;
	let outcome: YearPersistOutcome;
	try {
		outcome = job.name === JOB_YEAR_CHUNK ? await persistYearChunk(job.returnvalue as YearChunkJobResult, data.queueToken) : 'discarded';
	} catch (e) {
		await failRun(data.runId, `A result could not be stored: ${(e as Error).message}`);
		outcome = 'discarded';
	}
	clearProgress(jobId);
	await queue.removeJob(jobId);
	if (outcome === 'stored') {
		const run = await YearExactRun.findByPk(data.runId, { attributes: ['id', 'chunks_done', 'chunk_count'] });
		if (run && run.chunks_done >= run.chunk_count) await finalizeOrFail(run.id);
	}
	return outcome;
}

/** A chunk failed for good: the run fails with the reason. */
export async function handleYearJobFailed(queue: SweepQueue, jobId: string, reason?: string): Promise<void> {
	const job = await queue.getJob(jobId);
	if (!job || (await queue.state(job)) !== 'failed') return;
	if (job.attemptsMade < (job.opts.attempts ?? 1)) return;
	clearProgress(jobId);
	const d = job.data as YearChunkJobData;
	const run = await YearExactRun.findByPk(d.runId);
	if (!run || run.queue_token !== d.queueToken) return void (await queue.removeJob(jobId));
	await failRun(run.id, `Chunk ${d.chunkIndex + 1} of ${run.chunk_count} (${d.tasks.length} simulations) failed after ${job.attemptsMade} attempts: ${reason ?? job.failedReason ?? 'unknown reason'}`);
}

/**
 * Brings active exact runs in line with the queue: collects results that completed while nobody
 * listened, fails runs whose chunk failed for good, re-queues chunks the queue no longer holds,
 * finalises runs whose chunks are all stored.
 */
export async function reconcileYearRuns(queue: SweepQueue): Promise<{ runs: number; requeued: number; collected: number }> {
	const report = { runs: 0, requeued: 0, collected: 0 };
	const runs = await YearExactRun.findAll({ where: { status: { [Op.in]: ACTIVE_EXACT_STATUSES } }, order: [['id', 'ASC']] });
	for (const run of runs) {
		report.runs++;
		const stored = new Set((await YearExactChunk.findAll({ where: { run_id: run.id }, attributes: ['chunk_index'] })).map((c) => c.chunk_index));
		for (let i = 0; i < run.chunk_count; i++) {
			if (stored.has(i)) continue;
			const jobId = yearChunkJobId(run.id, run.queue_token, i);
			const job = await queue.getJob(jobId);
			const state = await queue.state(job);
			if (state === 'completed') {
				if ((await collectYearJob(queue, jobId)) === 'stored') report.collected++;
			} else if (state === 'failed') {
				if (job && job.attemptsMade >= (job.opts.attempts ?? JOB_ATTEMPTS)) {
					await handleYearJobFailed(queue, jobId);
					break;
				}
			} else if (state === 'unknown') {
				// Re-checked under the write lock: the chunk may have been stored since `stored` was read.
				const added = await serialized(async () => {
					if (await YearExactChunk.count({ where: { run_id: run.id, chunk_index: i } })) return false;
					const current = await YearExactRun.findByPk(run.id, { attributes: ['status'] });
					if (!current || (current.status !== 'queued' && current.status !== 'running')) return false;
					await enqueueChunks(run, queue, [i]);
					return true;
				});
				if (added) report.requeued++;
			}
		}
		const fresh = await YearExactRun.findByPk(run.id, { attributes: ['id', 'status', 'chunks_done', 'chunk_count'] });
		if (fresh && (fresh.status === 'queued' || fresh.status === 'running') && fresh.chunks_done >= fresh.chunk_count) await finalizeOrFail(run.id);
	}
	return report;
}
