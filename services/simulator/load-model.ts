import type { EngineFamily } from './engine-families.js';

/**
 * Road load → shaft power → fuel power → heat to the coolant.
 *
 * - Tractive force (N): F = m·g·(c_rr + grade) + ½·ρ_air·CdA·v² + m·a
 * - Shaft power (W): P_shaft = clamp(F·v / η_driveline, 0, P_rated − P_acc) + P_acc
 *   (negative demand = engine braking / fuel cut: no fuel for traction)
 * - Fuel power (W): P_fuel = P_idle·(n / n_idle) + P_shaft / η_brake
 *   (the first term stands for friction and pumping, growing with engine speed n in rpm)
 * - Heat to the coolant (W): Q_in = COOLANT_HEAT_FRACTION · P_fuel
 * - Engine speed (rpm): the lowest gear whose top speed is above v, n = n_shift·v/v_top(gear),
 *   never below idle.
 */

/** Share of fuel energy that the cooling system carries away (common practice: about a third). */
export const COOLANT_HEAT_FRACTION = 1 / 3;
/** Air density at about 15 °C, kg/m³. */
export const AIR_DENSITY_KG_M3 = 1.2;
/** Gravitational acceleration, m/s². */
export const GRAVITY_MPS2 = 9.81;
/** Gearbox and axle efficiency, dimensionless. */
export const DRIVELINE_EFFICIENCY = 0.9;

export class LoadModel {
  private readonly f: EngineFamily;
  /** Vehicle mass with today's payload, kg. */
  massKg: number;
  private readonly gearTopMps: Float64Array;

  constructor(family: EngineFamily, massKg: number) {
    this.f = family;
    this.massKg = massKg;
    this.gearTopMps = Float64Array.from(family.gearTopSpeedsKph, (k) => k / 3.6);
  }

  /** Engine speed for a road speed, rpm. */
  rpm(speedMps: number): number {
    const f = this.f;
    if (speedMps <= 0) return f.idleRpm;
    const tops = this.gearTopMps;
    let g = 0;
    while (g < tops.length - 1 && speedMps > (tops[g] as number)) g++;
    const n = (f.shiftRpm * speedMps) / (tops[g] as number);
    return n < f.idleRpm ? f.idleRpm : n > f.ratedRpm ? f.ratedRpm : n;
  }

  /** Shaft power, W, for speed (m/s), acceleration (m/s²), grade (rise/run) and A/C. */
  shaftPowerW(speedMps: number, accelMps2: number, grade: number, acOn: boolean): number {
    const f = this.f;
    const m = this.massKg;
    const force =
      m * GRAVITY_MPS2 * (f.rollingResistance + grade) +
      0.5 * AIR_DENSITY_KG_M3 * f.dragAreaM2 * speedMps * speedMps +
      m * accelMps2;
    const acc = f.accessoryPowerW + (acOn ? f.acPowerW : 0);
    let traction = speedMps > 0 ? (force * speedMps) / DRIVELINE_EFFICIENCY : 0;
    if (traction < 0) traction = 0;
    if (traction > f.ratedPowerW - acc) traction = f.ratedPowerW - acc;
    return traction + acc;
  }

  /** Heat to the coolant, W, at engine speed rpm and shaft power W. */
  heatToCoolantW(rpm: number, shaftPowerW: number): number {
    const f = this.f;
    return COOLANT_HEAT_FRACTION * (f.idleFuelW * (rpm / f.idleRpm) + shaftPowerW / f.brakeEfficiency);
  }
}

/** Heat to the coolant at rated power and speed, W (used to size the radiator). */
export function ratedCoolantHeatW(family: EngineFamily): number {
  return (
    COOLANT_HEAT_FRACTION *
    (family.idleFuelW * (family.ratedRpm / family.idleRpm) + family.ratedPowerW / family.brakeEfficiency)
  );
}
