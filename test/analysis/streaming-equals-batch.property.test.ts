import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { analyseSamples } from '../../services/analysis/analyse-samples.js';
import { resolveConfig } from '../../services/analysis/config.js';
import type { DayAggregate } from '../../services/analysis/day-aggregates.js';
import { deriveFindings } from '../../services/analysis/derive-findings.js';
import type { RunMetrics } from '../../services/analysis/run-metrics.js';
import { type SampleArrays, utcDayStartMs } from '../../services/analysis/sample-arrays.js';
import type { SensorEvent } from '../../services/analysis/sensor-events.js';
import { DEFAULT_VEHICLE_PROFILE } from '../../services/analysis/vehicle-profile.js';
import { planFieldFleet } from '../../services/simulator/field-scenario.js';
import { simulateToArrays } from './evaluation-fleet.js';

/**
 * Streaming = batch (issue 14), the library's part: the stored history a worker builds from
 * readings that arrive in arbitrary pieces (resuming as `services/analysis/README.md` describes,
 * the window widened over stored runs that reach into it) must be the history of one analysis of
 * all of them, and so give the same findings at the end. Random arrival patterns: 1–8 cut points
 * anywhere in the period, each piece analysed on arrival. Not covered here: findings raised on the
 * way and withdrawn later (the evaluation's streamed column counts those).
 */
const START_MS = Date.UTC(2027, 0, 4);
const DAYS = 16;
const CFG = resolveConfig();
const PROFILE = DEFAULT_VEHICLE_PROFILE;

/** The first faulty vehicle of a small tuning-seed field fleet: a cold-climate tractor whose sensor spikes from day 8.4. */
const SEED = 1002;
const vehicle = planFieldFleet({ startMs: START_MS, days: DAYS, seed: SEED, vehicles: 4 })[2]!;
const all = simulateToArrays(vehicle, { startMs: START_MS, days: DAYS, seed: SEED });
const N = all.ts.length;

function slice(s: SampleArrays, a: number, b: number): SampleArrays {
  return {
    ts: s.ts.subarray(a, b),
    coolant: s.coolant.subarray(a, b),
    ambient: s.ambient.subarray(a, b),
    speedKph: s.speedKph.subarray(a, b),
    rpm: s.rpm.subarray(a, b),
  };
}
const firstAtOrAfter = (ms: number) => {
  let lo = 0;
  let hi = N;
  while (lo < hi) {
    const m = (lo + hi) >> 1;
    if (all.ts[m]! < ms) lo = m + 1;
    else hi = m;
  }
  return lo;
};

interface Stored {
  runs: Map<number, RunMetrics>;
  days: Map<number, DayAggregate>;
  events: SensorEvent[];
  resumeFromMs: number | null;
}

/** One arrival: the readings [prev, upTo) are new; the window is analysed as the worker does. */
function arrive(st: Stored, prev: number, upTo: number): void {
  if (upTo <= prev) return;
  let fromMs = Math.min(st.resumeFromMs ?? Infinity, utcDayStartMs(all.ts[prev]!));
  // Widen the window over any stored run that reaches into it (as extendOverStoredRuns does).
  for (let moved = true; moved;) {
    moved = false;
    for (const r of st.runs.values()) {
      if (r.startMs < fromMs && r.endMs >= fromMs - CFG.runGapS * 1000 && utcDayStartMs(r.startMs) < fromMs) {
        fromMs = utcDayStartMs(r.startMs);
        moved = true;
      }
    }
  }
  const a = firstAtOrAfter(fromMs);
  const nowMs = all.ts[upTo - 1]!;
  const result = analyseSamples(
    { ...slice(all, a, upTo), ...(a > 0 ? { previousRunEndMs: all.ts[a - 1]! } : {}), nowMs },
    PROFILE,
    CFG,
  );
  for (const k of [...st.runs.keys()]) if (k >= fromMs) st.runs.delete(k);
  for (const k of [...st.days.keys()]) if (k >= fromMs) st.days.delete(k);
  st.events = st.events.filter((e) => e.runStartMs < fromMs);
  for (const r of result.runs) if (!r.truncatedStart) st.runs.set(r.startMs, r);
  for (const d of result.days) st.days.set(d.dayStartMs, d);
  st.events.push(...result.sensorEvents);
  st.resumeFromMs = result.resumeFromMs;
}

const batch = analyseSamples({ ...all, nowMs: all.ts[N - 1]! }, PROFILE, CFG);
const kinds = (h: {
  runs: readonly RunMetrics[];
  days: readonly DayAggregate[];
  sensorEvents: readonly SensorEvent[];
}) => deriveFindings(h, PROFILE, { now: all.ts[N - 1]! }, CFG).map((f) => `${f.key} ${f.severity}`);

describe('streaming equals batch in the analysis library', () => {
  it('builds the same runs, days and findings from readings arriving in random pieces as from one analysis', () => {
    expect(N).toBeGreaterThan(10_000);
    const expectedFindings = kinds(batch);
    // The fault shows: the comparison is not between two empty lists.
    expect(expectedFindings.length).toBeGreaterThan(0);
    fc.assert(
      fc.property(fc.uniqueArray(fc.integer({ min: 1, max: N - 1 }), { minLength: 1, maxLength: 8 }), (cuts) => {
        const st: Stored = { runs: new Map(), days: new Map(), events: [], resumeFromMs: null };
        let prev = 0;
        for (const c of [...cuts.sort((x, y) => x - y), N]) {
          arrive(st, prev, c);
          prev = c;
        }
        const runs = [...st.runs.values()].sort((x, y) => x.startMs - y.startMs);
        const days = [...st.days.values()].sort((x, y) => x.dayStartMs - y.dayStartMs);
        expect(runs.map((r) => r.startMs)).toEqual(batch.runs.filter((r) => !r.truncatedStart).map((r) => r.startMs));
        expect(days.map((d) => [d.dayStartMs, d.sampleCount, d.peakCoolantC])).toEqual(
          batch.days.map((d) => [d.dayStartMs, d.sampleCount, d.peakCoolantC]),
        );
        expect(kinds({ runs, days, sensorEvents: st.events })).toEqual(expectedFindings);
      }),
      { numRuns: 25 },
    );
  });
});
