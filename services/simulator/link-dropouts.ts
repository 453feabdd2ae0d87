import type { Rng } from './prng.js';

/**
 * The gateway's link: occasional single lost samples and coverage gaps (all channels missing
 * for minutes). Independent of the sensor; rates are per second so they do not change with the
 * sample period.
 */

/** Chance per second of losing one sample. */
export const SINGLE_DROP_PER_S = 0.0002;
/** Chance per second of a coverage gap starting (about one per 8 h of running). */
export const GAP_START_PER_S = 1 / (8 * 3600);
/** Length of a coverage gap, s. */
export const GAP_MIN_S = 60;
export const GAP_MAX_S = 900;

export class LinkDropouts {
  private readonly rng: Rng;
  private gapUntilMs = -Infinity;
  private readonly gapPerS: number;

  /** `gapScale` multiplies the rate of coverage gaps (bursts of dropped samples). */
  constructor(rng: Rng, gapScale = 1) {
    this.rng = rng;
    this.gapPerS = GAP_START_PER_S * gapScale;
  }

  /** True when the sample taken at tMs, periodS after the previous one, is lost. */
  lost(tMs: number, periodS: number): boolean {
    if (tMs < this.gapUntilMs) return true;
    const r = this.rng.next();
    if (r < this.gapPerS * periodS) {
      this.gapUntilMs = tMs + this.rng.uniform(GAP_MIN_S, GAP_MAX_S) * 1000;
      return true;
    }
    return r < (this.gapPerS + SINGLE_DROP_PER_S) * periodS;
  }
}
