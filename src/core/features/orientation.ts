import type { FloatImage } from '../image/image.js';

/** Radius of the disc over which the intensity centroid is taken, in level pixels. */
export const orientationRadius = 15;

const rowHalfWidth = (() => {
  const r = orientationRadius;
  const u = new Int32Array(r + 1);
  for (let v = 0; v <= r; v++) u[v] = Math.floor(Math.sqrt(r * r - v * v) + 1e-9);
  return u;
})();

/**
 * Orientation by the intensity centroid (Rosin, "Measuring corner properties", CVIU 1999; as used
 * for oriented binary descriptors): the angle of (m10, m01) over a disc around the keypoint. The
 * first moments of a constant vanish on a symmetric disc, so an intensity shift leaves it unchanged,
 * and a scaling of intensity leaves its direction unchanged. Radians, y pointing down.
 */
export function intensityCentroidAngle(image: FloatImage, cx: number, cy: number): number {
  const { width: w, data } = image;
  const r = orientationRadius;
  const centre = cy * w + cx;
  let m10 = 0;
  let m01 = 0;
  for (let u = -r; u <= r; u++) m10 += u * data[centre + u];
  for (let v = 1; v <= r; v++) {
    const d = rowHalfWidth[v];
    let sumDiff = 0;
    const below = centre + v * w;
    const above = centre - v * w;
    for (let u = -d; u <= d; u++) {
      const vb = data[below + u];
      const va = data[above + u];
      sumDiff += vb - va;
      m10 += u * (vb + va);
    }
    m01 += v * sumDiff;
  }
  return Math.atan2(m01, m10);
}
