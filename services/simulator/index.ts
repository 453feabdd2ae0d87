/**
 * Physics-based cooling-system simulator (pure: no I/O). See services/simulator/README.md.
 */
export type { Climate, ClimateSpec } from './weather.js';
export { CLIMATES, AmbientModel } from './weather.js';
export type { Duty, EngineRun, Leg } from './duty-cycles.js';
export type { FaultKind, FaultSpec } from './faults.js';
export { FAULT_KINDS, isSensorFault } from './faults.js';
export type { SimVehicle, Depot } from './sim-vehicle.js';
export type { SimOptions, SampleChunk } from './simulate-vehicle.js';
export { simulateVehicle, DEFAULT_SAMPLE_PERIOD_S, CHUNK_SAMPLES } from './simulate-vehicle.js';
export type { Scenario } from './fleet-plan.js';
export { planFleet } from './fleet-plan.js';
export type { TruthEntry } from './ground-truth.js';
export { groundTruth, truthGroup } from './ground-truth.js';
export { NdjsonEncoder } from './ndjson-lines.js';
export type { EngineFamily } from './engine-families.js';
export { ENGINE_FAMILIES, engineFamily } from './engine-families.js';
export { DEMO_FLEET_ID, DEMO_DEPOTS } from './demo-scenario.js';
export { EVALUATION_FLEET_ID, EVALUATION_DEPOTS } from './evaluation-scenario.js';
