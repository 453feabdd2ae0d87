import type { DayAggregate } from './day-aggregates.js';
import { MS_PER_DAY, type SampleArrays } from './sample-arrays.js';
import { FLAG_ENGINE_ON, FLAG_IMPLAUSIBLE } from './sample-flags.js';

/**
 * What the vehicle-bus channels (SAE J1939 SPN 108 barometric pressure, SPN 111 coolant level,
 * SPN 109 coolant pressure) say about one UTC day. Present on a DayAggregate (`bus`) only for
 * days that have any of them, so vehicles that send none keep exactly the day records they had.
 */
export interface BusDayStats {
  /** Lowest atmospheric pressure measured, kPa absolute (boiling point at altitude). */
  barometricMinKpa: number | null;
  /** Mean coolant level while the engine ran, % of full, and the number of samples behind it. */
  coolantLevelMeanPct: number | null;
  coolantLevelSamples: number;
  /** Running samples with coolant at or above the thermostat's opening temperature that carry a coolant pressure. */
  hotPressureSamples: number;
  /** Highest coolant pressure among them, kPa gauge. */
  hotPressureMaxKpa: number | null;
}

/**
 * Per-day statistics of the bus channels, keyed by day start (ms); empty when the arrays carry
 * none. `flags` are the analysis' sample flags (engine on, implausible); `hotC` is the coolant
 * temperature above which a sealed system has built pressure (the thermostat's opening temperature).
 * @example busDayStats(arrays, flags, 88).get(Date.parse('2026-10-05'))?.barometricMinKpa
 */
export function busDayStats(samples: SampleArrays, flags: Uint8Array, hotC: number): Map<number, BusDayStats> {
  const out = new Map<number, BusDayStats>();
  const baro = samples.barometricKpa;
  const level = samples.coolantLevelPct;
  const pressure = samples.coolantPressureKpa;
  if (!baro && !level && !pressure) return out;
  const { ts, coolant } = samples;
  const n = ts.length;
  let i = 0;
  while (i < n) {
    const dayStart = Math.floor(ts[i]! / MS_PER_DAY) * MS_PER_DAY;
    const dayEnd = dayStart + MS_PER_DAY;
    let baroMin = Infinity,
      levelSum = 0,
      levelN = 0,
      hotN = 0,
      hotMax = -Infinity,
      any = false;
    for (; i < n && ts[i]! < dayEnd; i++) {
      const b = baro ? baro[i]! : NaN;
      if (b === b) {
        any = true;
        if (b < baroMin) baroMin = b;
      }
      const f = flags[i]!;
      if ((f & FLAG_ENGINE_ON) === 0) continue;
      const l = level ? level[i]! : NaN;
      if (l === l) {
        any = true;
        levelSum += l;
        levelN++;
      }
      const p = pressure ? pressure[i]! : NaN;
      if (p === p) {
        any = true;
        if ((f & FLAG_IMPLAUSIBLE) === 0 && coolant[i]! >= hotC) {
          hotN++;
          if (p > hotMax) hotMax = p;
        }
      }
    }
    if (!any) continue;
    out.set(dayStart, {
      barometricMinKpa: Number.isFinite(baroMin) ? baroMin : null,
      coolantLevelMeanPct: levelN > 0 ? levelSum / levelN : null,
      coolantLevelSamples: levelN,
      hotPressureSamples: hotN,
      hotPressureMaxKpa: hotN > 0 ? hotMax : null,
    });
  }
  return out;
}

/** Attaches each day's bus statistics to its aggregate (in place). */
export function attachBusStats(days: DayAggregate[], stats: ReadonlyMap<number, BusDayStats>): void {
  if (stats.size === 0) return;
  for (const d of days) {
    const b = stats.get(d.dayStartMs);
    if (b) d.bus = b;
  }
}
