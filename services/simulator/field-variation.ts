import type { Duty } from './duty-cycles.js';
import { ENGINE_FAMILIES } from './engine-families.js';
import type { Rng } from './prng.js';
import type { Climate } from './weather.js';

/**
 * Real-world variation between vehicles and from day to day that a detector must not mistake
 * for a fault. Drawn once per vehicle when a fleet is planned (field scenario); a vehicle
 * without it simulates exactly as before. Every entry names its range; each group of entries
 * can be switched off with {@link VariationSwitches}.
 */
export interface FieldVariation {
  /** Engine-off cooling time constant, h: 1.5–3.5 light duty, 3–6 heavy duty (bigger blocks cool slower). */
  soakTimeConstantH: number | null;
  /** Parked overnight in a depot hall at this temperature, °C (5–15), when colder outside; null = outdoors. */
  hallC: number | null;
  /** Engine block heater plugged in overnight below 0 °C outside: coolant at key-on, °C (20–60); null = none. */
  blockHeaterC: number | null;
  /** Ambient sensor reading high after a hot stop (engine heat under the bonnet), °C at a full soak (2–10). */
  ambientHeatSoakC: number;
  /** Extra reading of a standing vehicle's ambient sensor in midday sun, °C (0–6). */
  ambientSunC: number;
  /** Real thermostat opening minus its nominal rating, °C (−3..+3). */
  thermostatOffsetC: number;
  /** What the fleet registered: the right profile, none (defaults), or the wrong engine family. */
  profile: 'exact' | 'none' | 'wrong-family';
  /** The family registered when `profile` is 'wrong-family'. */
  registeredFamily: string;
  /** Payload drawn each working day from empty (0) to full (1); false = 20–100 % as before. */
  payloadFullRange: boolean;
  /** Chance per working day of a hilly route (0–0.3; 0.5–0.8 for heavy vehicles in the heat). */
  hillyDayChance: number;
  /** Road-grade spread on a hilly day, × the duty's usual (2–3.5). */
  hillGradeScale: number;
  /** Chance per working day of a long idle or power-take-off spell (0–0.15). */
  idleDayChance: number;
  /** Power-take-off load during such a spell, share of rated power (0–0.25). */
  ptoPowerShare: number;
  /** Radiator air side of a healthy but marginal vehicle, × nominal (0.85–1; 0.8–0.95 for heavy vehicles in the heat). */
  radiatorAirFactor: number;
  /** Gateway sample period, s (1, 2, 5, 10, 15, 30 or 60). */
  samplePeriodS: number;
  /** Timestamp jitter, share of the sample period (0–0.3). */
  jitterShare: number;
  /** Coverage gaps (bursts of dropped samples), × the usual rate (0.5–5). */
  dropoutScale: number;
  /** Gateway clock minus true time, s (−300..+300). */
  clockOffsetS: number;
  /** Coolant channel resolution, °C: 1 (SPN 110) or 0.03125 (high-resolution SPN 1637). */
  coolantResolutionC: number;
  /** The depot's weather has heat waves, cold snaps and warm spells (weather-events.ts). */
  weatherEvents: boolean;
}

/** Groups of variation, each on by default in field fleets. */
export interface VariationSwitches {
  /** Soak time constants, depot halls, block heaters, heat-soaked and sun-warmed ambient sensor. */
  soak: boolean;
  /** Thermostats off their rating; missing or wrong vehicle profiles. */
  profiles: boolean;
  /** Payload, hills, idling/PTO days, marginal radiators (healthy hot heavy vehicles at 100–118 °C). */
  duty: boolean;
  /** Heat waves, cold snaps, warm weeks in winter (see weather-events.ts). */
  weather: boolean;
  /** Sample periods, jitter, dropout bursts, clock offsets, coolant resolution. */
  sampling: boolean;
  /** Faults that start gradually (ramped over 3–21 days) as well as abruptly. */
  gradualFaults: boolean;
}

export const ALL_VARIATION: Readonly<VariationSwitches> = Object.freeze({
  soak: true,
  profiles: true,
  duty: true,
  weather: true,
  sampling: true,
  gradualFaults: true,
});

/** Sample periods a gateway is configured with, s, and how common each is. */
const SAMPLE_PERIODS_S = [1, 2, 5, 10, 15, 30, 60] as const;
const SAMPLE_PERIOD_WEIGHTS = [0.02, 0.03, 0.15, 0.35, 0.2, 0.15, 0.1] as const;
/** Share of vehicles registered with no profile, and with the wrong engine family. */
const NO_PROFILE_SHARE = 0.1;
const WRONG_FAMILY_SHARE = 0.08;
/** Share of cold-climate vehicles with a block heater, and of vehicles parked indoors there. */
const BLOCK_HEATER_SHARE = 0.5;
const INDOOR_SHARE = 0.35;
/** Share of gateways with the high-resolution coolant channel. */
const FINE_RESOLUTION_SHARE = 0.3;
/** SPN 1637 resolution, °C/bit. */
export const FINE_COOLANT_RESOLUTION_C = 0.03125;

function pick<T>(values: readonly T[], weights: readonly number[], rng: Rng): T {
  let r = rng.next();
  for (let i = 0; i < values.length; i++) {
    r -= weights[i] ?? 0;
    if (r < 0) return values[i] as T;
  }
  return values[values.length - 1] as T;
}

/**
 * Draws one vehicle's variation. Every value is drawn whatever the switches, so switching one
 * group off leaves the others' draws unchanged.
 * @example drawVariation(rng, { climate: 'cold', duty: 'bus', engineFamily: 'Halvern M7' }, ALL_VARIATION)
 */
export function drawVariation(
  rng: Rng,
  v: { climate: Climate; duty: Duty; engineFamily: string },
  on: VariationSwitches,
): FieldVariation {
  const heavy = v.duty === 'long-haul' || v.duty === 'bus';
  const hotHeavy = heavy && v.climate === 'hot';
  const soakH = heavy ? rng.uniform(3, 6) : rng.uniform(1.5, 3.5);
  const hall = rng.chance(INDOOR_SHARE) ? rng.uniform(5, 15) : null;
  const heater = rng.chance(BLOCK_HEATER_SHARE) ? rng.uniform(20, 60) : null;
  const heatSoak = rng.uniform(2, 10);
  const sun = rng.uniform(0, 6);
  const offset = rng.uniform(-3, 3);
  const p = rng.next();
  const others = Object.keys(ENGINE_FAMILIES).filter((name) => name !== v.engineFamily);
  const wrong = others.length > 0 ? rng.pick(others) : v.engineFamily;
  const hilly = hotHeavy ? rng.uniform(0.5, 0.8) : rng.uniform(0, 0.3);
  const gradeScale = rng.uniform(2, 3.5);
  const idle = rng.uniform(0, 0.15);
  const pto = rng.uniform(0, 0.25);
  const radiator = hotHeavy ? rng.uniform(0.8, 0.95) : rng.uniform(0.85, 1);
  const period = pick(SAMPLE_PERIODS_S, SAMPLE_PERIOD_WEIGHTS, rng);
  const jitter = rng.uniform(0, 0.3);
  const dropouts = rng.uniform(0.5, 5);
  const clock = rng.uniform(-300, 300);
  const fine = rng.chance(FINE_RESOLUTION_SHARE);
  return {
    soakTimeConstantH: on.soak ? soakH : null,
    hallC: on.soak && v.climate !== 'hot' ? hall : null,
    blockHeaterC: on.soak && v.climate === 'cold' ? heater : null,
    ambientHeatSoakC: on.soak ? heatSoak : 0,
    ambientSunC: on.soak && v.climate !== 'cold' ? sun : 0,
    thermostatOffsetC: on.profiles ? offset : 0,
    profile: !on.profiles
      ? 'exact'
      : p < NO_PROFILE_SHARE
        ? 'none'
        : p < NO_PROFILE_SHARE + WRONG_FAMILY_SHARE
          ? 'wrong-family'
          : 'exact',
    registeredFamily: on.profiles ? wrong : v.engineFamily,
    payloadFullRange: on.duty,
    hillyDayChance: on.duty ? hilly : 0,
    hillGradeScale: on.duty ? gradeScale : 1,
    idleDayChance: on.duty ? idle : 0,
    ptoPowerShare: on.duty ? pto : 0,
    radiatorAirFactor: on.duty ? radiator : 1,
    samplePeriodS: on.sampling ? period : 10,
    jitterShare: on.sampling ? jitter : 0,
    dropoutScale: on.sampling ? dropouts : 1,
    clockOffsetS: on.sampling ? clock : 0,
    coolantResolutionC: on.sampling && fine ? FINE_COOLANT_RESOLUTION_C : 1,
    weatherEvents: on.weather,
  };
}
