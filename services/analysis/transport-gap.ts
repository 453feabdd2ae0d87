import { FLAG_ENGINE_ON, FLAG_MOVING } from './sample-flags.js';

/**
 * Whether a gap between two consecutive samples of one run (longer than the dropout limit,
 * shorter than the run gap) is data lost in transport rather than a short engine-off stop.
 * Gateways stop reporting while the engine is off, so a delivery stop of a few minutes leaves
 * the same hole as a lost link. Only a gap with the vehicle moving on both sides is certainly
 * lost data: it cannot have been parked with the engine off in between. (Gaps while idling
 * are ambiguous and not counted, so missing data is, if anything, undercounted.)
 * @example isTransportGap(FLAG_ENGINE_ON | FLAG_MOVING, FLAG_ENGINE_ON | FLAG_MOVING) // true
 */
export function isTransportGap(flagsBefore: number, flagsAfter: number): boolean {
  const running = FLAG_ENGINE_ON | FLAG_MOVING;
  return (flagsBefore & running) === running && (flagsAfter & running) === running;
}
