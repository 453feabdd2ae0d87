import { describe, expect, it } from 'vitest';
import { analyseSamples } from '../../services/analysis/analyse-samples.js';
import { DEFAULT_ANALYSIS_CONFIG as CFG, resolveConfig } from '../../services/analysis/config.js';
import { deriveFindings } from '../../services/analysis/derive-findings.js';
import { SAFETY_CAUTION } from '../../services/analysis/findings/finding.js';
import { riskScore } from '../../services/analysis/risk-score.js';
import { DEFAULT_VEHICLE_PROFILE as PROFILE } from '../../services/analysis/vehicle-profile.js';
import { concatSamples, syntheticDrive } from './synthetic-drive.js';
import { DAY_MS } from '../../services/time/durations.js';

const START = Date.UTC(2026, 9, 5);

/** One cold start per day at 06:00; from `faultDay` on the thermostat is stuck open (cool, slow). */
function history(days: number, faultDay = Infinity, fixedDay = Infinity) {
  const drives = [];
  for (let d = 0; d < days; d++) {
    const ambient = 8 + 4 * Math.sin(d);
    const faulty = d >= faultDay && d < fixedDay;
    drives.push(
      syntheticDrive({
        startMs: START + d * DAY_MS + 6 * 3_600_000,
        ambientC: ambient,
        startCoolantC: ambient,
        quantise: true,
        tauS: faulty ? 1400 : 500 + 20 * Math.cos(d),
        tInfC: faulty ? 72 : 115,
        regulatedC: faulty ? 200 : 90,
      }),
    );
  }
  return analyseSamples({ ...concatSamples(drives), nowMs: START + days * DAY_MS }, PROFILE, CFG);
}

describe('deriveFindings', () => {
  it('stays quiet on a healthy vehicle', () => {
    const h = history(30);
    expect(deriveFindings(h, PROFILE, { now: START + 30 * DAY_MS }, CFG)).toEqual([]);
  });

  it('reports a thermostat stuck open as a slow warm-up dated to its onset, with P0128 and the safety caution', () => {
    const h = history(30, 22);
    const findings = deriveFindings(h, PROFILE, { now: START + 30 * DAY_MS }, CFG);
    const slow = findings.find((f) => f.kind === 'slow-warmup')!;
    expect(slow).toBeDefined();
    expect(Math.floor((slow.firstSeen - START) / DAY_MS)).toBe(22);
    expect(slow.troubleCode).toBe('P0128');
    expect(slow.recommendedCheck.endsWith(SAFETY_CAUTION)).toBe(true);
    expect(slow.evidence.length).toBeGreaterThan(0);
    expect(JSON.parse(JSON.stringify(slow))).toEqual(slow);
  });

  it('keeps the same key as evidence accumulates, so the worker can upsert', () => {
    const h = history(30, 22);
    const keyAt = (day: number) =>
      deriveFindings(h, PROFILE, { now: START + day * DAY_MS }, CFG).find((f) => f.kind === 'slow-warmup')?.key;
    expect(keyAt(26)).toBeDefined();
    expect(keyAt(30)).toBe(keyAt(26));
  });

  it('starts a new baseline after the thermostat is replaced and resolves the finding', () => {
    const h = history(45, 22, 27);
    const fixedAt = START + 27 * DAY_MS;
    const after = deriveFindings(
      h,
      PROFILE,
      { now: START + 45 * DAY_MS, serviceEvents: [{ kind: 'thermostat-replaced', at: fixedAt }] },
      CFG,
    );
    expect(after.find((f) => f.kind === 'slow-warmup')).toBeUndefined();
  });

  it('ignores history after now', () => {
    const h = history(30, 22);
    expect(deriveFindings(h, PROFILE, { now: START + 21 * DAY_MS }, CFG)).toEqual([]);
  });
});

describe('riskScore', () => {
  const now = START;
  it('is 0 without open findings and 95 for one certain, current critical finding', () => {
    expect(riskScore([], now)).toBe(0);
    expect(riskScore([{ severity: 'critical', confidence: 1, lastSeen: now }], now)).toBe(95);
    expect(riskScore([{ severity: 'critical', confidence: 1, lastSeen: now, status: 'resolved' }], now)).toBe(0);
  });
  it("halves a finding's weight every half-life and never passes 100", () => {
    const fresh = riskScore([{ severity: 'warning', confidence: 1, lastSeen: now }], now);
    const old = riskScore([{ severity: 'warning', confidence: 1, lastSeen: now - CFG.riskHalfLifeDays * DAY_MS }], now);
    expect(old).toBeCloseTo(fresh / 2, 0);
    const many = Array.from({ length: 20 }, () => ({ severity: 'critical' as const, confidence: 1, lastSeen: now }));
    expect(riskScore(many, now)).toBeLessThanOrEqual(100);
  });
});

describe('resolveConfig', () => {
  it('applies caller overrides over the defaults and rejects non-finite values', () => {
    expect(resolveConfig('any-family', { hotMarginC: 12 }).hotMarginC).toBe(12);
    expect(resolveConfig('any-family').hotMarginC).toBe(CFG.hotMarginC);
    expect(() => resolveConfig('any-family', { hotMarginC: Number.NaN })).toThrow(RangeError);
  });
});
