import type { AnalysisConfig } from './config.js';
import type { RunMetrics } from './run-metrics.js';

export type SensorEventKind = 'out-of-range' | 'implausible-rate' | 'stuck' | 'cold-soak-mismatch' | 'dropout';

/** Implausible coolant-sensor behaviour in one run (one event per run and kind). */
export interface SensorEvent {
  kind: SensorEventKind;
  /** The run it occurred in (with `kind`, the event's identity). */
  runStartMs: number;
  runEndMs: number;
  /** Samples (out-of-range, implausible-rate) or gaps (dropout) involved; 1 for run-level checks. */
  count: number;
  /** Kind-specific number: offset from ambient °C, missing s, or start coolant °C; else null. */
  value: number | null;
}

/**
 * Sensor events of a run, from its metrics.
 * @example sensorEventsOfRun(run, cfg).map((e) => e.kind) // ['implausible-rate']
 */
export function sensorEventsOfRun(engineRun: RunMetrics, cfg: AnalysisConfig): SensorEvent[] {
  const out: SensorEvent[] = [];
  const ev = (kind: SensorEventKind, count: number, value: number | null) =>
    out.push({ kind, runStartMs: engineRun.startMs, runEndMs: engineRun.endMs, count, value });
  if (engineRun.outOfRangeCount > 0) ev('out-of-range', engineRun.outOfRangeCount, null);
  if (engineRun.rateFlagCount > 0) ev('implausible-rate', engineRun.rateFlagCount, null);
  if (engineRun.stuck) ev('stuck', 1, engineRun.startCoolantC);
  if (engineRun.coldSoakOffsetC !== null && Math.abs(engineRun.coldSoakOffsetC) > cfg.coldSoakToleranceC)
    ev('cold-soak-mismatch', 1, engineRun.coldSoakOffsetC);
  if (engineRun.dropoutCount > 0) ev('dropout', engineRun.dropoutCount, engineRun.missingS);
  return out;
}
