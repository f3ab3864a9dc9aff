/**
 * Solves the n x n system M x = r in place by Gaussian elimination with partial pivoting. `m` is the
 * augmented matrix, row-major, n rows of n + 1 numbers; the solution is written to `x`. Returns false
 * when the system is singular to working precision. For the small fixed systems of the geometry
 * (8 x 8), where a general library call would cost more than the arithmetic.
 */
export function solveAugmented(m: Float64Array, n: number, x: Float64Array): boolean {
  const c = n + 1;
  let scale = 0;
  for (let i = 0; i < n * c; i++) scale = Math.max(scale, Math.abs(m[i]));
  const tiny = scale * 1e-13;
  for (let col = 0; col < n; col++) {
    let piv = col;
    let best = Math.abs(m[col * c + col]);
    for (let r = col + 1; r < n; r++) {
      const v = Math.abs(m[r * c + col]);
      if (v > best) {
        best = v;
        piv = r;
      }
    }
    if (!(best > tiny)) return false;
    if (piv !== col) {
      for (let k = col; k < c; k++) {
        const t = m[col * c + k];
        m[col * c + k] = m[piv * c + k];
        m[piv * c + k] = t;
      }
    }
    const d = m[col * c + col];
    for (let r = col + 1; r < n; r++) {
      const f = m[r * c + col] / d;
      if (f === 0) continue;
      for (let k = col; k < c; k++) m[r * c + k] -= f * m[col * c + k];
    }
  }
  for (let r = n - 1; r >= 0; r--) {
    let s = m[r * c + n];
    for (let k = r + 1; k < n; k++) s -= m[r * c + k] * x[k];
    x[r] = s / m[r * c + r];
  }
  return true;
}
