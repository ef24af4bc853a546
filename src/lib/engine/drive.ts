/**
 * Drive power profiles: pack traction power (W, > 0 = drawn from the pack,
 * < 0 = regenerative braking) as a function of time since departure.
 *
 * Built-in profiles are invented repeating duty cycles of 60-s segments
 * (relative power, scaled so the cycle's mean equals the requested average
 * power). They are demo shapes, not standardised test cycles.
 */
import type { DriveProfile } from './schemas';

const SEGMENT_s = 60;
const SHAPES: Record<'urban' | 'highway' | 'mixed', number[]> = {
	urban: [0.4, 1.7, 0.2, 1.9, -0.3, 0.9, 1.4, 0.3, 1.8, 0.6, -0.2, 1.3],
	highway: [1.0, 1.15, 0.95, 1.05, 0.85, 1.1, 1.2, 0.9, 1.0, 0.8],
	mixed: [0.5, 1.5, 1.1, 1.3, 0.2, 1.6, 1.0, -0.2, 1.2, 0.9, 1.4, 0.6]
};

/** Returns P(t) for t in seconds since departure. */
export function drivePowerFunction(profile: DriveProfile): (time_s: number) => number {
	switch (profile.kind) {
		case 'constant': {
			const p = profile.power_W;
			return () => p;
		}
		case 'builtin': {
			const shape = SHAPES[profile.name];
			const mean = shape.reduce((s, x) => s + x, 0) / shape.length;
			const scale = profile.averagePower_W / mean;
			return (t) => shape[Math.floor(Math.max(0, t) / SEGMENT_s) % shape.length] * scale;
		}
		case 'table': {
			const { time_s, power_W } = profile;
			const n = time_s.length;
			return (t) => {
				if (t <= time_s[0]) return power_W[0];
				if (t >= time_s[n - 1]) return power_W[n - 1];
				let lo = 0;
				let hi = n - 1;
				while (hi - lo > 1) {
					const mid = (lo + hi) >> 1;
					if (time_s[mid] <= t) lo = mid;
					else hi = mid;
				}
				const f = (t - time_s[lo]) / (time_s[hi] - time_s[lo]);
				return power_W[lo] + f * (power_W[hi] - power_W[lo]);
			};
		}
	}
}

/** Traction energy of the whole drive, J, sampled at mid-steps of dt_s (as the simulation does). */
export function driveEnergy_J(profile: DriveProfile, duration_s: number, dt_s: number): number {
	const p = drivePowerFunction(profile);
	let e = 0;
	for (let t = 0; t < duration_s - 1e-9; t += dt_s) {
		const h = Math.min(dt_s, duration_s - t);
		e += p(t + h / 2) * h;
	}
	return e;
}
