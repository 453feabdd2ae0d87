import { describe, expect, it } from 'vitest';
import { analyseSamples } from '../../services/analysis/analyse-samples.js';
import { DEFAULT_ANALYSIS_CONFIG as CFG } from '../../services/analysis/config.js';
import type { DayAggregate } from '../../services/analysis/day-aggregates.js';
import { boilMarginFinding } from '../../services/analysis/findings/coolant-margins.js';
import type { SampleArrays } from '../../services/analysis/sample-arrays.js';
import { DEFAULT_VEHICLE_PROFILE as PROFILE } from '../../services/analysis/vehicle-profile.js';
import { concatSamples, syntheticDrive } from './synthetic-drive.js';

const MIN_MS = 60_000;
const T0 = Date.UTC(2026, 9, 5, 6);

/** Removes the samples strictly between fromMs and toMs (a hole in the stream). */
function withHole(s: SampleArrays, fromMs: number, toMs: number): SampleArrays {
  const keep = [...s.ts].map((t, i) => (t <= fromMs || t >= toMs ? i : -1)).filter((i) => i >= 0);
  const pick = (a: Float64Array) => Float64Array.from(keep, (i) => a[i]!);
  return {
    ts: pick(s.ts),
    coolant: pick(s.coolant),
    ambient: pick(s.ambient),
    speedKph: pick(s.speedKph),
    rpm: pick(s.rpm),
  };
}

describe('missing data', () => {
  it('does not count a short engine-off delivery stop inside a run as missing data', () => {
    // Two legs of a delivery round, 5 min apart (below the 10 min run gap): the driver stops,
    // switches off, and the gateway sends nothing until the engine restarts at a standstill.
    const first = syntheticDrive({ startMs: T0, ambientC: 10, startCoolantC: 10, durationS: 1800, quantise: true });
    first.speedKph[first.speedKph.length - 1] = 0;
    const second = syntheticDrive({
      startMs: T0 + 35 * MIN_MS,
      ambientC: 10,
      startCoolantC: 88,
      idleS: 60,
      durationS: 1800,
      quantise: true,
    });
    const r = analyseSamples({ ...concatSamples([first, second]), nowMs: T0 + 3_600_000 * 3 }, PROFILE, CFG);
    expect(r.runs).toHaveLength(1);
    expect(r.days[0]!.missingS).toBe(0);
    expect(r.days[0]!.missingFraction).toBe(0);
    expect(r.runs[0]!.dropoutCount).toBe(0);
  });

  it('counts a gap while the vehicle drives on both sides as missing data', () => {
    const drive = withHole(
      syntheticDrive({ startMs: T0, ambientC: 10, startCoolantC: 10, durationS: 3600, quantise: true }),
      T0 + 20 * MIN_MS,
      T0 + 25 * MIN_MS,
    );
    const r = analyseSamples({ ...drive, nowMs: T0 + 3_600_000 * 3 }, PROFILE, CFG);
    // The hole spans 5 min between two samples 10 s apart at its edges: 290 s are missing.
    expect(r.days[0]!.dropoutCount).toBe(1);
    expect(r.days[0]!.missingS).toBeCloseTo(290, 6);
    expect(r.runs[0]!.dropoutCount).toBe(1);
  });
});

describe('boil-margin wording', () => {
  const day = (peakCoolantC: number): DayAggregate =>
    ({ dayStartMs: T0 - 6 * 3_600_000, peakCoolantC }) as DayAggregate;
  const now = T0 + 86_400_000;

  it('says how far below the boiling point the peak stayed while there is a margin', () => {
    expect(boilMarginFinding([day(120.2)], 0, 122, now, CFG)!.summary).toContain(
      'only 1.8 °C below its boiling point of 122 °C',
    );
  });

  it('never reads "below" with a negative margin once the peak reaches or passes the boiling point', () => {
    const above = boilMarginFinding([day(122.3)], 0, 122, now, CFG)!;
    expect(above.summary).not.toMatch(/below| -\d/);
    expect(above.summary).toContain('reached 122.3 °C, 0.3 °C above its boiling point of 122 °C');
    expect(above.severity).toBe('critical');
    expect(boilMarginFinding([day(122)], 0, 122, now, CFG)!.summary).toContain('at its boiling point');
  });
});
