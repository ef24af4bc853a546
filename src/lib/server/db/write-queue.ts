/**
 * The web process's one write queue. SQLite has a single writer; within this process every write
 * path (sweep results, mail, digests) runs through `serialized`, one after another in call order,
 * so a check and the write it guards never interleave with another write, and no two write
 * transactions of this process wait on each other's lock.
 *
 * A function run by `serialized` must not itself wait for another `serialized` call: that call is
 * queued behind it and would never start.
 */
let chain: Promise<unknown> = Promise.resolve();

/** Run `fn` after every write queued before it (and before any queued after it). */
export function serialized<T>(fn: () => Promise<T>): Promise<T> {
	const run = chain.then(fn, fn);
	chain = run.catch(() => {});
	return run;
}
