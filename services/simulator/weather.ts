import { Rng } from './prng.js';
import { anomalyAt, type WeatherAnomaly } from './weather-events.js';
import { DAY_MS, HOUR_MS } from '../time/durations.js';

/**
 * Ambient air temperature at a depot, °C:
 *   T_amb(t) = T_mean + A_season·cos(2π·(d − d_peak)/365.25) + A_day·cos(2π·(h − h_peak)/24) + w(t)
 * with d the day of year, h the local hour, and w(t) weather noise: an AR(1) (discrete
 * Ornstein–Uhlenbeck) process on an hourly grid, w_k = ρ·w_(k−1) + σ·√(1−ρ²)·N(0,1),
 * ρ = e^(−1 h / τ_weather), linearly interpolated between hours. Northern-hemisphere seasons.
 */

export type Climate = 'cold' | 'temperate' | 'hot';

export interface ClimateSpec {
  /** Annual mean, °C. */
  meanC: number;
  /** Seasonal half-range (summer mean − annual mean), °C. */
  seasonalAmplitudeC: number;
  /** Daily half-range, °C. */
  dailyAmplitudeC: number;
  /** Standard deviation of the weather noise, °C. */
  weatherSdC: number;
}

/** Invented but plausible climates (think inland north, maritime mid-latitude, hot desert). */
export const CLIMATES: Readonly<Record<Climate, ClimateSpec>> = {
  cold: { meanC: 3, seasonalAmplitudeC: 14, dailyAmplitudeC: 4, weatherSdC: 4 },
  temperate: { meanC: 11, seasonalAmplitudeC: 8, dailyAmplitudeC: 5, weatherSdC: 3 },
  hot: { meanC: 26, seasonalAmplitudeC: 10, dailyAmplitudeC: 7, weatherSdC: 2.5 },
};

/** Day of year of the warmest day. */
const SEASON_PEAK_DAY = 200;
/** Local hour of the warmest time of day. */
const DAY_PEAK_HOUR = 15;
/** Correlation time of weather systems, h. */
const WEATHER_TIME_CONSTANT_H = 48;

export class AmbientModel {
  private readonly spec: ClimateSpec;
  private readonly offsetMs: number;
  private readonly rng: Rng;
  private readonly rho = Math.exp(-1 / WEATHER_TIME_CONSTANT_H);
  private hourIndex = Number.NaN;
  private w0 = 0;
  private w1 = 0;

  private readonly anomalies: readonly WeatherAnomaly[];

  /**
   * utcOffsetHours shifts the daily cycle to local time; the seed fixes the weather; anomalies
   * (heat waves, cold snaps) are added on top.
   */
  constructor(climate: Climate, utcOffsetHours: number, seed: number, anomalies: readonly WeatherAnomaly[] = []) {
    this.spec = CLIMATES[climate];
    this.anomalies = anomalies;
    this.offsetMs = utcOffsetHours * HOUR_MS;
    this.rng = new Rng(seed);
  }

  /** Ambient temperature at epoch ms t, °C. Calls must not go back in time by more than an hour. */
  at(tMs: number): number {
    const local = tMs + this.offsetMs;
    const hour = Math.floor(local / HOUR_MS);
    this.advanceTo(hour);
    const frac = (local - hour * HOUR_MS) / HOUR_MS;
    const noise = this.w0 + (this.w1 - this.w0) * frac;
    const s = this.spec;
    const dayOfYear = dayOfYearUtc(local);
    const hourOfDay = (local % DAY_MS) / HOUR_MS;
    return (
      s.meanC +
      s.seasonalAmplitudeC * Math.cos((2 * Math.PI * (dayOfYear - SEASON_PEAK_DAY)) / 365.25) +
      s.dailyAmplitudeC * Math.cos((2 * Math.PI * (hourOfDay - DAY_PEAK_HOUR)) / 24) +
      noise +
      (this.anomalies.length > 0 ? anomalyAt(this.anomalies, tMs) : 0)
    );
  }

  private advanceTo(hour: number): void {
    if (this.hourIndex === hour) return;
    const sd = this.spec.weatherSdC * Math.sqrt(1 - this.rho * this.rho);
    if (Number.isNaN(this.hourIndex) || hour < this.hourIndex) {
      // First call: start the process in its stationary distribution.
      this.hourIndex = hour;
      this.w0 = this.spec.weatherSdC * this.rng.normal();
      this.w1 = this.rho * this.w0 + sd * this.rng.normal();
      return;
    }
    while (this.hourIndex < hour) {
      this.hourIndex++;
      this.w0 = this.w1;
      this.w1 = this.rho * this.w0 + sd * this.rng.normal();
    }
  }
}

/** Day of year (0-based, fractional) of an epoch-ms instant read as UTC. */
function dayOfYearUtc(ms: number): number {
  const year = new Date(ms).getUTCFullYear();
  return (ms - Date.UTC(year, 0, 1)) / DAY_MS;
}
