import type { CoolingSystem } from './cooling-system.js';
import type { FieldVariation } from './field-variation.js';
import type { Rng } from './prng.js';
import { HOUR_MS } from '../time/durations.js';

/**
 * The running state of a vehicle's field variation while it is simulated: today's route and
 * duty, where it is parked, the ambient sensor's own temperature, the gateway's clock. Every
 * random draw comes from its own streams, so a vehicle and its fault-free twin see the same.
 */

/** Ambient sensor time constant when driving (air flow over it), s ... */
const SENSOR_TAU_MOVING_S = 60;
/** ... and when standing, s. */
const SENSOR_TAU_STANDING_S = 600;
/** Above this road speed the sensor counts as ventilated, m/s. */
const VENTILATED_MPS = 2;
/** Under-bonnet heat reaches the ambient sensor in full with the coolant this far above the air, °C. */
const FULL_HEAT_SOAK_DIFF_C = 60;
/** Block heaters are plugged in when it is colder than this outside at key-on, °C. */
const BLOCK_HEATER_BELOW_C = 0;
/** Day-to-day spread of the block-heated coolant at key-on, °C (±). */
const BLOCK_HEATER_SPREAD_C = 5;
/** A long idle or PTO spell lasts this long, h. */
const IDLE_SPELL_H: readonly [number, number] = [1, 3];

export interface FieldDay {
  /** Road-grade spread multiplier for today. */
  gradeScale: number;
  /** Today's long idle or PTO spell, added to one run in the middle of the day; null = none. */
  idleSpell: { idleS: number; ptoW: number } | null;
}

export class FieldConditions {
  /** The ambient sensor's own temperature, °C (lags the air; heat-soaked after stops). */
  private sensorC = Number.NaN;
  private lastTsMs = -Infinity;

  constructor(
    readonly v: FieldVariation,
    private readonly dayRng: Rng,
    private readonly clockRng: Rng,
    private readonly ratedPowerW: number,
  ) {}

  /** Draws one calendar day's route and duty (called for every day, worked or not). */
  day(): FieldDay {
    const r = this.dayRng;
    const hilly = r.chance(this.v.hillyDayChance);
    const idle = r.chance(this.v.idleDayChance);
    const idleS = r.uniform(IDLE_SPELL_H[0], IDLE_SPELL_H[1]) * 3600;
    return {
      gradeScale: hilly ? this.v.hillGradeScale : 1,
      idleSpell: idle ? { idleS, ptoW: this.v.ptoPowerShare * this.ratedPowerW } : null,
    };
  }

  /** Where the engine soaks before the day's first run: a depot hall is kept at `hallC` when colder outside. */
  soakSinkC(outsideC: number, overnight: boolean): number {
    return overnight && this.v.hallC !== null ? Math.max(outsideC, this.v.hallC) : outsideC;
  }

  /**
   * At key-on: warms the coolant of a block-heated engine after a cold night, and starts the
   * ambient sensor at the parked air temperature plus under-bonnet heat left from the last run.
   */
  keyOn(cs: CoolingSystem, parkedAirC: number, outsideC: number, overnight: boolean): void {
    const heater = this.v.blockHeaterC;
    const spread = this.dayRng.uniform(-BLOCK_HEATER_SPREAD_C, BLOCK_HEATER_SPREAD_C);
    if (overnight && heater !== null && outsideC < BLOCK_HEATER_BELOW_C && cs.coolantC < heater + spread) {
      cs.coolantC = heater + spread;
      cs.thermostat.waxC = cs.coolantC;
    }
    const warm = Math.min(1, Math.max(0, (cs.coolantC - parkedAirC) / FULL_HEAT_SOAK_DIFF_C));
    this.sensorC = parkedAirC + this.v.ambientHeatSoakC * warm;
  }

  /**
   * The ambient sensor's reading for the true air `airC` (°C) at local hour `hour`, after
   * `dtS` s at road speed `speedMps`, with `pickupC` of engine heat when standing.
   */
  ambientSensorC(airC: number, pickupC: number, speedMps: number, localHour: number, dtS: number): number {
    const standing = speedMps < VENTILATED_MPS;
    const daylight = localHour > 7 && localHour < 17 ? Math.sin((Math.PI * (localHour - 7)) / 10) : 0;
    const target = airC + pickupC + this.v.ambientSunC * daylight * (standing ? 1 : 0.3);
    if (Number.isNaN(this.sensorC)) this.sensorC = target;
    const tau = standing ? SENSOR_TAU_STANDING_S : SENSOR_TAU_MOVING_S;
    this.sensorC += (target - this.sensorC) * (1 - Math.exp(-dtS / tau));
    return this.sensorC;
  }

  /** The gateway's timestamp for true time tMs: its clock offset plus jitter, always increasing, ms. */
  timestamp(tMs: number, periodS: number): number {
    const jitter = this.v.jitterShare * periodS * 1000 * this.clockRng.uniform(-1, 1);
    let ts = Math.round(tMs + this.v.clockOffsetS * 1000 + jitter);
    if (ts <= this.lastTsMs) ts = this.lastTsMs + 1;
    this.lastTsMs = ts;
    return ts;
  }
}

/** Local hour of day for epoch ms tMs at a UTC offset in hours. */
export function localHour(tMs: number, utcOffsetHours: number): number {
  const local = tMs + utcOffsetHours * HOUR_MS;
  return (((local % 86_400_000) + 86_400_000) % 86_400_000) / HOUR_MS;
}
