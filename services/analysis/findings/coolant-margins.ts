import type { AnalysisConfig } from '../config.js';
import type { DayAggregate } from '../day-aggregates.js';
import { freezingPointC } from '../physics/freezing-point.js';
import { type Finding, findingKey, round, SAFETY_CAUTION, type Severity } from './finding.js';
import { utcDay } from '../sample-arrays.js';
import { DAY_MS } from '../../time/durations.js';

/** Days of recent history the margins look at. */
const MARGIN_WINDOW_DAYS = 7;
const FREEZE_WINDOW_DAYS = 30;

/** Distinct UTC days among the given day aggregates. */
function thinDays(days: readonly DayAggregate[]): number {
  return new Set(days.map((d) => Math.floor(d.dayStartMs / DAY_MS))).size;
}

/**
 * Boil margin: the daily peak came within `boilMarginWarnC` of the coolant's boiling point at
 * cap pressure on at least `boilMarginMinDays` days of the last week, or within
 * `boilMarginCriticalC` (critical) on one. `boilingPointC` may
 * depend on the day: with the atmospheric pressure measured that day (SAE J1939 SPN 108, at
 * altitude lower than the sea-level default) the coolant boils earlier.
 */
export function boilMarginFinding(
  days: readonly DayAggregate[],
  baselineStart: number,
  boilingPointC: number | ((day: DayAggregate) => number),
  now: number,
  cfg: AnalysisConfig,
): Finding | null {
  const boilingOn = typeof boilingPointC === 'number' ? () => boilingPointC : boilingPointC;
  const recent = days.filter(
    (d) => d.peakCoolantC !== null && d.dayStartMs > now - MARGIN_WINDOW_DAYS * DAY_MS && d.dayStartMs <= now,
  );
  const thin = recent.filter((d) => boilingOn(d) - d.peakCoolantC! < cfg.boilMarginWarnC);
  if (thin.length === 0) return null;
  // One hot climb is not a trend: a healthy heavy engine in heat touches 115–119 °C on some days.
  // Two thin days, or one at the critical margin (about to boil, or boiled), raise it.
  const closest = Math.min(...thin.map((d) => boilingOn(d) - d.peakCoolantC!));
  if (thinDays(thin) < cfg.boilMarginMinDays && closest > cfg.boilMarginCriticalC) return null;
  const worst = thin.reduce((a, b) => (boilingOn(b) - b.peakCoolantC! < boilingOn(a) - a.peakCoolantC! ? b : a));
  const worstBoilingC = boilingOn(worst);
  const margin = worstBoilingC - worst.peakCoolantC!;
  const severity: Severity = margin <= cfg.boilMarginCriticalC ? 'critical' : 'warning';
  return {
    key: findingKey('boil-margin', null, baselineStart),
    kind: 'boil-margin',
    subKind: null,
    severity,
    confidence: round(Math.min(1, 0.6 + 0.1 * thin.length), 3),
    firstSeen: thin[0]!.dayStartMs,
    lastSeen: thin[thin.length - 1]!.dayStartMs,
    summary: boilMarginSummary(worst.dayStartMs, worst.peakCoolantC!, margin, worstBoilingC),
    recommendedCheck:
      'Check the pressure cap, coolant level and mixture, radiator and fan before the next heavy duty. ' +
      SAFETY_CAUTION,
    troubleCode: 'P0217',
    metrics: {
      boilingPointC: round(worstBoilingC, 1),
      minMarginC: round(margin, 1),
      daysThin: thin.length,
      ...(worst.bus?.barometricMinKpa != null ? { measuredAtmosphericKpa: round(worst.bus.barometricMinKpa, 1) } : {}),
    },
    evidence: thin.map((d) => ({
      at: d.dayStartMs,
      scope: 'day' as const,
      metric: 'peakCoolantC',
      value: round(d.peakCoolantC!),
      expected: round(boilingOn(d)),
      z: null,
    })),
  };
}

/**
 * The boil-margin sentence: "only x °C below" while there is a margin, "at" or "x °C above"
 * once the peak has reached the boiling point (the coolant has then boiled or the cap has lifted).
 */
function boilMarginSummary(dayMs: number, peakC: number, marginC: number, boilingPointC: number): string {
  const shownMarginC = round(marginC, 1);
  // Whole degrees read well while there is a margin; at or past the boiling point the tenths
  // show why "above" is said of two temperatures that would round to the same degree.
  const digits = shownMarginC > 1 ? 0 : 1;
  const reached = `On ${utcDay(dayMs)} the coolant reached ${round(peakC, digits)} °C, `;
  const boiling = `boiling point of ${round(boilingPointC, digits)} °C under the pressure cap`;
  if (shownMarginC > 0) return `${reached}only ${shownMarginC} °C below its ${boiling}.`;
  if (shownMarginC === 0) return `${reached}at its ${boiling}: it may have boiled or lifted the cap.`;
  return `${reached}${round(-marginC, 1)} °C above its ${boiling}: it has boiled or lifted the cap.`;
}

/**
 * Freeze risk: the coldest recent ambient came within `freezeMarginC` of the coolant's
 * freezing point (Melinder table), or the mix is richer than the table (protection falls).
 */
export function freezeRiskFinding(
  days: readonly DayAggregate[],
  baselineStart: number,
  glycolPercent: number,
  now: number,
  cfg: AnalysisConfig,
): Finding | null {
  const recent = days.filter(
    (d) => d.ambientMinC !== null && d.dayStartMs > now - FREEZE_WINDOW_DAYS * DAY_MS && d.dayStartMs <= now,
  );
  if (recent.length === 0) return null;
  const freezeC = freezingPointC(glycolPercent);
  const coldest = recent.reduce((a, b) => (b.ambientMinC! < a.ambientMinC! ? b : a));
  const base = {
    key: findingKey('freeze-risk', null, baselineStart),
    kind: 'freeze-risk' as const,
    subKind: null,
    recommendedCheck:
      "Measure the coolant's freeze protection (refractometer) and correct the glycol mix. " + SAFETY_CAUTION,
    troubleCode: null,
  };
  if (freezeC === null) {
    return {
      ...base,
      severity: 'advisory',
      confidence: 0.5,
      firstSeen: recent[0]!.dayStartMs,
      lastSeen: coldest.dayStartMs,
      summary: `The coolant is recorded as ${glycolPercent} % glycol; mixes richer than about 60 % freeze at higher temperatures again.`,
      metrics: { glycolPercent, coldestAmbientC: round(coldest.ambientMinC!) },
      evidence: [],
    };
  }
  const close = recent.filter((d) => d.ambientMinC! < freezeC + cfg.freezeMarginC);
  if (close.length === 0) return null;
  return {
    ...base,
    severity: coldest.ambientMinC! <= freezeC ? 'critical' : 'warning',
    confidence: round(Math.min(1, 0.6 + 0.1 * close.length), 3),
    firstSeen: close[0]!.dayStartMs,
    lastSeen: close[close.length - 1]!.dayStartMs,
    summary:
      `Air temperatures down to ${round(coldest.ambientMinC!, 0)} °C come within ${round(coldest.ambientMinC! - freezeC, 1)} °C of the ` +
      `coolant's freezing point of ${round(freezeC, 0)} °C (${glycolPercent} % glycol).`,
    metrics: {
      freezingPointC: round(freezeC, 1),
      coldestAmbientC: round(coldest.ambientMinC!),
      daysClose: close.length,
    },
    evidence: close.map((d) => ({
      at: d.dayStartMs,
      scope: 'day' as const,
      metric: 'ambientMinC',
      value: round(d.ambientMinC!),
      expected: round(freezeC),
      z: null,
    })),
  };
}
