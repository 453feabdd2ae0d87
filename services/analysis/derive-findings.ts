import { type AnalysisConfig, DEFAULT_ANALYSIS_CONFIG } from './config.js';
import type { DayAggregate } from './day-aggregates.js';
import { coolantLossFindings } from './findings/coolant-loss.js';
import { boilMarginFinding, freezeRiskFinding } from './findings/coolant-margins.js';
import type { Finding, Severity } from './findings/finding.js';
import { overheatingTrendFinding } from './findings/overheating-trend.js';
import { sensorFaultFindings } from './findings/sensor-fault.js';
import { baselineStartMs, type ServiceEvent } from './findings/service-events.js';
import { overshootFinding, slowWarmupFinding } from './findings/thermostat-findings.js';
import type { PeerBaseline } from './peer-baseline.js';
import { coolantBoilingPointC } from './physics/boiling-point.js';
import type { RunMetrics } from './run-metrics.js';
import type { SensorEvent } from './sensor-events.js';
import type { VehicleProfile } from './vehicle-profile.js';

/** A vehicle's stored analysis results (any order; all times epoch ms). */
export interface VehicleHistory {
  runs: readonly RunMetrics[];
  days: readonly DayAggregate[];
  sensorEvents: readonly SensorEvent[];
}

export interface FindingContext {
  /** Time of analysis, epoch ms; history after it is ignored. */
  now: number;
  /** The engine family's peer baseline, if one has been built. */
  peer?: PeerBaseline | null;
  /** Repairs: each restarts the baselines of the finding kinds it addresses. */
  serviceEvents?: readonly ServiceEvent[];
}

/** Sensor sub-kinds under which nothing the sensor says about the engine can be trusted. */
const COMPROMISING_SENSOR_FAULTS = new Set(['stuck', 'bias']);
const SEVERITY_RANK: Record<Severity, number> = { critical: 0, warning: 1, advisory: 2 };

/**
 * The open findings of one vehicle at `now`, from its stored runs, days and sensor events,
 * its engine family's peer baseline and its service events. Deterministic: the same
 * history, context and config give the same findings (with the same keys).
 * @example deriveFindings({ runs, days, sensorEvents }, profile, { now: Date.now() }, resolveConfig(profile.engineFamily))
 */
export function deriveFindings(
  history: VehicleHistory,
  profile: VehicleProfile,
  context: FindingContext,
  cfg: AnalysisConfig = DEFAULT_ANALYSIS_CONFIG,
): Finding[] {
  const { now } = context;
  const peer = context.peer ?? null;
  const events = context.serviceEvents ?? [];
  const runs = history.runs.filter((r) => r.startMs <= now && !r.truncatedStart).sort((a, b) => a.startMs - b.startMs);
  const days = history.days.filter((d) => d.dayStartMs <= now).sort((a, b) => a.dayStartMs - b.dayStartMs);
  const sensorEvents = history.sensorEvents.filter((e) => e.runStartMs <= now);
  if (runs.length === 0 && days.length === 0) return [];
  const historyStart = Math.min(runs[0]?.startMs ?? Infinity, days[0]?.dayStartMs ?? Infinity);
  const start = (kind: Finding['kind']) => baselineStartMs(kind, events, now, historyStart);

  const sensorStart = start('sensor-fault');
  const findings = sensorFaultFindings(
    runs.filter((r) => r.startMs >= sensorStart),
    days.filter((d) => d.dayStartMs + 86_400_000 > sensorStart),
    sensorEvents.filter((e) => e.runStartMs >= sensorStart),
    sensorStart,
    now,
    cfg,
  );
  const compromisedFrom = Math.min(
    Infinity,
    ...findings.filter((f) => COMPROMISING_SENSOR_FAULTS.has(f.subKind ?? '')).map((f) => f.firstSeen),
  );
  const engineRuns = (from: number) =>
    runs.filter((r) => r.startMs >= from && r.startMs < compromisedFrom && !r.excludedForSensor);
  const engineDays = (from: number) => days.filter((d) => d.dayStartMs >= from && d.dayStartMs < compromisedFrom);
  // The site's atmospheric pressure from the profile (altitude), else the config's sea level.
  const boilingPointC = coolantBoilingPointC(
    profile.capPressureKpa,
    profile.glycolPercent,
    profile.atmosphericPressureKpa ?? cfg.atmosphericPressureKpa,
  );
  // Where the vehicle bus measured the atmospheric pressure (SPN 108 / PID 0x33), the day's lowest one.
  const boilingOn = (d: DayAggregate) => {
    const kpa = d.bus?.barometricMinKpa;
    return kpa === null || kpa === undefined
      ? boilingPointC
      : coolantBoilingPointC(profile.capPressureKpa, profile.glycolPercent, kpa);
  };

  const slow = start('slow-warmup');
  const over = start('overshoot');
  const trend = start('overheating-trend');
  const boil = start('boil-margin');
  const freeze = start('freeze-risk');
  const loss = start('coolant-loss');
  const candidates = [
    slowWarmupFinding(engineRuns(slow), slow, peer, now, cfg),
    overshootFinding(engineRuns(over), over, peer, now, cfg),
    overheatingTrendFinding(engineDays(trend), trend, boilingPointC, now, cfg),
    boilMarginFinding(engineDays(boil), boil, boilingOn, now, cfg),
    freezeRiskFinding(
      days.filter((d) => d.dayStartMs >= freeze),
      freeze,
      profile.glycolPercent,
      now,
      cfg,
    ),
  ];
  for (const f of candidates) if (f) findings.push(f);
  // Level and pressure are other sensors than the coolant temperature: a temperature-sensor fault does not hide them.
  findings.push(
    ...coolantLossFindings(
      days.filter((d) => d.dayStartMs >= loss),
      loss,
      now,
      cfg,
    ),
  );
  return findings.sort((a, b) => SEVERITY_RANK[a.severity] - SEVERITY_RANK[b.severity] || b.confidence - a.confidence);
}
