/**
 * Radial lens distortion, Brown's model (D. C. Brown, "Decentering distortion of lenses",
 * Photogrammetric Engineering 1966; the radial part, (memory)):
 *
 *   x_d = x_u (1 + k1 r^2 + k2 r^4),  r^2 = x_u^2 + y_u^2,
 *
 * on normalised image coordinates: x_u = (column - cx) / f and y_u = (row - cy) / f of the ideal
 * pinhole image, with the principal point (cx, cy) at the frame centre and f the focal length in
 * pixels. So r is the tangent of the angle off the optical axis, and k1, k2 do not change with the
 * frame's pixel count or with a crop. k1 < 0 is barrel distortion, k1 > 0 pincushion.
 */

/** The radial terms of one lens; zero for a distortion-free pinhole. */
export interface RadialDistortion {
  readonly k1: number;
  readonly k2: number;
}

export const noDistortion: RadialDistortion = { k1: 0, k2: 0 };

/** True when the lens has no radial term. */
export const isPinhole = (d: RadialDistortion | null | undefined): boolean => !d || (d.k1 === 0 && d.k2 === 0);

/** The factor 1 + k1 r^2 + k2 r^4 that scales an ideal point at squared radius r2. */
export function distortionFactor(r2: number, k1: number, k2: number): number {
  return 1 + r2 * (k1 + k2 * r2);
}

/**
 * The ideal radius whose distorted radius is rd (both normalised), by Newton's method on
 * r (1 + k1 r^2 + k2 r^4) = rd from r = rd. NaN where the model folds back before reaching rd
 * (its radius stops growing): no ideal point maps there.
 */
export function undistortRadius(rd: number, k1: number, k2: number): number {
  if (k1 === 0 && k2 === 0) return rd;
  // Start from one fixed-point step, r = rd / (1 + k1 rd^2 + k2 rd^4): close for moderate distortion.
  const rd2 = rd * rd;
  const g0 = 1 + rd2 * (k1 + k2 * rd2);
  let r = g0 > 0.2 ? rd / g0 : rd;
  for (let it = 0; it < 20; it++) {
    const r2 = r * r;
    const g = r * (1 + r2 * (k1 + k2 * r2)) - rd;
    const dg = 1 + r2 * (3 * k1 + 5 * k2 * r2);
    if (!(dg > 1e-6)) return NaN;
    const step = g / dg;
    r -= step;
    if (!(r >= 0)) return NaN;
    if (Math.abs(step) < 1e-13 * (1 + r)) break;
  }
  return r;
}

/**
 * Whether the model keeps growing with the radius up to `maxRadius` (normalised): its derivative
 * 1 + 3 k1 r^2 + 5 k2 r^4 stays positive, so every distorted point has one ideal point.
 */
export function monotonicUpTo(maxRadius: number, k1: number, k2: number): boolean {
  const steps = 32;
  for (let s = 1; s <= steps; s++) {
    const r2 = ((maxRadius * s) / steps) ** 2;
    if (!(1 + r2 * (3 * k1 + 5 * k2 * r2) > 0.05)) return false;
  }
  return true;
}

/**
 * Full-resolution pixels per pixel at the analysis size the tie points were found at (1500 px on
 * the long side by default, main/check.ts), at least 1: the unit the fit thresholds are set in.
 */
export function tiePointUnitPx(longSidePx: number): number {
  return Math.max(1, longSidePx / 1500);
}

/**
 * A fit is poor when tie points miss by more than this (pixels, typical pair) under the refined
 * rotations and lens: two pixels at the analysis size, where tie points are located to a few tenths
 * of a pixel (about 0.2 px measured on clean rendered turns). Our own threshold.
 */
export function lensMisfitLimitPx(longSidePx: number): number {
  return 2 * tiePointUnitPx(longSidePx);
}
