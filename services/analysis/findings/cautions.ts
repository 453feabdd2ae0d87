import { SAFETY_CAUTION, type FindingKind } from './finding.js';

/** Where a check is done with the engine running (fan engagement, bleeding trapped air). */
export const ENGINE_RUNNING_CAUTION =
  'Checks with the engine running: keep hands, hair, clothing and tools clear of the fan and the belts; an electric fan can start with the ignition off.';

/** Where coolant is drained, topped up or corrected. */
export const COOLANT_DISPOSAL_CAUTION =
  'Glycol coolant is toxic to people and animals (it tastes sweet): collect what is drained or spilt, keep it out of drains and dispose of it as local rules require.';

/** Kinds whose checks include running the engine hot (fan engagement, air bleeding). */
const ENGINE_RUNNING_KINDS: ReadonlySet<FindingKind> = new Set(['overheating-trend', 'boil-margin', 'overshoot']);
/** Kinds whose checks or repairs drain or change coolant (leaks, mix, thermostat replacement). */
const COOLANT_KINDS: ReadonlySet<FindingKind> = new Set([
  'overheating-trend',
  'boil-margin',
  'freeze-risk',
  'overshoot',
  'slow-warmup',
  'coolant-loss',
]);

/**
 * The cautions for a shop visit covering findings of these kinds: the general safety caution
 * always, then the engine-running and coolant-disposal cautions where a check calls for them.
 * @example cautionsFor(['freeze-risk']) // [SAFETY_CAUTION, COOLANT_DISPOSAL_CAUTION]
 */
export function cautionsFor(kinds: Iterable<string>): string[] {
  const set = new Set(kinds);
  const out = [SAFETY_CAUTION];
  if ([...set].some((k) => ENGINE_RUNNING_KINDS.has(k as FindingKind))) out.push(ENGINE_RUNNING_CAUTION);
  if ([...set].some((k) => COOLANT_KINDS.has(k as FindingKind))) out.push(COOLANT_DISPOSAL_CAUTION);
  return out;
}
