/**
 * How far a bracket frame moved against its reference: the largest displacement of a frame corner
 * under the camera turn that best maps the reference's tie points onto the frame's. A hand-held
 * drift between brackets is a turn of a fraction of a degree about the camera's centre, which the
 * rotation model H = K R K^-1 (Hartley & Zisserman, sec. 8.4.2) describes with three parameters;
 * a full homography fitted to tie points that crowd one part of the frame (a low horizon under
 * sky) would swing the far corners instead. The turn is the least-squares rotation between the tie
 * points' rays (Kabsch; Umeyama, IEEE PAMI 1991): the orthogonal polar factor of sum(r_b r_a^T).
 */
import { nearestRotation } from './rotations.js';
import { multiply } from '../numeric/matrix3.js';

export function bracketShift(points: ArrayLike<number>, width: number, height: number, focalPx: number): number | null {
  const n = Math.floor(points.length / 4);
  if (n < 3 || !(focalPx > 0)) return null;
  const cx = (width - 1) / 2, cy = (height - 1) / 2;
  const ray = (x: number, y: number): [number, number, number] => {
    const u = (x - cx) / focalPx, v = (y - cy) / focalPx;
    const l = Math.hypot(u, v, 1);
    return [u / l, v / l, 1 / l];
  };
  const m = new Float64Array(9);
  for (let k = 0; k < n; k++) {
    const a = ray(points[4 * k], points[4 * k + 1]), b = ray(points[4 * k + 2], points[4 * k + 3]);
    for (let r = 0; r < 3; r++) for (let c = 0; c < 3; c++) m[3 * r + c] += b[r] * a[c];
  }
  const rot = nearestRotation(m);
  let worst = 0;
  for (const [x, y] of [[0, 0], [width - 1, 0], [width - 1, height - 1], [0, height - 1]]) {
    const d = multiply(rot, Float64Array.of((x - cx) / focalPx, 0, 0, (y - cy) / focalPx, 0, 0, 1, 0, 0));
    if (!(d[6] > 0)) return null;
    const u = (focalPx * d[0]) / d[6] + cx, v = (focalPx * d[3]) / d[6] + cy;
    worst = Math.max(worst, Math.hypot(u - x, v - y));
  }
  return worst;
}
