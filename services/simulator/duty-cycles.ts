import type { DriveProfile } from './drive-cycle.js';
import type { Rng } from './prng.js';

/**
 * Duty cycles: how each kind of vehicle is driven (speed-trace profile) and scheduled (which
 * days it works, when the engine runs). A day is planned as engine runs; a run is a list of
 * legs, each an idle period with the engine on followed by driving. Between runs the engine
 * is off and soaks towards ambient. Times are seconds after local midnight.
 */

export type Duty = 'urban-delivery' | 'long-haul' | 'bus' | 'service-van';

export interface Leg {
  /** Idling before the leg drives off, s. */
  idleS: number;
  /** Driving time, s. */
  driveS: number;
  /** Power-take-off load while idling, W (a crane, pump or tipper); absent = none. */
  ptoW?: number;
}
export interface EngineRun {
  /** Engine start, s after local midnight. */
  startS: number;
  legs: Leg[];
}

const MIN_S = 60;
const HOUR_S = 3600;

const URBAN_DRIVE: DriveProfile = {
  accelMps2: 1.0,
  decelMps2: 1.3,
  jamChance: 0.01,
  jamS: [180, 1200],
  roads: {
    urban: { weight: 0.65, speedKph: [25, 50], lengthM: [150, 700], stopChance: 0.55, stopS: [5, 60], gradeSd: 0.015 },
    arterial: {
      weight: 0.3,
      speedKph: [50, 70],
      lengthM: [500, 2500],
      stopChance: 0.3,
      stopS: [10, 70],
      gradeSd: 0.015,
    },
    highway: {
      weight: 0.05,
      speedKph: [80, 100],
      lengthM: [3000, 12000],
      stopChance: 0.02,
      stopS: [5, 30],
      gradeSd: 0.012,
    },
  },
};
const LONG_HAUL_DRIVE: DriveProfile = {
  accelMps2: 0.35,
  decelMps2: 0.8,
  jamChance: 0.01,
  jamS: [300, 1500],
  roads: {
    urban: { weight: 0.04, speedKph: [25, 45], lengthM: [300, 1000], stopChance: 0.5, stopS: [10, 60], gradeSd: 0.01 },
    arterial: {
      weight: 0.11,
      speedKph: [55, 75],
      lengthM: [1000, 5000],
      stopChance: 0.25,
      stopS: [10, 60],
      gradeSd: 0.015,
    },
    highway: {
      weight: 0.85,
      speedKph: [78, 89],
      lengthM: [5000, 40000],
      stopChance: 0.01,
      stopS: [10, 60],
      gradeSd: 0.012,
    },
  },
};
const BUS_DRIVE: DriveProfile = {
  accelMps2: 0.8,
  decelMps2: 1.0,
  jamChance: 0.008,
  jamS: [180, 900],
  roads: {
    urban: { weight: 0.8, speedKph: [30, 50], lengthM: [250, 600], stopChance: 0.85, stopS: [15, 45], gradeSd: 0.012 },
    arterial: {
      weight: 0.2,
      speedKph: [45, 65],
      lengthM: [600, 2000],
      stopChance: 0.6,
      stopS: [15, 40],
      gradeSd: 0.012,
    },
    highway: { weight: 0, speedKph: [70, 80], lengthM: [2000, 5000], stopChance: 0.1, stopS: [10, 30], gradeSd: 0.01 },
  },
};
const SERVICE_DRIVE: DriveProfile = {
  accelMps2: 1.1,
  decelMps2: 1.3,
  jamChance: 0.01,
  jamS: [180, 1200],
  roads: {
    urban: { weight: 0.35, speedKph: [25, 50], lengthM: [200, 800], stopChance: 0.5, stopS: [5, 50], gradeSd: 0.015 },
    arterial: {
      weight: 0.4,
      speedKph: [50, 75],
      lengthM: [800, 3000],
      stopChance: 0.3,
      stopS: [10, 60],
      gradeSd: 0.015,
    },
    highway: {
      weight: 0.25,
      speedKph: [85, 110],
      lengthM: [4000, 20000],
      stopChance: 0.02,
      stopS: [5, 30],
      gradeSd: 0.012,
    },
  },
};

/** Speed-trace profile of a duty. */
export const DRIVE_PROFILES: Readonly<Record<Duty, DriveProfile>> = {
  'urban-delivery': URBAN_DRIVE,
  'long-haul': LONG_HAUL_DRIVE,
  bus: BUS_DRIVE,
  'service-van': SERVICE_DRIVE,
};

/** Chance that a scheduled working day is missed (maintenance, holiday, driver off). */
const RANDOM_DAY_OFF_CHANCE = 0.04;

/** True when the vehicle works on this day of week (0 = Sunday). */
export function worksOn(duty: Duty, dayOfWeek: number, rng: Rng): boolean {
  const scheduled =
    duty === 'bus' ? true : duty === 'urban-delivery' ? dayOfWeek !== 0 : dayOfWeek !== 0 && dayOfWeek !== 6;
  return scheduled && !rng.chance(RANDOM_DAY_OFF_CHANCE);
}

/**
 * Plans one working day's engine runs. `shiftStartS` is the vehicle's usual start time.
 * @example planDay('service-van', 8 * 3600, rng) // 4–7 jobs between 08:00 and ~17:00
 */
export function planDay(duty: Duty, shiftStartS: number, rng: Rng): EngineRun[] {
  const runs: EngineRun[] = [];
  let t = shiftStartS + rng.uniform(-20, 20) * MIN_S;
  const add = (legs: Leg[], offAfterS: number): void => {
    runs.push({ startS: t, legs });
    t += legs.reduce((s, l) => s + l.idleS + l.driveS, 0) + offAfterS;
  };
  switch (duty) {
    case 'urban-delivery': {
      const stops = rng.int(12, 24);
      for (let i = 0; i < stops; i++) {
        const legs: Leg[] = [{ idleS: rng.uniform(20, 90), driveS: rng.uniform(4, 18) * MIN_S }];
        // Some drops are made with the engine left idling: the run continues.
        while (rng.chance(0.2)) legs.push({ idleS: rng.uniform(2, 8) * MIN_S, driveS: rng.uniform(4, 15) * MIN_S });
        const lunch = i === Math.floor(stops / 2);
        add(legs, lunch ? rng.uniform(30, 50) * MIN_S : rng.uniform(3, 15) * MIN_S);
      }
      break;
    }
    case 'long-haul': {
      const legCount = rng.int(2, 3);
      for (let i = 0; i < legCount; i++) {
        const idle = i === 0 ? rng.uniform(3, 12) * MIN_S : rng.uniform(0.5, 2) * MIN_S;
        add([{ idleS: idle, driveS: rng.uniform(2, 4.5) * HOUR_S }], rng.uniform(45, 70) * MIN_S);
      }
      break;
    }
    case 'bus': {
      // Service blocks of several route loops with idling layovers; a depot break between blocks.
      const blocks = rng.int(2, 3);
      for (let b = 0; b < blocks; b++) {
        const legs: Leg[] = [];
        const loops = rng.int(3, 5);
        for (let i = 0; i < loops; i++)
          legs.push({
            idleS: (i === 0 ? rng.uniform(2, 6) : rng.uniform(3, 9)) * MIN_S,
            driveS: rng.uniform(35, 55) * MIN_S,
          });
        add(legs, rng.uniform(40, 90) * MIN_S);
      }
      break;
    }
    case 'service-van': {
      const jobs = rng.int(4, 7);
      for (let i = 0; i < jobs; i++)
        add([{ idleS: rng.uniform(15, 90), driveS: rng.uniform(12, 45) * MIN_S }], rng.uniform(30, 100) * MIN_S);
      break;
    }
  }
  // Nothing runs past 23:30 local: the day's schedule is cut there.
  const END_S = 23.5 * HOUR_S;
  return runs.filter((r) => r.startS + r.legs.reduce((s, l) => s + l.idleS + l.driveS, 0) < END_S);
}

/** Usual shift start for a duty, s after local midnight, drawn once per vehicle. */
export function usualShiftStartS(duty: Duty, rng: Rng): number {
  const [lo, hi] =
    duty === 'long-haul'
      ? [4.5, 6.5]
      : duty === 'bus'
        ? [5.0, 6.5]
        : duty === 'urban-delivery'
          ? [6.0, 7.5]
          : [7.5, 8.5];
  return rng.uniform(lo, hi) * HOUR_S;
}
