import { analyseSamples, type SampleAnalysis } from '../../services/analysis/analyse-samples.js';
import { type AnalysisConfig, resolveConfig } from '../../services/analysis/config.js';
import { deriveFindings } from '../../services/analysis/derive-findings.js';
import { type EvaluatedVehicle, NAIVE_COLD, NAIVE_OVERHEAT } from './detection-table.js';
import { buildPeerBaseline, type PeerBaseline } from '../../services/analysis/peer-baseline.js';
import type { SampleArrays } from '../../services/analysis/sample-arrays.js';
import type { VehicleProfile } from '../../services/analysis/vehicle-profile.js';
import {
  isSensorFault,
  planFleet,
  type SimVehicle,
  simulateVehicle,
  truthGroup,
} from '../../services/simulator/index.js';
import { DAY_MS } from '../../services/time/durations.js';

/** The naive rules a fleet would write by hand. */
const NAIVE_HOT_C = 105;
const NAIVE_COLD_C = 70;

export interface FleetEvaluation {
  ours: EvaluatedVehicle[];
  naive: EvaluatedVehicle[];
  readings: number;
  /** Per vehicle: the findings present at the end (for inspection). */
  finalFindings: Map<string, ReturnType<typeof deriveFindings>>;
}

export interface EvaluationOptions {
  vehicles: number;
  days: number;
  seed: number;
  startMs: number;
}

type SimArrays = SampleArrays & { coolantTrue: Float64Array };
const CHANNELS = ['ts', 'coolant', 'ambient', 'speedKph', 'rpm', 'coolantTrue'] as const;

/** Simulates one vehicle into contiguous typed arrays (with the true coolant temperature). */
export function simulateToArrays(v: SimVehicle, opts: { startMs: number; days: number; seed: number }): SimArrays {
  const parts: SimArrays[] = [];
  let n = 0;
  for (const c of simulateVehicle(v, opts)) {
    const part = {} as SimArrays;
    for (const k of CHANNELS) part[k] = c[k].slice(0, c.length);
    parts.push(part);
    n += c.length;
  }
  const out = {} as SimArrays;
  for (const k of CHANNELS) out[k] = new Float64Array(n);
  let o = 0;
  for (const p of parts) {
    for (const k of CHANNELS) out[k].set(p[k], o);
    o += p.ts.length;
  }
  return out;
}

/** A physical fault is visible when it moves the true coolant temperature this much ... */
export const VISIBLE_DIFF_C = 5;
/** ... on at least this many days after onset, against the same vehicle without the fault. */
export const VISIBLE_MIN_DAYS = 3;

/**
 * Whether a physical fault shows at all: the vehicle is simulated again without its faults
 * (the simulator keeps its random streams independent of faults, so drives and weather are
 * identical) and the true coolant temperatures are compared sample by sample. Sensor faults
 * change the reported signal by construction and count as visible.
 */
export function faultVisible(v: SimVehicle, withFault: SimArrays, opts: EvaluationOptions): boolean {
  if (v.faults.every((f) => isSensorFault(f.kind))) return true;
  const clean = simulateToArrays({ ...v, faults: [] }, opts);
  const onset = Math.min(...v.faults.map((f) => f.onsetMs));
  const days = new Set<number>();
  for (let i = 0, j = 0; i < withFault.ts.length; i++) {
    const t = withFault.ts[i]!;
    while (j < clean.ts.length && clean.ts[j]! < t) j++;
    if (t < onset || clean.ts[j] !== t) continue;
    if (Math.abs(withFault.coolantTrue[i]! - clean.coolantTrue[j]!) >= VISIBLE_DIFF_C) days.add(Math.floor(t / DAY_MS));
  }
  return days.size >= VISIBLE_MIN_DAYS;
}

export const profileOf = (v: SimVehicle): VehicleProfile => ({
  engineFamily: v.engineFamily,
  thermostatOpenC: v.thermostatOpenC,
  capPressureKpa: v.capPressureKpa,
  glycolPercent: v.glycolPercent,
});

/** Simulates the evaluation fleet and analyses every vehicle's readings once. */
export interface AnalysedFleet {
  fleet: SimVehicle[];
  analyses: Map<string, SampleAnalysis>;
  visible: Map<string, boolean>;
  readings: number;
}

/** Simulates the evaluation fleet, judges fault visibility and analyses every vehicle once. */
export function analyseFleet(opts: EvaluationOptions): AnalysedFleet {
  const fleet = planFleet({ ...opts, scenario: 'evaluation' });
  const endMs = opts.startMs + opts.days * DAY_MS;
  const analyses = new Map<string, SampleAnalysis>();
  const visible = new Map<string, boolean>();
  let readings = 0;
  for (const v of fleet) {
    const arrays = simulateToArrays(v, opts);
    readings += arrays.ts.length;
    if (v.faults.length > 0) visible.set(v.vehicleId, faultVisible(v, arrays, opts));
    analyses.set(v.vehicleId, analyseSamples({ ...arrays, nowMs: endMs }, profileOf(v), resolveConfig(v.engineFamily)));
  }
  return { fleet, analyses, visible, readings };
}

/**
 * Replays deriveFindings at the end of every day with only the history known by then (peer
 * baselines rebuilt weekly from the runs known by then), recording when each finding first
 * appears. The naive rules are applied to the same day aggregates and runs.
 */
export function replayFindings(
  { fleet, analyses, visible }: Omit<AnalysedFleet, 'readings'>,
  opts: EvaluationOptions,
  overrides: Partial<AnalysisConfig> = {},
): Omit<FleetEvaluation, 'readings'> {
  const peerCache = new Map<string, PeerBaseline>();
  const peerAt = (family: string, nowMs: number): PeerBaseline => {
    const weekStart = opts.startMs + Math.floor((nowMs - opts.startMs) / (7 * DAY_MS)) * 7 * DAY_MS;
    const key = `${family}@${weekStart}`;
    let p = peerCache.get(key);
    if (!p) {
      const members = fleet.filter((v) => v.engineFamily === family);
      const runs = members.flatMap((v) => analyses.get(v.vehicleId)!.runs.filter((r) => r.endMs <= weekStart));
      p = buildPeerBaseline(runs, family, members.length);
      peerCache.set(key, p);
    }
    return p;
  };
  const ours: EvaluatedVehicle[] = [];
  const naive: EvaluatedVehicle[] = [];
  const finalFindings = new Map<string, ReturnType<typeof deriveFindings>>();
  for (const v of fleet) {
    const a = analyses.get(v.vehicleId)!;
    const profile = profileOf(v);
    const cfg = resolveConfig(v.engineFamily, overrides);
    const seen = new Set<string>();
    const alarms: { kind: string; atMs: number }[] = [];
    for (let d = 1; d <= opts.days; d++) {
      const now = opts.startMs + d * DAY_MS;
      const history = {
        runs: a.runs.filter((r) => r.endMs <= now),
        days: a.days.filter((x) => x.dayStartMs + DAY_MS <= now),
        sensorEvents: a.sensorEvents.filter((e) => e.runEndMs <= now),
      };
      const findings = deriveFindings(history, profile, { now, peer: peerAt(v.engineFamily, now) }, cfg);
      for (const f of findings) {
        if (seen.has(f.key)) continue;
        seen.add(f.key);
        alarms.push({ kind: f.kind, atMs: now });
      }
      if (d === opts.days) finalFindings.set(v.vehicleId, findings);
    }
    const naiveAlarms: { kind: string; atMs: number }[] = [];
    for (const day of a.days) {
      if ((day.rawMaxCoolantC ?? -Infinity) > NAIVE_HOT_C)
        naiveAlarms.push({ kind: NAIVE_OVERHEAT, atMs: day.dayStartMs + DAY_MS });
    }
    for (const r of a.runs) {
      if (r.startKind === 'cold' && r.coolantAtCheckC !== null && r.coolantAtCheckC < NAIVE_COLD_C) {
        naiveAlarms.push({ kind: NAIVE_COLD, atMs: Math.floor(r.startMs / DAY_MS) * DAY_MS + DAY_MS });
      }
    }
    const base = {
      vehicleId: v.vehicleId,
      group: truthGroup(v),
      faults: v.faults.map((f) => ({ kind: f.kind, onsetMs: f.onsetMs, visible: visible.get(v.vehicleId) ?? true })),
    };
    ours.push({ ...base, alarms });
    naive.push({ ...base, alarms: naiveAlarms });
  }
  return { ours, naive, finalFindings };
}

/** The whole evaluation: simulate, analyse, replay. */
export function evaluateFleet(opts: EvaluationOptions): FleetEvaluation {
  const analysed = analyseFleet(opts);
  return { ...replayFindings(analysed, opts), readings: analysed.readings };
}
