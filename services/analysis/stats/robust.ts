/** Robust location and scale: median and median absolute deviation. */

/** Consistency factor: 1.4826 · MAD estimates σ for normal data. */
export const MAD_TO_SIGMA = 1.4826;

/** k-th smallest (0-based) of `a[0..n)`, reordering `a` in place (Hoare's quickselect). */
export function selectInPlace(a: Float64Array | number[], k: number, n = a.length): number {
  let lo = 0;
  let hi = n - 1;
  while (hi > lo) {
    const pivot = a[(lo + hi) >> 1]!;
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (a[i]! < pivot) i++;
      while (a[j]! > pivot) j--;
      if (i <= j) {
        const tmp = a[i]!;
        a[i] = a[j]!;
        a[j] = tmp;
        i++;
        j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else break;
  }
  return a[k]!;
}

/** Median of the first `n` values of a scratch array (reordered in place); NaN when empty. */
export function medianInPlace(a: Float64Array | number[], n = a.length): number {
  if (n === 0) return NaN;
  const upper = selectInPlace(a, n >> 1, n);
  if (n % 2 === 1) return upper;
  let lower = -Infinity;
  for (let i = 0; i < n >> 1; i++) if (a[i]! > lower) lower = a[i]!;
  return (lower + upper) / 2;
}

/**
 * Median of finite values (input untouched); NaN when there are none.
 * @example median([3, 1, 2]) // 2
 */
export function median(values: ArrayLike<number>): number {
  const a: number[] = [];
  for (let i = 0; i < values.length; i++) if (Number.isFinite(values[i])) a.push(values[i]!);
  return medianInPlace(a);
}

/**
 * Median absolute deviation from the median (unscaled); NaN when empty.
 * @example mad([1, 2, 3, 4, 100]) // 1
 */
export function mad(values: ArrayLike<number>, center = median(values)): number {
  const d: number[] = [];
  for (let i = 0; i < values.length; i++) if (Number.isFinite(values[i])) d.push(Math.abs(values[i]! - center));
  return medianInPlace(d);
}
