import { error } from '@sveltejs/kit';
import { SweepInputError } from './sweeps/request';

/** Page loads turn the sweep service's input errors (unknown id, wrong program) into HTTP errors. */
export async function apiError<T>(fn: () => Promise<T>): Promise<T> {
	try {
		return await fn();
	} catch (e) {
		if (e instanceof SweepInputError) error(e.status, e.message);
		throw e;
	}
}
