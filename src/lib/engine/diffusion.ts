/**
 * Implicit (backward Euler) finite-volume diffusion on a 1-D grid, the
 * numerical core of both the particle (sphere) and electrolyte models.
 *
 *   cap_i (c_i' − c_i)/Δt = Σ_faces G_f (c_nb' − c_i') + u·s_i
 *
 * The scheme is unconditionally stable and exactly conservative: the faces
 * exchange equal and opposite amounts, so Σ cap_i c_i changes by exactly
 * u·Σ s_i·Δt per step (the "mean rises exactly as 3τ" property of the
 * sphere test).
 *
 * Because the update is linear in the forcing u (a particle's surface flux or
 * the cell current), one step is prepared as two solves:
 *   c' = hom + u·resp,  hom = A⁻¹(cap/Δt · c),  resp = A⁻¹ s,
 * after which any trial current costs only a few multiplications. The
 * charging controller evaluates ~5 trial currents per control period, so this
 * is what keeps a full charge in a few milliseconds.
 *
 * The tridiagonal system is solved with the Thomas algorithm written out
 * here rather than through mathjs: it is O(n), allocation-free and runs
 * ~10⁴ times per simulation, where a general sparse/dense solver would cost
 * orders of magnitude more.
 */
export class ImplicitDiffusion {
	readonly n: number;
	/** Concentration (or any conserved density) per cell. */
	readonly c: Float64Array;
	/** Solution of the step for zero forcing. */
	readonly hom: Float64Array;
	/** Change of the solution per unit forcing. */
	readonly resp: Float64Array;
	private readonly cap: Float64Array;
	private readonly g0: Float64Array;
	private readonly source: Float64Array;
	private readonly diag: Float64Array;
	private readonly sup: Float64Array;

	/**
	 * @param cap     capacity of each cell (volume-like), length n
	 * @param g0      face conductances at factor 1, length n−1 (between i and i+1)
	 * @param source  forcing distribution s_i per unit forcing u, length n
	 */
	constructor(cap: Float64Array, g0: Float64Array, source: Float64Array) {
		this.n = cap.length;
		this.cap = cap;
		this.g0 = g0;
		this.source = source;
		this.c = new Float64Array(this.n);
		this.hom = new Float64Array(this.n);
		this.resp = new Float64Array(this.n);
		this.diag = new Float64Array(this.n);
		this.sup = new Float64Array(this.n);
	}

	/** Conductance of face i (between cells i and i+1) at factor 1. */
	faceConductance(i: number): number {
		return this.g0[i];
	}

	/** Total Σ cap_i·c_i (amount of substance in the domain). */
	total(): number {
		let s = 0;
		for (let i = 0; i < this.n; i++) s += this.cap[i] * this.c[i];
		return s;
	}

	/** Factor the step matrix for step dt_s and conductance factor, and solve for hom and resp. */
	prepare(dt_s: number, factor: number): void {
		this.solve(dt_s, this.g0, factor);
	}

	/** As prepare(), with face conductances given per face for this step (concentration-dependent transport). */
	prepareFaces(dt_s: number, faceConductance: Float64Array): void {
		this.solve(dt_s, faceConductance, 1);
	}

	private solve(dt_s: number, g0: Float64Array, factor: number): void {
		const n = this.n;
		const { cap, diag, sup, hom, resp, c, source } = this;
		const invDt = 1 / dt_s;
		// Forward sweep of the Thomas algorithm; diag holds reciprocal pivots.
		let prevInv = 0;
		let prevSup = 0;
		let h = 0;
		let r = 0;
		for (let i = 0; i < n; i++) {
			const gl = i > 0 ? factor * g0[i - 1] : 0;
			const gr = i < n - 1 ? factor * g0[i] : 0;
			const capDt = cap[i] * invDt;
			const m = -gl * prevInv; // sub-diagonal / previous pivot
			const pivot = capDt + gl + gr - m * prevSup;
			const inv = 1 / pivot;
			h = capDt * c[i] - m * h;
			r = source[i] - m * r;
			hom[i] = h;
			resp[i] = r;
			diag[i] = inv;
			sup[i] = -gr;
			prevInv = inv;
			prevSup = -gr;
		}
		hom[n - 1] *= diag[n - 1];
		resp[n - 1] *= diag[n - 1];
		for (let i = n - 2; i >= 0; i--) {
			hom[i] = (hom[i] - sup[i] * hom[i + 1]) * diag[i];
			resp[i] = (resp[i] - sup[i] * resp[i + 1]) * diag[i];
		}
	}

	/** Apply the prepared step with forcing u. */
	commit(u: number): void {
		const { c, hom, resp, n } = this;
		for (let i = 0; i < n; i++) c[i] = hom[i] + u * resp[i];
	}

	fill(value: number): void {
		this.c.fill(value);
	}
}

/**
 * Solid diffusion in a spherical particle (Fick's law in spherical
 * coordinates), finite volumes on equal-volume shells: shell k spans
 * r_k = R·(k/N)^{1/3}, so the outer shells, where the concentration changes
 * fastest under a surface flux, are the thinnest (N = 20: outer shell 1.7 % of R).
 *
 * The forcing is the molar flux into the particle at r = R (mol/(m²·s),
 * positive = insertion). The surface concentration is extrapolated from the
 * two outer shells with a quadratic that honours the known surface gradient
 * D·∂c/∂r = N_in; it is linear in (c, N_in), so it splits into hom + N_in·resp.
 * Checked against the analytic series of Carslaw & Jaeger in tests/engine.
 */
export class SphericalParticle {
	readonly radius_m: number;
	readonly shells: number;
	readonly grid: ImplicitDiffusion;
	/** Shell mid-radii, m. */
	readonly mid_m: Float64Array;
	private readonly h1: number;
	private readonly h2: number;
	private dt_s = 1;
	private diffusivity_m2_s = 1;
	private meanAtPrepare = 0;

	constructor(radius_m: number, shells: number) {
		this.radius_m = radius_m;
		this.shells = shells;
		const R = radius_m;
		const r = new Float64Array(shells + 1);
		for (let k = 0; k <= shells; k++) r[k] = R * Math.cbrt(k / shells);
		const cap = new Float64Array(shells);
		const mid = new Float64Array(shells);
		for (let i = 0; i < shells; i++) {
			cap[i] = (r[i + 1] ** 3 - r[i] ** 3) / 3; // volume / 4π
			mid[i] = (r[i] + r[i + 1]) / 2;
		}
		const g0 = new Float64Array(shells - 1);
		for (let i = 0; i < shells - 1; i++) g0[i] = (r[i + 1] * r[i + 1]) / (mid[i + 1] - mid[i]); // area/4π ÷ distance
		const source = new Float64Array(shells);
		source[shells - 1] = R * R; // surface area / 4π
		this.grid = new ImplicitDiffusion(cap, g0, source);
		this.mid_m = mid;
		this.h1 = mid[shells - 1] - R;
		this.h2 = mid[shells - 2] - R;
	}

	/** Face i's area ÷ 4π over the distance between shell mid-radii, m (conductance at D = 1). */
	faceConductance(i: number): number {
		return this.grid.faceConductance(i);
	}

	get concentration(): Float64Array {
		return this.grid.c;
	}

	/** Prepare one step of length dt_s at diffusivity D (m²/s). */
	prepare(dt_s: number, diffusivity_m2_s: number): void {
		this.dt_s = dt_s;
		this.diffusivity_m2_s = diffusivity_m2_s;
		this.grid.prepare(dt_s, diffusivity_m2_s);
		this.meanAtPrepare = this.mean();
	}

	/** Quadratic surface extrapolation through the two outer shells with surface slope `slope`. */
	private extrapolate(c1: number, c2: number, slope: number): number {
		const { h1, h2 } = this;
		const curv = (c1 - c2 - slope * (h1 - h2)) / (h1 * h1 - h2 * h2);
		return c1 - slope * h1 - curv * h1 * h1;
	}

	/** Surface concentration after the prepared step, for zero flux. */
	surfaceHom(): number {
		const { hom } = this.grid;
		return this.extrapolate(hom[this.shells - 1], hom[this.shells - 2], 0);
	}

	/** Change of the surface concentration after the step per unit flux (mol/m²/s). */
	surfaceResp(): number {
		const { resp } = this.grid;
		return this.extrapolate(resp[this.shells - 1], resp[this.shells - 2], 1 / this.diffusivity_m2_s);
	}

	/** Current surface concentration (state, with the flux of the last step). */
	surfaceNow(flux_mol_m2_s: number): number {
		const c = this.grid.c;
		return this.extrapolate(c[this.shells - 1], c[this.shells - 2], flux_mol_m2_s / this.diffusivity_m2_s);
	}

	/** Volume-average concentration. */
	mean(): number {
		return (this.grid.total() * 3) / this.radius_m ** 3;
	}

	/** Volume-average after a step of the prepared length with flux N_in (exact: d(mean)/dt = 3 N_in / R). */
	meanAfter(flux_mol_m2_s: number): number {
		return this.meanAtPrepare + (3 * flux_mol_m2_s * this.dt_s) / this.radius_m;
	}

	commit(flux_mol_m2_s: number): void {
		this.grid.commit(flux_mol_m2_s);
	}
}
