import { CoolantSensor } from './coolant-sensor.js';
import { CoolingSystem, thermalParamsFor } from './cooling-system.js';
import { DriveCycle } from './drive-cycle.js';
import { DRIVE_PROFILES, planDay, usualShiftStartS, worksOn } from './duty-cycles.js';
import { engineFamily } from './engine-families.js';
import { applyPhysicalFaults } from './faults.js';
import { FieldConditions, localHour } from './field-conditions.js';
import type { SimVehicle } from './sim-vehicle.js';
import { LinkDropouts } from './link-dropouts.js';
import { LoadModel, ratedCoolantHeatW } from './load-model.js';
import { hashSeed, Rng } from './prng.js';
import { AmbientModel } from './weather.js';
import { drawWeatherEvents } from './weather-events.js';
import { DAY_MS, HOUR_MS } from '../time/durations.js';

export interface SimOptions {
  /** First instant simulated, epoch ms (vehicles start cold-soaked). */
  startMs: number;
  /** Number of days simulated. */
  days: number;
  seed: number;
  /** Gateway sample period, s (default 10). The physics steps at ≤ 1 s, dividing it evenly. */
  samplePeriodS?: number;
}

/** A run of samples; every array has `length` valid entries. Dropped samples are absent. */
export interface SampleChunk {
  length: number;
  /** Epoch ms. */
  ts: Float64Array;
  /** Reported coolant temperature, °C, whole degrees (SPN 110). */
  coolant: Float64Array;
  /** Reported ambient temperature, °C, 0.03125 °C steps (SPN 171). */
  ambient: Float64Array;
  /** Road speed, km/h, whole numbers. */
  speedKph: Float64Array;
  /** Engine speed, rpm, whole numbers. */
  rpm: Float64Array;
  /** Extra (ground truth, not in the ingest format): true coolant temperature, °C. */
  coolantTrue: Float64Array;
  /**
   * Coolant level the engine reports, % of full in 0.4 % steps (SAE J1939 SPN 111): sent only
   * on the vehicle bus (`simulate --as j1939`), not in readings.ndjson. Optional for chunks
   * built by hand.
   */
  coolantLevelPct?: Float64Array;
}

export const DEFAULT_SAMPLE_PERIOD_S = 10;
/** Samples per chunk: bounds memory per vehicle (6 arrays × 8 B × 4096 ≈ 200 kB). */
export const CHUNK_SAMPLES = 4096;
/** Ambient temperature and fault state are refreshed this often while running, ms. */
const SLOW_UPDATE_MS = 60_000;
/** Longest engine-off step (exact exponential, so only ambient drift limits it), s. */
const SOAK_STEP_S = 300;
/** The A/C runs above this ambient, °C. */
const AC_ON_ABOVE_C = 22;
/** Ambient sensor pick-up of engine heat when standing with a hot engine, °C. */
const AMBIENT_HEAT_PICKUP_C = 2;
/** SPN 171 resolution, °C/bit. */
const AMBIENT_RESOLUTION_C = 0.03125;
/** Idle governor jitter, rpm (1 sd). */
const RPM_JITTER_SD = 8;
/** SPN 111 resolution, %/bit. */
const COOLANT_LEVEL_RESOLUTION_PCT = 0.4;

/**
 * Simulates one vehicle and streams its gateway samples in chunks; memory does not grow
 * with the number of days. Deterministic for (vehicle, options).
 * @example for (const c of simulateVehicle(v, { startMs: Date.UTC(2026, 9, 5), days: 7, seed: 1 })) total += c.length;
 */
export function* simulateVehicle(vehicle: SimVehicle, opts: SimOptions): Generator<SampleChunk> {
  const family = { ...engineFamily(vehicle.engineFamily), glycolPercent: vehicle.glycolPercent };
  const key = `${vehicle.vehicleId}`;
  const scheduleRng = new Rng(hashSeed(opts.seed, `schedule:${key}`));
  const driveRng = new Rng(hashSeed(opts.seed, `drive:${key}`));
  const sensorRng = new Rng(hashSeed(opts.seed, `sensor:${key}`));
  const linkRng = new Rng(hashSeed(opts.seed, `link:${key}`));
  const offsetMs = (vehicle.utcOffsetHours ?? 0) * HOUR_MS;
  const fv = vehicle.variation;
  const anomalies = fv?.weatherEvents
    ? drawWeatherEvents(
        vehicle.climate,
        opts.startMs,
        opts.days,
        new Rng(hashSeed(opts.seed, `weather-events:${vehicle.depot}`)),
      )
    : [];
  const weather = new AmbientModel(
    vehicle.climate,
    vehicle.utcOffsetHours ?? 0,
    hashSeed(opts.seed, `weather:${vehicle.depot}`),
    anomalies,
  );
  const load = new LoadModel(family, family.vehicleMassKg);
  const params = thermalParamsFor(family, ratedCoolantHeatW(family), vehicle.thermostatOpenC);
  if (fv) {
    // The valve opens off its rating; the fan setpoints and the radiator stay as designed.
    params.thermostatOpenC += fv.thermostatOffsetC;
    if (fv.soakTimeConstantH !== null)
      params.soakLossWPerK =
        (params.metalHeatCapacityJPerK + params.coolantHeatCapacityJPerK) / (fv.soakTimeConstantH * 3600);
  }
  const cs = new CoolingSystem(params, weather.at(opts.startMs));
  const drive = new DriveCycle(DRIVE_PROFILES[vehicle.duty], driveRng);
  const sensor = new CoolantSensor(vehicle.faults, sensorRng, fv?.coolantResolutionC ?? 1);
  const link = new LinkDropouts(linkRng, fv?.dropoutScale ?? 1);
  const ambientBiasC = sensorRng.uniform(-0.5, 0.5);
  const shiftStartS = usualShiftStartS(vehicle.duty, scheduleRng);
  const field = fv
    ? new FieldConditions(
        fv,
        new Rng(hashSeed(opts.seed, `field-day:${key}`)),
        new Rng(hashSeed(opts.seed, `clock:${key}`)),
        family.ratedPowerW,
      )
    : undefined;
  const healthyAirFactor = fv?.radiatorAirFactor ?? 1;

  const periodS = fv?.samplePeriodS ?? opts.samplePeriodS ?? DEFAULT_SAMPLE_PERIOD_S;
  if (!(periodS > 0)) throw new RangeError(`samplePeriodS must be positive, got ${periodS}`);
  const stepsPerSample = Math.max(1, Math.ceil(periodS - 1e-9));
  const dtS = periodS / stepsPerSample;
  const dtMs = dtS * 1000;
  const endMs = opts.startMs + opts.days * DAY_MS;

  let buf = newChunk(CHUNK_SAMPLES);
  let n = 0;
  let tMs = opts.startMs;
  let ambientC = weather.at(tMs);
  let nextSlowMs: number;
  let stepIndex: number;

  const firstMidnightMs = Math.floor((opts.startMs + offsetMs) / DAY_MS) * DAY_MS - offsetMs;
  for (let midnight = firstMidnightMs; midnight < endMs; midnight += DAY_MS) {
    const dayOfWeek = new Date(midnight + offsetMs).getUTCDay();
    const today = field?.day();
    if (!worksOn(vehicle.duty, dayOfWeek, scheduleRng)) continue;
    load.massKg =
      family.vehicleMassKg +
      family.payloadMaxKg * (fv?.payloadFullRange ? scheduleRng.uniform(0, 1) : scheduleRng.uniform(0.2, 1));
    drive.gradeScale = today?.gradeScale ?? 1;
    const runs = planDay(vehicle.duty, shiftStartS, scheduleRng);
    const spell = today?.idleSpell;
    const middle = runs[runs.length >> 1];
    if (spell && middle?.legs[0])
      middle.legs[0] = { ...middle.legs[0], idleS: middle.legs[0].idleS + spell.idleS, ptoW: spell.ptoW };
    let firstOfDay = true;
    for (const run of runs) {
      const startMs = Math.round((midnight + run.startS * 1000) / 1000) * 1000;
      if (startMs < tMs) continue;
      if (startMs >= endMs) break;
      const overnight = firstOfDay;
      firstOfDay = false;
      tMs = soakUntil(cs, weather, tMs, startMs, field && overnight ? (air) => field.soakSinkC(air, true) : undefined);
      if (field) {
        const outside = weather.at(tMs);
        field.keyOn(cs, field.soakSinkC(outside, overnight), outside, overnight);
      }
      sensor.startRun(tMs);
      stepIndex = 0;
      nextSlowMs = tMs;
      for (const leg of run.legs) {
        let idleLeftS = leg.idleS;
        let driving = false;
        while (tMs < endMs) {
          if (!driving) {
            if (idleLeftS <= 0) {
              drive.startLeg(leg.driveS);
              driving = true;
            }
            idleLeftS -= dtS;
          } else {
            drive.step(dtS);
            if (drive.done) break;
          }
          if (tMs >= nextSlowMs) {
            nextSlowMs = tMs + SLOW_UPDATE_MS;
            ambientC = weather.at(tMs);
            applyPhysicalFaults(cs, vehicle.faults, tMs, healthyAirFactor);
          }
          const speed = driving ? drive.speedMps : 0;
          const acOn = ambientC > AC_ON_ABOVE_C;
          const rpm = load.rpm(speed);
          const shaft = driving
            ? load.shaftPowerW(speed, drive.accelMps2, drive.grade, acOn)
            : load.shaftPowerW(0, 0, 0, acOn) + (leg.ptoW ?? 0);
          const coolantC = cs.run(dtS, load.heatToCoolantW(rpm, shaft), speed, rpm, ambientC, acOn);
          tMs += dtMs;
          if (++stepIndex % stepsPerSample !== 0) continue;
          if (link.lost(tMs, periodS)) continue;
          const pickup = speed < 8 ? AMBIENT_HEAT_PICKUP_C * (1 - speed / 8) * clamp01((coolantC - ambientC) / 60) : 0;
          // Drawn before the sensor may drop the sample, so the clock stream does not depend on faults.
          const airC = field
            ? field.ambientSensorC(ambientC, pickup, speed, localHour(tMs, vehicle.utcOffsetHours ?? 0), periodS) +
              ambientBiasC
            : ambientC + ambientBiasC + pickup;
          const ts = field ? field.timestamp(tMs, periodS) : tMs;
          const reported = sensor.read(coolantC, tMs);
          if (reported !== reported) continue; // NaN: the ECU flagged the value, no sample
          buf.ts[n] = ts;
          buf.coolant[n] = reported;
          buf.ambient[n] = Math.round(airC / AMBIENT_RESOLUTION_C) * AMBIENT_RESOLUTION_C;
          buf.speedKph[n] = Math.round(speed * 3.6);
          buf.rpm[n] = Math.round(speed > 0 ? rpm : rpm + RPM_JITTER_SD * sensorRng.normal());
          buf.coolantTrue[n] = coolantC;
          buf.coolantLevelPct![n] =
            Math.round((cs.coolantLevel * 100) / COOLANT_LEVEL_RESOLUTION_PCT) * COOLANT_LEVEL_RESOLUTION_PCT;
          if (++n === CHUNK_SAMPLES) {
            yield buf;
            buf = newChunk(CHUNK_SAMPLES);
            n = 0;
          }
        }
      }
    }
  }
  if (n > 0) yield sliceChunk(buf, n);
}

/** Parks the engine from fromMs to toMs (epoch ms), soaking towards `sink(air)` (default the air); returns toMs. */
function soakUntil(
  cs: CoolingSystem,
  weather: AmbientModel,
  fromMs: number,
  toMs: number,
  sink?: (airC: number) => number,
): number {
  let t = fromMs;
  while (t < toMs) {
    const stepS = Math.min(SOAK_STEP_S, (toMs - t) / 1000);
    const air = weather.at(t + stepS * 500);
    cs.soak(stepS, sink ? sink(air) : air);
    t += stepS * 1000;
  }
  return t;
}

function clamp01(x: number): number {
  return x < 0 ? 0 : x > 1 ? 1 : x;
}

function newChunk(size: number): SampleChunk {
  return {
    length: size,
    ts: new Float64Array(size),
    coolant: new Float64Array(size),
    ambient: new Float64Array(size),
    speedKph: new Float64Array(size),
    rpm: new Float64Array(size),
    coolantTrue: new Float64Array(size),
    coolantLevelPct: new Float64Array(size),
  };
}

function sliceChunk(chunk: SampleChunk, n: number): SampleChunk {
  return {
    length: n,
    ts: chunk.ts.subarray(0, n),
    coolant: chunk.coolant.subarray(0, n),
    ambient: chunk.ambient.subarray(0, n),
    speedKph: chunk.speedKph.subarray(0, n),
    rpm: chunk.rpm.subarray(0, n),
    coolantTrue: chunk.coolantTrue.subarray(0, n),
    coolantLevelPct: chunk.coolantLevelPct!.subarray(0, n),
  };
}
