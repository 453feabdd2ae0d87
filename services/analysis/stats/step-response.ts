export interface StepResponseMetrics {
  /** Peak value reached. */
  peak: number;
  /** Time of the peak, in the unit of `t`. */
  peakTime: number;
  /** Percent overshoot, 100·(peak − final)/(final − initial), ≥ 0. */
  percentOvershoot: number;
  /** Last time the response was outside final ± band, in the unit of `t`; 0 if never. */
  settlingTime: number;
}

/**
 * Overshoot metrics of a sampled step response from `initial` towards `final`
 * (Ogata, Modern Control Engineering §5-3). `band` is the settling band in the unit of `y`
 * (2 % criterion: band = 0.02·|final − initial|). The range [from, to) of samples is used;
 * samples for which `skip(i)` is true (e.g. implausible readings) are ignored.
 * @example stepResponseMetrics([0, 1, 2, 3], [0, 1.2, 0.95, 1], 0, 1, 0.1).percentOvershoot // 20
 */
export function stepResponseMetrics(
  t: ArrayLike<number>,
  y: ArrayLike<number>,
  initial: number,
  final: number,
  band: number,
  from = 0,
  to = y.length,
  skip?: (i: number) => boolean,
): StepResponseMetrics {
  const up = final >= initial;
  let peak = up ? -Infinity : Infinity;
  let peakTime = t[from] ?? 0;
  let settlingTime = 0;
  for (let i = from; i < to; i++) {
    const v = y[i]!;
    if (Number.isNaN(v) || skip?.(i)) continue;
    if (up ? v > peak : v < peak) {
      peak = v;
      peakTime = t[i]!;
    }
    if (Math.abs(v - final) > band) settlingTime = t[i]!;
  }
  const range = final - initial;
  const overshoot = range !== 0 ? (100 * (peak - final)) / range : 0;
  return { peak, peakTime, percentOvershoot: Math.max(overshoot, 0), settlingTime };
}
