import { describe, expect, it } from 'vitest';
import { DEFAULT_ANALYSIS_CONFIG as CFG } from '../../../services/analysis/config.js';
import type { DayAggregate } from '../../../services/analysis/day-aggregates.js';
import { boilMarginFinding } from '../../../services/analysis/findings/coolant-margins.js';
import { coolantBoilingPointC } from '../../../services/analysis/physics/boiling-point.js';
import { DAY_MS } from '../../../services/time/durations.js';

const START = Date.UTC(2027, 6, 5);
// 100 kPa cap, 50 % glycol at sea level: 128.7 °C (IAPWS-IF97 + Raoult, test/reference/boiling-point.test.ts).
const BOILING_C = coolantBoilingPointC(100, 50, 101.325);
const day = (i: number, peakCoolantC: number): DayAggregate =>
  ({ dayStartMs: START + i * DAY_MS, peakCoolantC }) as DayAggregate;
const now = START + 7 * DAY_MS;

describe('boil margin needs persistence or a critical margin', () => {
  it('stays quiet on a healthy heavy engine climbing to 119 °C on hot days (about 10 °C below boiling)', () => {
    // Such days raised a warning under the old 10 °C margin.
    expect(boilMarginFinding([day(1, 119), day(3, 118.5), day(5, 119.2)], 0, BOILING_C, now, CFG)).toBeNull();
  });

  it('stays quiet on one day within 5 °C that does not reach the critical margin', () => {
    expect(boilMarginFinding([day(2, 113), day(4, 124.5)], 0, BOILING_C, now, CFG)).toBeNull();
  });

  it('warns on two days within 5 °C of boiling, dated at the first of them', () => {
    const f = boilMarginFinding([day(1, 110), day(3, 124.5), day(5, 124)], 0, BOILING_C, now, CFG)!;
    expect(f.severity).toBe('warning');
    expect(f.firstSeen).toBe(START + 3 * DAY_MS);
    expect(f.metrics.daysThin).toBe(2);
  });

  it('is critical on a single day within the critical margin (about to boil or boiled)', () => {
    expect(boilMarginFinding([day(4, BOILING_C - 2)], 0, BOILING_C, now, CFG)!.severity).toBe('critical');
    expect(boilMarginFinding([day(4, BOILING_C + 0.5)], 0, BOILING_C, now, CFG)!.severity).toBe('critical');
  });
});
