import type { CornerCandidates } from './corners.js';
import { orderByKeyDescending } from '../numeric/sort-keys.js';

/**
 * Adaptive non-maximal suppression (Brown, Szeliski & Winder, "Multi-image matching using
 * multi-scale oriented patches", CVPR 2005): each candidate's suppression radius is the distance to
 * the nearest candidate that is clearly stronger (R_i < robustness * R_j); the `count` candidates
 * with the largest radii are kept, which spreads keypoints over the frame instead of piling them on
 * the most textured part.
 *
 * Candidates must be sorted strongest first. The nearest stronger neighbour is found with a uniform
 * grid, and radii are capped at `maxRadius` (ties then keep the stronger candidate), so the cost is
 * near linear in the number of candidates. Returns candidate indices, in order of decreasing radius.
 */
export function adaptiveNonMaximalSuppression(
  candidates: CornerCandidates,
  count: number,
  width: number,
  height: number,
  robustness = 0.9,
): Int32Array {
  const n = candidates.count;
  if (n <= count) return Int32Array.from({ length: n }, (_, i) => i);
  const { x, y, response } = candidates;
  const maxRadius = Math.max(8, 2.5 * Math.sqrt((width * height) / count));
  const cell = Math.max(4, maxRadius / 4);
  const gw = Math.ceil(width / cell) + 1;
  const gh = Math.ceil(height / cell) + 1;
  const head = new Int32Array(gw * gh).fill(-1);
  const next = new Int32Array(n);
  const radius2 = new Float32Array(n);
  const maxR2 = maxRadius * maxRadius;
  const maxRing = Math.ceil(maxRadius / cell) + 1;

  let inserted = 0;
  for (let i = 0; i < n; i++) {
    // Every candidate clearly stronger than i comes before it; insert those not yet in the grid.
    const limit = response[i] / robustness;
    while (inserted < i && response[inserted] > limit) {
      const c = ((y[inserted] / cell) | 0) * gw + ((x[inserted] / cell) | 0);
      next[inserted] = head[c];
      head[c] = inserted;
      inserted++;
    }
    const cx = (x[i] / cell) | 0;
    const cy = (y[i] / cell) | 0;
    let best = maxR2;
    for (let ring = 0; ring <= maxRing; ring++) {
      const reach = (ring - 1) * cell;
      if (reach > 0 && reach * reach >= best) break;
      const y0 = cy - ring, y1 = cy + ring, x0 = cx - ring, x1 = cx + ring;
      for (let gy = y0; gy <= y1; gy++) {
        if (gy < 0 || gy >= gh) continue;
        const edgeRow = gy === y0 || gy === y1;
        for (let gx = x0; gx <= x1; gx += edgeRow || gx === x1 ? 1 : x1 - x0) {
          if (gx < 0 || gx >= gw) continue;
          for (let j = head[gy * gw + gx]; j >= 0; j = next[j]) {
            const dx = x[j] - x[i];
            const dy = y[j] - y[i];
            const d2 = dx * dx + dy * dy;
            if (d2 < best) best = d2;
          }
        }
      }
    }
    radius2[i] = best;
  }
  return orderByKeyDescending(radius2, n).slice(0, count);
}
