import type { AnalysisConfig } from '../config.js';
import type { PeerBaseline } from '../peer-baseline.js';
import type { RunMetrics } from '../run-metrics.js';
import { median } from '../stats/robust.js';
import { badZ, type BaselineModel, expected, fitBaseline } from './baseline-model.js';
import { type FeatureRow, featureRows, type RunFeature } from './run-features.js';
import { DAY_MS } from '../../time/durations.js';

export interface ScoredRun {
  run: RunMetrics;
  feature: RunFeature;
  /** Robust z in the bad direction. */
  z: number;
  value: number;
  expected: number;
}

export interface ScoredFeature {
  scored: ScoredRun[];
  /** Which expectation was used. */
  source: 'own' | 'peer' | null;
}

/** Own baseline is replaced by peers when its median peer z is beyond this (fault from day one). */
const ABNORMAL_BASELINE_Z = 3;

/**
 * Scores each run's feature against the vehicle's own baseline (runs in the first
 * `baselineDays` of the epoch, once that window has passed) when it has enough runs and looks
 * normal to its peers, else against the family's peer model. An own baseline with too few runs
 * for its regression (the median alone, blind to start temperature and weather) gives way to a
 * peer model that has one: a bus with one cold start a day has 10 rows after 10 days, and its
 * median warm-up scored every colder morning as slow.
 */
export function scoreFeature(
  runs: readonly RunMetrics[],
  feature: RunFeature,
  epochStartMs: number,
  peer: PeerBaseline | null,
  now: number,
  cfg: AnalysisConfig,
  floor: number,
): ScoredFeature {
  const rows = featureRows(runs, feature, cfg);
  const baselineEnd = epochStartMs + cfg.baselineDays * DAY_MS;
  const baselineRows = rows.filter((r) => r.run.startMs < baselineEnd);
  // Until the baseline window has passed, the vehicle's own expectation is still forming.
  const own =
    now >= baselineEnd && baselineRows.filter((r) => !r.censored).length >= cfg.baselineMinRuns
      ? fitBaseline(baselineRows)
      : null;
  const peerModel = peer?.models[feature.name] ?? null;
  let model = own ?? peerModel;
  let source: ScoredFeature['source'] = own ? 'own' : peerModel ? 'peer' : null;
  if (own && peerModel) {
    const zs = baselineRows
      .map((r) => badZ(peerModel, r, feature.direction, floor, cfg.zCap, feature.extrapolates))
      .filter((z): z is number => z !== null);
    if (median(zs) > ABNORMAL_BASELINE_Z) {
      model = peerModel;
      source = 'peer';
    }
  }
  if (own?.medianOnly && peerModel && !peerModel.medianOnly) {
    model = peerModel;
    source = 'peer';
  }
  if (!model) return { scored: [], source: null };
  const scored: ScoredRun[] = [];
  for (const row of rows) {
    // Judge only within the ambient range a model has seen: an own baseline learned in mild
    // weather says nothing about a cold snap, so such runs go to the peers or are skipped.
    const m = [model, peerModel].find(
      (c): c is BaselineModel => c !== null && ambientCovered(c, row, feature.ambientPredictor ?? 0),
    );
    if (!m) continue;
    const z = badZ(m, row, feature.direction, floor, cfg.zCap, feature.extrapolates);
    if (z === null) continue;
    const e = expected(m, row, feature.extrapolates);
    scored.push({
      run: row.run,
      feature,
      z,
      value: feature.display(row.y, row.run),
      expected: feature.display(e, row.run),
    });
  }
  return { scored, source };
}

/** How far outside its fitted ambient range a model may still be used, °C. */
const AMBIENT_MARGIN_C = 3;

/** True when the row's ambient predictor (°C, at index `at`) is within the model's range. */
function ambientCovered(model: BaselineModel, row: FeatureRow, at: number): boolean {
  if (row.x.length <= at || model.xMin.length <= at) return true;
  const a = row.x[at]!;
  return a >= model.xMin[at]! - AMBIENT_MARGIN_C && a <= model.xMax[at]! + AMBIENT_MARGIN_C;
}

/**
 * Per run, the strongest evidence among several features (max z), in time order.
 * Runs scored by none of the features are absent.
 */
export function combineByRun(features: readonly ScoredFeature[]): ScoredRun[] {
  const best = new Map<number, ScoredRun>();
  for (const f of features) {
    for (const s of f.scored) {
      const cur = best.get(s.run.startMs);
      if (!cur || s.z > cur.z) best.set(s.run.startMs, s);
    }
  }
  return [...best.values()].sort((a, b) => a.run.startMs - b.run.startMs);
}
