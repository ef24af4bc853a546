/**
 * Road-load model: battery power of a vehicle following a speed trace.
 *
 * Longitudinal force balance of a vehicle on a flat road (Guzzella &
 * Sciarretta, Vehicle Propulsion Systems, 3rd ed., Springer 2013, ch. 2,
 * "Vehicle energy and fuel consumption – basic concepts"):
 *   m_eff·dv/dt = F_t − F_a − F_r
 *   F_a = ½·ρ_air·(c_d·A_f)·v²        aerodynamic drag
 *   F_r = c_r·m·g   (v > 0)            rolling resistance
 * with m_eff = m·(1 + rotating-mass share) for the wheels, drivetrain and
 * motor inertia. Wheel power P_w = F_t·v. The battery delivers
 *   P_b = P_w / η_dt + P_aux                     while driving (P_w ≥ 0),
 *   P_b = P_w · η_dt · regenFraction + P_aux     while braking (P_w < 0),
 * i.e. the drivetrain losses counted once each way and only part of the
 * braking power recuperated (the friction brakes take the rest). The regen
 * fraction and the 5 % rotating-mass share are common practice, no source.
 *
 * The speed trace's acceleration comes from central differences on the
 * (possibly uneven) time grid, one-sided at the ends. Grade is not modelled
 * (a flat road); a hilly route needs a measured power trace instead.
 */
import { z } from 'zod';

/** Standard gravity, m/s² (CGPM 1901, exact). */
export const STANDARD_GRAVITY_m_s2 = 9.80665;

export const vehicleRoadLoadSchema = z.object({
	mass_kg: z.number().finite().min(100, 'vehicle mass must be at least 100 kg').max(60_000, 'vehicle mass must be at most 60 000 kg'),
	/** Drag coefficient times frontal area c_d·A_f, m² (a delivery van ≈ 1.5–2.5 m²). */
	dragArea_m2: z.number().finite().min(0.1, 'drag area c_d·A must be at least 0.1 m²').max(15, 'drag area c_d·A must be at most 15 m²'),
	/** Rolling-resistance coefficient c_r (tyres on asphalt ≈ 0.006–0.015). */
	rollingResistance: z.number().finite().min(0, 'rolling-resistance coefficient must not be negative').max(0.05, 'rolling-resistance coefficient must be at most 0.05'),
	/** Battery-to-wheel efficiency (inverter, motor, gearbox), 0…1. */
	drivetrainEfficiency: z.number().finite().min(0.3, 'drivetrain efficiency must be at least 30 %').max(1, 'drivetrain efficiency must be at most 100 %'),
	/** Share of the braking power at the wheels that is recuperated into the battery, 0…1. */
	regenFraction: z.number().finite().min(0, 'regeneration share must be 0 … 100 %').max(1, 'regeneration share must be 0 … 100 %'),
	/** Auxiliary loads drawn from the traction battery (cab heating, 12 V), W. */
	auxiliaryPower_W: z.number().finite().min(0, 'auxiliary power must not be negative').max(50_000, 'auxiliary power must be at most 50 kW').default(0),
	rotatingMassShare: z.number().finite().min(0).max(0.5).default(0.05),
	airDensity_kg_m3: z.number().finite().min(0.5).max(1.6).default(1.2)
});
export type VehicleRoadLoad = z.output<typeof vehicleRoadLoadSchema>;
export type VehicleRoadLoadInput = z.input<typeof vehicleRoadLoadSchema>;

/** An invented light commercial van, used as the upload form's default. */
export const DEMO_VAN_ROAD_LOAD: VehicleRoadLoad = {
	mass_kg: 3200,
	dragArea_m2: 1.9,
	rollingResistance: 0.009,
	drivetrainEfficiency: 0.88,
	regenFraction: 0.6,
	auxiliaryPower_W: 0,
	rotatingMassShare: 0.05,
	airDensity_kg_m3: 1.2
};

/** Acceleration of a speed trace (m/s²): central differences, one-sided at the ends. */
export function accelerationOf(time_s: readonly number[], speed_m_s: readonly number[]): number[] {
	const n = time_s.length;
	const a = new Array<number>(n).fill(0);
	if (n < 2) return a;
	for (let i = 0; i < n; i++) {
		const lo = Math.max(0, i - 1);
		const hi = Math.min(n - 1, i + 1);
		a[i] = (speed_m_s[hi] - speed_m_s[lo]) / (time_s[hi] - time_s[lo]);
	}
	return a;
}

/** Battery power (W, > 0 drawn from the pack) along a speed trace, sample by sample. */
export function roadLoadPower_W(time_s: readonly number[], speed_m_s: readonly number[], vehicle: VehicleRoadLoad): number[] {
	const accel = accelerationOf(time_s, speed_m_s);
	const mEff = vehicle.mass_kg * (1 + vehicle.rotatingMassShare);
	const rolling_N = vehicle.rollingResistance * vehicle.mass_kg * STANDARD_GRAVITY_m_s2;
	return speed_m_s.map((v, i) => {
		const aero_N = 0.5 * vehicle.airDensity_kg_m3 * vehicle.dragArea_m2 * v * v;
		const force_N = mEff * accel[i] + aero_N + (v > 0 ? rolling_N : 0);
		const wheel_W = force_N * v;
		const battery_W =
			wheel_W >= 0 ? wheel_W / vehicle.drivetrainEfficiency : wheel_W * vehicle.drivetrainEfficiency * vehicle.regenFraction;
		return battery_W + vehicle.auxiliaryPower_W;
	});
}
