import { describe, expect, it } from 'vitest';
import { SphericalParticle } from '../../src/lib/engine/diffusion';

/**
 * Sphere with constant surface flux j into it, initially uniform at c0:
 *   θ(τ) = (c_surf − c0)·D/(j·R) = 3τ + 1/5 − 2·Σ exp(−λn² τ)/λn²,  τ = D t/R²,
 * λn the positive roots of tan λ = λ (Carslaw & Jaeger, Conduction of Heat in
 * Solids, 2nd ed., §9.3, sphere with constant flux; Crank, The Mathematics of
 * Diffusion, §6.3). The mean rises exactly as 3τ (mass balance).
 */

/** Positive roots of tan λ = λ: one in each (nπ, nπ + π/2), found by bisection on sin λ − λ cos λ. */
function tanRoots(count: number): number[] {
	const roots: number[] = [];
	for (let n = 1; roots.length < count; n++) {
		let lo = n * Math.PI + 1e-12;
		let hi = n * Math.PI + Math.PI / 2 - 1e-12;
		const f = (x: number) => Math.sin(x) - x * Math.cos(x);
		for (let k = 0; k < 200; k++) {
			const mid = 0.5 * (lo + hi);
			if (Math.sign(f(mid)) === Math.sign(f(lo))) lo = mid;
			else hi = mid;
		}
		roots.push(0.5 * (lo + hi));
	}
	return roots;
}

const ROOTS = tanRoots(4000);
function thetaSeries(tau: number): number {
	let s = 0;
	for (const l of ROOTS) s += Math.exp(-l * l * tau) / (l * l);
	return 3 * tau + 0.2 - 2 * s;
}

/** Run the engine's particle (default 20 shells) in dimensionless units R = D = j = 1. */
function runParticle(taus: number[], dtau: number, shells = 20) {
	const p = new SphericalParticle(1, shells);
	p.grid.fill(0);
	const out = new Map<number, { surface: number; mean: number }>();
	let tau = 0;
	const last = Math.max(...taus);
	while (tau < last - 1e-12) {
		p.prepare(dtau, 1);
		p.commit(1);
		tau += dtau;
		for (const t of taus) if (Math.abs(tau - t) < dtau / 2) out.set(t, { surface: p.surfaceNow(1), mean: p.mean() });
	}
	return out;
}

describe('particle diffusion (finite volumes on equal-volume shells)', () => {
	it('should reproduce the published reference values of θ with the series itself', () => {
		// Carslaw & Jaeger, Conduction of Heat in Solids / Crank, The Mathematics of Diffusion (values from memory): θ(0.01) = 0.123643, θ(0.1) = 0.486762, θ(0.5) = 1.699996, θ(1) = 3.2.
		expect(thetaSeries(0.01)).toBeCloseTo(0.123643, 5);
		expect(thetaSeries(0.1)).toBeCloseTo(0.486762, 5);
		expect(thetaSeries(0.5)).toBeCloseTo(1.699996, 5);
		expect(thetaSeries(1)).toBeCloseTo(3.2, 5);
		// Short-time form θ ≈ 2√(τ/π) + τ (Carslaw & Jaeger) at τ = 1e-4, where the series converges slowly.
		expect(Math.abs(thetaSeries(1e-4) / (2 * Math.sqrt(1e-4 / Math.PI) + 1e-4) - 1)).toBeLessThan(0.01);
	});

	it('should match the analytic surface concentration within 0.5 % at τ = 0.01, 0.1, 0.5 and 1', () => {
		// Source: Carslaw & Jaeger series above. Default resolution: 20 shells; time step Δτ = 1e-4 so
		// the spatial discretisation is what is tested (backward Euler's own error is O(Δτ)).
		const taus = [0.01, 0.1, 0.5, 1];
		const res = runParticle(taus, 1e-4);
		for (const tau of taus) {
			const theta = res.get(tau)!.surface;
			expect(Math.abs(theta / thetaSeries(tau) - 1), `τ = ${tau}`).toBeLessThan(0.005);
		}
	});

	it('should raise the mean concentration exactly as 3τ', () => {
		// Mass balance of a sphere: d(mean)/dt = 3 j / R, so mean·D/(jR) = 3τ (Crank §6.3); finite volumes conserve exactly.
		const res = runParticle([0.01, 0.1, 0.5, 1], 1e-3);
		for (const [tau, v] of res) expect(v.mean).toBeCloseTo(3 * tau, 10);
	});

	it('should fail the 0.5 % check with a coarse grid (the check can fail)', () => {
		// Common practice, no source: 4 shells cannot resolve the τ = 0.01 boundary layer (depth ≈ 2√τ = 0.2 R).
		const theta = runParticle([0.01], 1e-4, 4).get(0.01)!.surface;
		expect(Math.abs(theta / thetaSeries(0.01) - 1)).toBeGreaterThan(0.005);
	});
});
