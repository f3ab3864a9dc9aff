import { invert, multiply } from './homography.js';

/**
 * The rotation angle in degrees between two views of a camera turning about its centre, from their
 * homography: R = K_b^-1 H K_a (H = K_b R K_a^-1: Hartley & Zisserman; Szeliski, "Image alignment
 * and stitching", 2006), scaled to unit determinant; angle = acos((trace R - 1) / 2). `focalPx` is
 * the focal length in the frames' pixels, principal point at the frame centre.
 */
export function rotationAngleDeg(h: ArrayLike<number>, focalPx: number, width: number, height: number): number | null {
  const k = Float64Array.of(focalPx, 0, (width - 1) / 2, 0, focalPx, (height - 1) / 2, 0, 0, 1);
  const kInv = invert(k);
  if (!kInv) return null;
  const r = multiply(multiply(kInv, h), k);
  const det = r[0] * (r[4] * r[8] - r[5] * r[7]) - r[1] * (r[3] * r[8] - r[5] * r[6]) + r[2] * (r[3] * r[7] - r[4] * r[6]);
  if (!(Math.abs(det) > 0)) return null;
  const s = Math.cbrt(det);
  const c = ((r[0] + r[4] + r[8]) / s - 1) / 2;
  return (Math.acos(Math.max(-1, Math.min(1, c))) * 180) / Math.PI;
}

/** Focal length in pixels along the long side from the 35 mm equivalent (36 mm long side). */
export function focalPxFrom35mm(focal35: number, width: number, height: number): number {
  return (focal35 / 36) * Math.max(width, height);
}
