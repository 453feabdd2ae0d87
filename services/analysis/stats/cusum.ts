export interface CusumResult {
  /** Index of the first sample at which the upper CUSUM exceeded h, or -1. */
  alarmIndex: number;
  /** Index where the excursion that alarmed began (the change point), or -1. */
  changeIndex: number;
  /** Largest statistic reached. */
  maxStatistic: number;
  /** Statistic after the last sample. */
  lastStatistic: number;
}

/**
 * One-sided (upper) tabular CUSUM on standardised scores: S_i = max(0, S_{i−1} + z_i − k),
 * alarm when S_i > h. The change point is the first sample of the excursion that alarmed
 * (Page 1954; Montgomery, Introduction to Statistical Quality Control, §9.1).
 * @example upperCusum([0, 0, 3, 3, 3], 0.5, 4).changeIndex // 2
 */
export function upperCusum(z: ArrayLike<number>, k: number, h: number): CusumResult {
  let s = 0;
  let start = -1;
  let alarmIndex = -1;
  let changeIndex = -1;
  let maxStatistic = 0;
  for (let i = 0; i < z.length; i++) {
    const next = s + z[i]! - k;
    if (next <= 0) {
      s = 0;
      start = -1;
      continue;
    }
    if (s === 0) start = i;
    s = next;
    if (s > maxStatistic) maxStatistic = s;
    if (alarmIndex < 0 && s > h) {
      alarmIndex = i;
      changeIndex = start;
    }
  }
  return { alarmIndex, changeIndex, maxStatistic, lastStatistic: s };
}
