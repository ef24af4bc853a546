/**
 * The web process's side of the queue: adds chunk and series jobs (deterministic ids, so adding
 * twice is a no-op), looks jobs up for reconciliation, removes jobs once their results are stored,
 * and listens to queue events for progress, completions and failures.
 */
import { Queue, QueueEvents, type Job, type JobsOptions } from 'bullmq';
import type { Redis } from 'ioredis';
import { createRedisClient, type RedisTarget } from './connection';
import type { ChunkJobData, JobProgress, SeriesJobData, YearChunkJobData } from './jobs';
import {
	JOB_ATTEMPTS,
	JOB_BACKOFF_DELAY_MS,
	JOB_FRONT_SERIES,
	JOB_SWEEP_CHUNK,
	JOB_YEAR_CHUNK,
	QUEUE_PREFIX,
	SWEEP_QUEUE,
	cancelledKey,
	chunkJobId,
	seriesJobId,
	yearCancelledKey,
	yearChunkJobId
} from './names';

const JOB_OPTIONS: JobsOptions = {
	attempts: JOB_ATTEMPTS,
	backoff: { type: 'exponential', delay: JOB_BACKOFF_DELAY_MS },
	// Kept until the web process has stored the result (then it removes the job itself), so a
	// result computed while the web process was down is still there when it comes back.
	removeOnComplete: false,
	removeOnFail: false
};

export type JobStateName = 'completed' | 'failed' | 'active' | 'waiting' | 'delayed' | 'prioritized' | 'waiting-children' | 'unknown';

export interface QueueEventHandlers {
	onCompleted?: (jobId: string) => void;
	onFailed?: (jobId: string, reason: string) => void;
	onProgress?: (jobId: string, progress: JobProgress) => void;
}

export class SweepQueue {
	readonly queue: Queue;
	private events: QueueEvents | null = null;
	private eventsClient: Redis | null = null;
	private readonly client: Redis;
	private readonly target: RedisTarget;

	constructor(target: RedisTarget) {
		this.target = target;
		this.client = createRedisClient(target);
		this.client.on('error', (e) => console.error(`[paretherm] Redis (queue) error: ${e.message}`));
		this.queue = new Queue(SWEEP_QUEUE, { connection: this.client, prefix: QUEUE_PREFIX });
		this.queue.on('error', (e) => console.error(`[paretherm] queue error: ${e.message}`));
	}

	async ready(): Promise<void> {
		await this.queue.waitUntilReady();
	}

	/** Subscribe to completions, failures and progress (a separate blocking connection). */
	async listen(handlers: QueueEventHandlers): Promise<void> {
		// A client of its own (QueueEvents blocks on XREAD); BullMQ leaves passed-in clients open,
		// so close() disconnects it.
		this.eventsClient = createRedisClient(this.target);
		this.eventsClient.on('error', (e) => console.error(`[paretherm] Redis (queue events) error: ${e.message}`));
		const events = new QueueEvents(SWEEP_QUEUE, { connection: this.eventsClient, prefix: QUEUE_PREFIX });
		events.on('error', (e) => console.error(`[paretherm] queue events error: ${(e as Error).message}`));
		if (handlers.onCompleted) events.on('completed', ({ jobId }) => handlers.onCompleted!(jobId));
		if (handlers.onFailed) events.on('failed', ({ jobId, failedReason }) => handlers.onFailed!(jobId, failedReason));
		if (handlers.onProgress)
			events.on('progress', ({ jobId, data }) => {
				if (data && typeof data === 'object' && 'done' in data) handlers.onProgress!(jobId, data as unknown as JobProgress);
			});
		await events.waitUntilReady();
		this.events = events;
	}

	/** `priority`: 1 is taken first (BullMQ orders by priority, then by insertion); omitted = before all prioritised jobs. */
	async addChunk(data: ChunkJobData, priority?: number): Promise<string> {
		const jobId = chunkJobId(data.sweepId, data.queueToken, data.chunkIndex);
		await this.queue.add(JOB_SWEEP_CHUNK, data, { ...JOB_OPTIONS, jobId, ...(priority ? { priority } : {}) });
		return jobId;
	}

	/** Many chunks in few round trips (batches of 500); ids already queued are left as they are. */
	async addChunks(chunks: { data: ChunkJobData; priority?: number }[]): Promise<void> {
		for (let i = 0; i < chunks.length; i += 500)
			await this.queue.addBulk(
				chunks.slice(i, i + 500).map(({ data, priority }) => ({
					name: JOB_SWEEP_CHUNK,
					data,
					opts: { ...JOB_OPTIONS, jobId: chunkJobId(data.sweepId, data.queueToken, data.chunkIndex), ...(priority ? { priority } : {}) }
				}))
			);
	}

	/** Chunks of an exact year-of-use run (ids already queued are left as they are). */
	async addYearChunks(chunks: YearChunkJobData[]): Promise<void> {
		for (let i = 0; i < chunks.length; i += 500)
			await this.queue.addBulk(
				chunks.slice(i, i + 500).map((data) => ({ name: JOB_YEAR_CHUNK, data, opts: { ...JOB_OPTIONS, jobId: yearChunkJobId(data.runId, data.queueToken, data.chunkIndex) } }))
			);
	}

	/** Tells workers to skip an exact run's remaining chunks. */
	async markYearCancelled(runId: number, queueToken: string): Promise<void> {
		await this.client.set(yearCancelledKey(runId, queueToken), '1', 'EX', 7 * 24 * 3600);
	}

	async addSeries(data: SeriesJobData): Promise<string> {
		const jobId = seriesJobId(data.sweepId, data.queueToken, data.scenarioIndex);
		await this.queue.add(JOB_FRONT_SERIES, data, { ...JOB_OPTIONS, jobId });
		return jobId;
	}

	async getJob(jobId: string): Promise<Job | undefined> {
		return this.queue.getJob(jobId);
	}

	async state(job: Job | undefined): Promise<JobStateName> {
		if (!job) return 'unknown';
		return (await job.getState()) as JobStateName;
	}

	/**
	 * Remove a job that is not running. A running job is locked and cannot be removed; the worker
	 * finishes it and the result is discarded. Returns true if the job is gone.
	 */
	async removeJob(jobId: string): Promise<boolean> {
		try {
			const removed = await this.queue.remove(jobId);
			if (removed === 1) return true;
			return (await this.queue.getJob(jobId)) === undefined;
		} catch {
			return false;
		}
	}

	/** Tells workers to skip the sweep's remaining chunks (checked before each chunk starts). */
	async markCancelled(sweepId: number, queueToken: string): Promise<void> {
		await this.client.set(cancelledKey(sweepId, queueToken), '1', 'EX', 7 * 24 * 3600);
	}

	/** Redis round trip, for health checks. */
	async ping(): Promise<boolean> {
		try {
			return (await this.client.ping()) === 'PONG';
		} catch {
			return false;
		}
	}

	async close(): Promise<void> {
		await this.events?.close();
		this.eventsClient?.disconnect();
		await this.queue.close();
		this.client.disconnect();
	}
}
