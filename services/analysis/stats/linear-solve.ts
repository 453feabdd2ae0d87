/**
 * Solves the small dense system A·x = b (A given row-major, n×n) by Gaussian elimination
 * with partial pivoting. Returns null when A is singular to working precision.
 * @example solveLinearSystem([2, 0, 0, 4], [2, 8]) // [1, 2]
 */
export function solveLinearSystem(a: ArrayLike<number>, b: ArrayLike<number>): number[] | null {
  const n = b.length;
  const m = Array.from(a);
  const x = Array.from(b);
  for (let col = 0; col < n; col++) {
    let pivot = col;
    for (let r = col + 1; r < n; r++) if (Math.abs(m[r * n + col]!) > Math.abs(m[pivot * n + col]!)) pivot = r;
    const pv = m[pivot * n + col]!;
    if (!(Math.abs(pv) > 1e-12)) return null;
    if (pivot !== col) {
      for (let c = 0; c < n; c++) {
        const t = m[col * n + c]!;
        m[col * n + c] = m[pivot * n + c]!;
        m[pivot * n + c] = t;
      }
      const t = x[col]!;
      x[col] = x[pivot]!;
      x[pivot] = t;
    }
    for (let r = col + 1; r < n; r++) {
      const f = m[r * n + col]! / pv;
      if (f === 0) continue;
      for (let c = col; c < n; c++) m[r * n + c] = m[r * n + c]! - f * m[col * n + c]!;
      x[r] = x[r]! - f * x[col]!;
    }
  }
  for (let r = n - 1; r >= 0; r--) {
    let s = x[r]!;
    for (let c = r + 1; c < n; c++) s -= m[r * n + c]! * x[c]!;
    x[r] = s / m[r * n + r]!;
  }
  return x;
}
