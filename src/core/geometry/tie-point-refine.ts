import { sampleBilinear } from '../image/bilinear.js';
import type { GrayImage } from '../image/image.js';
import { project } from './homography.js';

export interface RefineParams {
  /** Half-size of the compared patch, px (13 x 13 by default). */
  readonly radius: number;
  /** Integer search range around the predicted position, px. */
  readonly search: number;
  /** Lowest zero-mean normalised cross-correlation a refined point must reach. */
  readonly minScore: number;
}

export const defaultRefineParams: RefineParams = { radius: 6, search: 2, minScore: 0.8 };

export interface RefinedPoints {
  readonly bx: Float64Array;
  readonly by: Float64Array;
  /** Correlation of each point's best position, or -1 where it could not be refined. */
  readonly score: Float64Array;
}

/**
 * Refines where tie points land in frame b by their appearance rather than by b's own corners:
 * a's patch around each point, warped into b's frame by the local linear part of h, is compared with
 * b by zero-mean normalised cross-correlation (insensitive to the exposure difference) over integer
 * shifts, and the peak refined by a parabola in each direction. Corner detectors are not covariant
 * with the foreshortening that differs between two views, so the two detections of one scene
 * corner sit slightly apart, and apart in the same way across a region; the appearance match has
 * no such bias. Points whose best correlation is below `minScore`, or at the edge of the search,
 * get score -1.
 */
export function refineTiePoints(a: GrayImage, b: GrayImage, h: ArrayLike<number>, ax: ArrayLike<number>, ay: ArrayLike<number>, params: Partial<RefineParams> = {}): RefinedPoints {
  const p = { ...defaultRefineParams, ...params };
  const n = ax.length;
  const out: RefinedPoints = { bx: new Float64Array(n), by: new Float64Array(n), score: new Float64Array(n).fill(-1) };
  const r = p.radius, s = p.search;
  const side = 2 * r + 1, m = side * side;
  const tpl = new Float64Array(m);
  const span = 2 * s + 1;
  const scores = new Float64Array(span * span);
  for (let i = 0; i < n; i++) {
    const [px, py, w] = project(h, ax[i], ay[i]);
    out.bx[i] = px;
    out.by[i] = py;
    if (!(w > 0)) continue;
    // Inverse of the local linear part of h maps offsets in b to offsets in a.
    const e = 0.5;
    const [xr, yr] = project(h, ax[i] + e, ay[i]);
    const [xd, yd] = project(h, ax[i], ay[i] + e);
    const j00 = (xr - px) / e, j10 = (yr - py) / e, j01 = (xd - px) / e, j11 = (yd - py) / e;
    const det = j00 * j11 - j01 * j10;
    if (!(Math.abs(det) > 1e-9)) continue;
    const i00 = j11 / det, i01 = -j01 / det, i10 = -j10 / det, i11 = j00 / det;
    let ok = true, mean = 0;
    for (let v = -r, k = 0; v <= r && ok; v++)
      for (let u = -r; u <= r; u++, k++) {
        const sx = ax[i] + i00 * u + i01 * v, sy = ay[i] + i10 * u + i11 * v;
        // Kept from before the shared sampler: a patch reaching the last column or row is refused.
        const val = sx < a.width - 1 && sy < a.height - 1 ? sampleBilinear(a.data, a.width, a.height, sx, sy) : NaN;
        if (Number.isNaN(val)) {
          ok = false;
          break;
        }
        tpl[k] = val;
        mean += val;
      }
    if (!ok) continue;
    mean /= m;
    let norm = 0;
    for (let k = 0; k < m; k++) {
      tpl[k] -= mean;
      norm += tpl[k] * tpl[k];
    }
    if (norm < 1e-6 * m) continue;
    const cx = Math.round(px), cy = Math.round(py);
    // The search window must lie inside b; integer positions need no interpolation.
    if (cx - s - r < 0 || cy - s - r < 0 || cx + s + r > b.width - 1 || cy + s + r > b.height - 1) continue;
    // tpl has zero mean, so the covariance with a patch is its plain dot product with tpl.
    let best = -2, bi = -1;
    const bw = b.width, bd = b.data;
    for (let dy = -s; dy <= s; dy++)
      for (let dx = -s; dx <= s; dx++) {
        let sum = 0, sq = 0, dot = 0;
        for (let v = -r, k = 0; v <= r; v++) {
          const row = (cy + dy + v) * bw + cx + dx;
          for (let u = -r; u <= r; u++, k++) {
            const val = bd[row + u];
            sum += val;
            sq += val * val;
            dot += val * tpl[k];
          }
        }
        const pn = sq - (sum * sum) / m;
        const zncc = pn > 0 ? dot / Math.sqrt(pn * norm) : -1;
        const idx = (dy + s) * span + (dx + s);
        scores[idx] = zncc;
        if (zncc > best) {
          best = zncc;
          bi = idx;
        }
      }
    if (bi < 0 || best < p.minScore) continue;
    const bxI = (bi % span) - s, byI = ((bi / span) | 0) - s;
    if (Math.abs(bxI) === s || Math.abs(byI) === s) continue;
    const at = (dx: number, dy: number): number => scores[(dy + s) * span + (dx + s)];
    const peak = (l: number, c: number, rr: number): number => {
      const den = l - 2 * c + rr;
      return den < 0 ? Math.max(-0.5, Math.min(0.5, (0.5 * (l - rr)) / den)) : 0;
    };
    out.bx[i] = cx + bxI + peak(at(bxI - 1, byI), best, at(bxI + 1, byI));
    out.by[i] = cy + byI + peak(at(bxI, byI - 1), best, at(bxI, byI + 1));
    out.score[i] = best;
  }
  return out;
}
