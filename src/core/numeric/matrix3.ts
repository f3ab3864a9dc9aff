/**
 * The core's 3x3 matrices (homographies, rotations, camera intrinsics): flat row-major Float64Arrays
 * of 9 values. One copy of each operation, so that a homography and a rotation chain multiply alike.
 */
export type Matrix3 = Float64Array;

export function identity(): Matrix3 {
  return Float64Array.of(1, 0, 0, 0, 1, 0, 0, 0, 1);
}

/** p q. */
export function multiply(p: ArrayLike<number>, q: ArrayLike<number>): Matrix3 {
  const r = new Float64Array(9);
  for (let i = 0; i < 3; i++)
    for (let j = 0; j < 3; j++) r[i * 3 + j] = p[i * 3] * q[j] + p[i * 3 + 1] * q[3 + j] + p[i * 3 + 2] * q[6 + j];
  return r;
}

export function transpose(a: ArrayLike<number>): Matrix3 {
  return Float64Array.of(a[0], a[3], a[6], a[1], a[4], a[7], a[2], a[5], a[8]);
}

export function determinant(m: ArrayLike<number>): number {
  return m[0] * (m[4] * m[8] - m[5] * m[7]) - m[1] * (m[3] * m[8] - m[5] * m[6]) + m[2] * (m[3] * m[7] - m[4] * m[6]);
}

/** The inverse by cofactors, or null when the determinant is zero or not finite. */
export function invert(h: ArrayLike<number>): Matrix3 | null {
  const [a, b, c, d, e, f, g, k, l] = Array.from(h);
  const A = e * l - f * k, B = -(d * l - f * g), C = d * k - e * g;
  const det = a * A + b * B + c * C;
  if (!Number.isFinite(det) || Math.abs(det) < 1e-300) return null;
  const inv = Float64Array.of(
    A, -(b * l - c * k), b * f - c * e,
    B, a * l - c * g, -(a * f - c * d),
    C, -(a * k - b * g), a * e - b * d,
  );
  for (let i = 0; i < 9; i++) inv[i] /= det;
  return inv;
}

/**
 * Scales h so that |h[8]| = 1 (when h[8] is not near zero), for comparison and reporting. The sign
 * is kept: for a homography it says on which side of the camera the data lie (see orientPositive).
 */
export function normalise(h: ArrayLike<number>): Matrix3 {
  const out = Float64Array.from(h);
  const s = Math.abs(out[8]) > 1e-12 ? Math.abs(out[8]) : Math.hypot(...out);
  for (let i = 0; i < 9; i++) out[i] /= s;
  return out;
}

/** Maps (x, y) through h; returns [x', y', w] with w the homogeneous scale before division. */
export function project(h: ArrayLike<number>, x: number, y: number): [number, number, number] {
  const w = h[6] * x + h[7] * y + h[8];
  return [(h[0] * x + h[1] * y + h[2]) / w, (h[3] * x + h[4] * y + h[5]) / w, w];
}
