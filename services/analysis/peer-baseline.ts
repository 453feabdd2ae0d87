import { type AnalysisConfig, resolveConfig } from './config.js';
import { fitBaseline, type BaselineModel } from './findings/baseline-model.js';
import { featureRows, RUN_FEATURES, type RunFeature } from './findings/run-features.js';
import type { RunMetrics } from './run-metrics.js';

/**
 * What an engine family's vehicles normally do, learned from their runs: one robust model
 * per run feature (warm-up time, plateau, overshoot, cold-soak offset). Small and
 * JSON-serialisable; the worker rebuilds it now and then and stores it per family.
 */
export interface PeerBaseline {
  engineFamily: string;
  runCount: number;
  /** Distinct vehicles contributing (as counted by the caller), informational. */
  vehicleCount: number;
  models: Record<RunFeature['name'], BaselineModel | null>;
}

/**
 * Builds a family's peer baseline from many vehicles' stored runs (any order). Faulty
 * vehicles may be included: the fits are robust to a minority of them.
 * @example buildPeerBaseline(runsOfFamily, 'hd-13l', 40).models.warmupTime?.sigma
 */
export function buildPeerBaseline(
  runs: readonly RunMetrics[],
  engineFamily = 'unknown',
  vehicleCount = 0,
  cfg: AnalysisConfig = resolveConfig(engineFamily),
): PeerBaseline {
  const usable = runs.filter((r) => !r.excludedForSensor && !r.truncatedStart);
  const models = {} as PeerBaseline['models'];
  for (const f of RUN_FEATURES) models[f.name] = fitBaseline(featureRows(usable, f, cfg));
  return { engineFamily, runCount: usable.length, vehicleCount, models };
}
