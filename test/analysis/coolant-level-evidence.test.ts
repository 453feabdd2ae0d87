import { describe, expect, it } from 'vitest';
import { analyseSamples } from '../../services/analysis/analyse-samples.js';
import { resolveConfig } from '../../services/analysis/config.js';
import { deriveFindings } from '../../services/analysis/derive-findings.js';
import type { SampleArrays } from '../../services/analysis/sample-arrays.js';
import { planFleet, type SimVehicle, simulateVehicle } from '../../services/simulator/index.js';

const OPTS = { vehicles: 24, days: 42, seed: 3, startMs: Date.UTC(2026, 8, 7) };

/** The vehicle's samples with the coolant level the bus carries (SPN 111). */
function withLevel(v: SimVehicle): SampleArrays {
  const cols = {
    ts: [] as number[],
    coolant: [] as number[],
    ambient: [] as number[],
    speedKph: [] as number[],
    rpm: [] as number[],
    level: [] as number[],
  };
  for (const c of simulateVehicle(v, OPTS)) {
    for (let i = 0; i < c.length; i++) {
      cols.ts.push(c.ts[i]!);
      cols.coolant.push(c.coolant[i]!);
      cols.ambient.push(c.ambient[i]!);
      cols.speedKph.push(c.speedKph[i]!);
      cols.rpm.push(c.rpm[i]!);
      cols.level.push(c.coolantLevelPct![i]!);
    }
  }
  return {
    ts: Float64Array.from(cols.ts),
    coolant: Float64Array.from(cols.coolant),
    ambient: Float64Array.from(cols.ambient),
    speedKph: Float64Array.from(cols.speedKph),
    rpm: Float64Array.from(cols.rpm),
    coolantLevelPct: Float64Array.from(cols.level),
  };
}

function findingsOf(v: SimVehicle) {
  const profile = {
    engineFamily: v.engineFamily,
    thermostatOpenC: v.thermostatOpenC,
    capPressureKpa: v.capPressureKpa,
    glycolPercent: v.glycolPercent,
  };
  const cfg = resolveConfig(v.engineFamily);
  const s = withLevel(v);
  const a = analyseSamples(s, profile, cfg);
  return deriveFindings(
    { runs: a.runs, days: a.days, sensorEvents: a.sensorEvents },
    profile,
    { now: s.ts[s.ts.length - 1]! },
    cfg,
  );
}

describe('the coolant level on the vehicle bus as evidence', () => {
  const fleet = planFleet({ ...OPTS, scenario: 'evaluation' });

  it('finds coolant loss from the falling level of a simulated leaking vehicle', () => {
    const leaking = fleet.find((v) => v.faults.some((f) => f.kind === 'coolant-loss'))!;
    expect(leaking).toBeDefined();
    const loss = findingsOf(leaking).find((f) => f.kind === 'coolant-loss');
    expect(loss).toMatchObject({ subKind: 'level-falling' });
  });

  it('finds none on healthy vehicles, whose level stays put', () => {
    const healthy = fleet.filter((v) => v.faults.length === 0).slice(0, 4);
    expect(healthy.length).toBeGreaterThan(0);
    for (const v of healthy) expect(findingsOf(v).map((f) => f.kind)).not.toContain('coolant-loss');
  });
});
