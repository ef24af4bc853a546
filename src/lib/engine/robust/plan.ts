/**
 * Work plan of a robust study for a queue: every (scenario, design row, baseline or strategy)
 * simulation exactly once, in a stable order, split into chunks of at most `chunkSize`.
 *
 * Order: scenarios → design rows → baseline, then strategies (first outermost). A design row's
 * runs of one scenario share one applied cell and scenario (one input check, see apply.ts), and the
 * baseline of a row comes before its strategies, as in a nominal sweep.
 */
export interface RobustTask {
	scenarioIndex: number;
	/** Design row (sample) index. */
	rowIndex: number;
	/** null = the baseline of this scenario and row. */
	strategyIndex: number | null;
}

export interface RobustChunk {
	chunkIndex: number;
	tasks: RobustTask[];
}

export function robustTaskCount(scenarioCount: number, strategyCount: number, rowCount: number): number {
	return scenarioCount * rowCount * (strategyCount + 1);
}

/** The task at a flat position of the plan (inverse of the order above). */
export function robustTaskAt(position: number, strategyCount: number, rowCount: number): RobustTask {
	const perRow = strategyCount + 1;
	const perScenario = perRow * rowCount;
	const scenarioIndex = Math.floor(position / perScenario);
	const inScenario = position - scenarioIndex * perScenario;
	const rowIndex = Math.floor(inScenario / perRow);
	const k = inScenario - rowIndex * perRow;
	return { scenarioIndex, rowIndex, strategyIndex: k === 0 ? null : k - 1 };
}

export function robustChunks(scenarioCount: number, strategyCount: number, rowCount: number, chunkSize: number): RobustChunk[] {
	for (const [name, v, min] of [
		['scenario count', scenarioCount, 0],
		['strategy count', strategyCount, 0],
		['row count', rowCount, 0],
		['chunk size', chunkSize, 1]
	] as const) {
		if (!Number.isInteger(v) || v < min) throw new RangeError(`The robust plan needs a whole ${name} ≥ ${min} (got ${v}).`);
	}
	const total = robustTaskCount(scenarioCount, strategyCount, rowCount);
	const chunks: RobustChunk[] = [];
	for (let start = 0; start < total; start += chunkSize) {
		const tasks: RobustTask[] = [];
		for (let p = start; p < Math.min(total, start + chunkSize); p++) tasks.push(robustTaskAt(p, strategyCount, rowCount));
		chunks.push({ chunkIndex: chunks.length, tasks });
	}
	return chunks;
}

/**
 * Seconds a study will take on `threads` threads at `perSimulation_s` each (perfect sharing, our
 * simple model for the estimate shown before queueing; no source).
 */
export function robustRunTimeEstimate_s(simulations: number, perSimulation_s: number, threads: number): number {
	if (!(simulations >= 0) || !(perSimulation_s >= 0) || !(threads >= 1)) {
		throw new RangeError('The run-time estimate needs simulations ≥ 0, a cost per simulation ≥ 0 and at least one thread.');
	}
	return (simulations * perSimulation_s) / Math.floor(threads);
}
