/**
 * Cooling-system analysis library (pure: typed arrays in, plain JSON-serialisable objects out).
 * See DEVELOPERS.md, "Analysis library".
 */
export { analyseSamples, resumeFromMs, type AnalysisInput, type SampleAnalysis } from './analyse-samples.js';
export { deriveFindings, type FindingContext, type VehicleHistory } from './derive-findings.js';
export { riskScore, SEVERITY_WEIGHT } from './risk-score.js';
export { buildPeerBaseline, type PeerBaseline } from './peer-baseline.js';
export { DEFAULT_ANALYSIS_CONFIG, FAMILY_OVERRIDES, resolveConfig, type AnalysisConfig } from './config.js';
export { DEFAULT_VEHICLE_PROFILE, type VehicleProfile } from './vehicle-profile.js';
export type { SampleArrays } from './sample-arrays.js';
export { utcDay, utcDayStartMs } from './sample-arrays.js';
export type { RunMetrics, StartKind, WarmupSuspension } from './run-metrics.js';
export type { DayAggregate } from './day-aggregates.js';
export type { SensorEvent, SensorEventKind } from './sensor-events.js';
export { SAFETY_CAUTION, type EvidenceItem, type Finding, type FindingKind, type Severity } from './findings/finding.js';
export { resolvedKinds, type ServiceEvent, type ServiceEventKind } from './findings/service-events.js';
export { coolantBoilingPointC, saturationTemperatureK } from './physics/boiling-point.js';
export { freezingPointC } from './physics/freezing-point.js';
