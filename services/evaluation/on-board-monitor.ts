/**
 * The baseline: rules in the style of an engine controller's on-board monitors, run on the same
 * telemetry as the service (pure, sample by sample, one instance per vehicle):
 * - thermostat monitor (13 CCR 1968.2 (e)(10), as secondary sources quote it): after a cold
 *   start, coolant must come within 20 °F (11.1 °C) of the nominal regulating temperature
 *   within a set time; not judged when ambient at start is below 20 °F (−6.7 °C) or when more
 *   than half of that time was spent idling; two failing trips in a row light the lamp (P0128);
 * - over-temperature: coolant above the rating + 25 °C for a minute (P0217 style; threshold
 *   common practice);
 * - coolant sensor circuit: readings at the limits of the channel's range, three in one trip
 *   (P0117/P0118 style).
 */

/** The thermostat criterion, °C below the nominal regulating temperature (20 °F). */
export const THERMOSTAT_CRITERION_C = 11.1;
/** Below this ambient at start the thermostat monitor is not run, °C (20 °F). */
export const MONITOR_MIN_AMBIENT_C = -6.7;
/** Time allowed to warm up, s: light duty, and heavy duty (from memory: manufacturer-defined, tens of minutes). */
export const WARMUP_LIMIT_LIGHT_S = 20 * 60;
export const WARMUP_LIMIT_HEAVY_S = 30 * 60;
/** The monitor is not judged when idling took more than this share of the warm-up time. */
export const MAX_IDLE_SHARE = 0.5;
/** A cold start: coolant at start this far or more below the criterion, °C. */
export const COLD_START_BELOW_CRITERION_C = 0;
/** Over-temperature: rating + this, °C, held this long, s. */
export const OVER_TEMPERATURE_ABOVE_RATING_C = 25;
export const OVER_TEMPERATURE_HOLD_S = 60;
/** Channel limits of SPN 110, °C, and the readings at them in one trip that set a circuit code. */
export const CIRCUIT_LOW_C = -40;
export const CIRCUIT_HIGH_C = 210;
export const CIRCUIT_READINGS_PER_TRIP = 3;
/** Samples further apart than this start a new trip, s. */
export const TRIP_GAP_S = 10 * 60;
/** Below this road speed a sample counts as idling, km/h. */
const IDLE_BELOW_KPH = 2;

export const MONITOR_THERMOSTAT = 'thermostat-monitor';
export const MONITOR_OVER_TEMPERATURE = 'over-temperature';
export const MONITOR_SENSOR_CIRCUIT = 'sensor-circuit';

/** Which monitor counts as the right answer for each simulated fault kind. */
export const MONITOR_EXPECTED: Readonly<Record<string, readonly string[]>> = Object.freeze({
  'thermostat-stuck-open': [MONITOR_THERMOSTAT],
  'thermostat-sticking': [],
  'radiator-fouling': [MONITOR_OVER_TEMPERATURE],
  'fan-failure': [MONITOR_OVER_TEMPERATURE],
  'coolant-loss': [MONITOR_OVER_TEMPERATURE],
  'sensor-stuck': [MONITOR_SENSOR_CIRCUIT],
  'sensor-spikes': [MONITOR_SENSOR_CIRCUIT],
  'sensor-dropouts': [MONITOR_SENSOR_CIRCUIT],
  'sensor-bias': [MONITOR_SENSOR_CIRCUIT],
});

export interface MonitorAlarm {
  kind: string;
  severity: 'warning' | 'critical';
  /** When the lamp came on (gateway time), epoch ms. */
  atMs: number;
}

export class OnBoardMonitor {
  readonly alarms: MonitorAlarm[] = [];
  private lastTs = -Infinity;
  private tripStartTs = 0;
  private judging = false;
  private idleS = 0;
  private failedTrips = 0;
  private hotSinceTs = Number.NaN;
  private circuitReadings = 0;
  private readonly lit = new Set<string>();

  /** `thermostatOpenC`: the registered nominal rating, °C; `heavyDuty`: the longer warm-up time. */
  constructor(
    private readonly thermostatOpenC: number,
    private readonly heavyDuty: boolean,
  ) {}

  /** One sample, in time order: ts (ms), coolant and ambient (°C; ambient NaN when absent), road speed (km/h). */
  push(ts: number, coolantC: number, ambientC: number, speedKph: number): void {
    const dtS = (ts - this.lastTs) / 1000;
    if (dtS > TRIP_GAP_S) this.startTrip(ts, coolantC, ambientC);
    else if (this.judging) this.judge(ts, coolantC, speedKph, dtS);
    this.lastTs = ts;
    if (coolantC <= CIRCUIT_LOW_C || coolantC >= CIRCUIT_HIGH_C) {
      if (++this.circuitReadings === CIRCUIT_READINGS_PER_TRIP) this.light(MONITOR_SENSOR_CIRCUIT, 'warning', ts);
      return;
    }
    if (coolantC >= this.thermostatOpenC + OVER_TEMPERATURE_ABOVE_RATING_C) {
      if (Number.isNaN(this.hotSinceTs)) this.hotSinceTs = ts;
      else if (ts - this.hotSinceTs >= OVER_TEMPERATURE_HOLD_S * 1000)
        this.light(MONITOR_OVER_TEMPERATURE, 'critical', ts);
    } else this.hotSinceTs = Number.NaN;
  }

  private startTrip(ts: number, coolantC: number, ambientC: number): void {
    this.tripStartTs = ts;
    this.idleS = 0;
    this.circuitReadings = 0;
    this.hotSinceTs = Number.NaN;
    const criterion = this.thermostatOpenC - THERMOSTAT_CRITERION_C;
    const ambientOk = Number.isNaN(ambientC) || ambientC >= MONITOR_MIN_AMBIENT_C;
    this.judging = ambientOk && coolantC < criterion - COLD_START_BELOW_CRITERION_C && coolantC > CIRCUIT_LOW_C;
  }

  private judge(ts: number, coolantC: number, speedKph: number, dtS: number): void {
    if (speedKph < IDLE_BELOW_KPH) this.idleS += dtS;
    const elapsedS = (ts - this.tripStartTs) / 1000;
    if (coolantC >= this.thermostatOpenC - THERMOSTAT_CRITERION_C && coolantC < CIRCUIT_HIGH_C) {
      this.judging = false;
      this.failedTrips = 0;
      return;
    }
    const limitS = this.heavyDuty ? WARMUP_LIMIT_HEAVY_S : WARMUP_LIMIT_LIGHT_S;
    if (elapsedS < limitS) return;
    this.judging = false;
    if (this.idleS > MAX_IDLE_SHARE * elapsedS) return;
    if (++this.failedTrips >= 2) this.light(MONITOR_THERMOSTAT, 'warning', ts);
  }

  private light(kind: string, severity: 'warning' | 'critical', ts: number): void {
    if (this.lit.has(kind)) return;
    this.lit.add(kind);
    this.alarms.push({ kind, severity, atMs: ts });
  }
}
