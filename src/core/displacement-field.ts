/**
 * A smooth displacement field over the overlap, fitted robustly to the measured block displacements:
 * a homography cannot absorb a lens's radial distortion, so after it the blocks of a rotating camera
 * still move by a few pixels that vary slowly and systematically over the frame. Near and far things
 * at one image place that disagree (parallax) and things that moved break from such a field; what the
 * field explains is neither.
 */
import { solveAugmented } from './linear-solve.js';

/** A fitted field: a polynomial in x and y per component, in coordinates centred and scaled by the data. */
export interface SmoothField {
  /** Number of polynomial terms (1, 3, 6 or 10: constant to cubic). */
  readonly terms: number;
  readonly cx: number;
  readonly cy: number;
  readonly scale: number;
  /** The points' extent in the centred, scaled coordinates: the field is held constant beyond it, never extrapolated. */
  readonly u0: number;
  readonly u1: number;
  readonly v0: number;
  readonly v1: number;
  readonly ux: Float64Array;
  readonly uy: Float64Array;
  /** Robust spread of the residuals of the points the fit kept, px. */
  readonly spread: number;
}

export const zeroField: SmoothField = { terms: 1, cx: 0, cy: 0, scale: 1, u0: 0, u1: 0, v0: 0, v1: 0, ux: new Float64Array(1), uy: new Float64Array(1), spread: 0 };

function basis(u: number, v: number, terms: number, out: Float64Array): void {
  out[0] = 1;
  if (terms >= 3) {
    out[1] = u;
    out[2] = v;
  }
  if (terms >= 6) {
    out[3] = u * u;
    out[4] = u * v;
    out[5] = v * v;
  }
  if (terms >= 10) {
    out[6] = u * u * u;
    out[7] = u * u * v;
    out[8] = u * v * v;
    out[9] = v * v * v;
  }
}

const basisScratch = new Float64Array(10);

/** The field's displacement at (x, y), written to out[0], out[1]. */
export function fieldAt(f: SmoothField, x: number, y: number, out: Float64Array): void {
  const t = basisScratch;
  const u = (x - f.cx) / f.scale, v = (y - f.cy) / f.scale;
  basis(u < f.u0 ? f.u0 : u > f.u1 ? f.u1 : u, v < f.v0 ? f.v0 : v > f.v1 ? f.v1 : v, f.terms, t);
  let dx = 0, dy = 0;
  for (let i = 0; i < f.terms; i++) {
    dx += f.ux[i] * t[i];
    dy += f.uy[i] * t[i];
  }
  out[0] = dx;
  out[1] = dy;
}

function median(values: Float64Array, count: number): number {
  const s = values.slice(0, count).sort();
  return count === 0 ? 0 : count % 2 ? s[count >> 1] : 0.5 * (s[(count >> 1) - 1] + s[count >> 1]);
}

/**
 * Fits a smooth field to displacements (dx, dy) measured at (x, y), iteratively reweighted with
 * Tukey's biweight so that a minority of points that break from the field (parallax, movement, a
 * chance match) do not bend it. Cubic from 40 points, quadratic from 15, constant below; the scale
 * of the weights follows the median absolute residual but never drops under `floorPx`, so a
 * field that fits to a tenth of a pixel does not disown points a pixel off.
 */
export function fitSmoothField(x: Float64Array, y: Float64Array, dx: Float64Array, dy: Float64Array, count: number, floorPx = 0.5): SmoothField {
  if (count < 3) return zeroField;
  const terms = count >= 40 ? 10 : count >= 15 ? 6 : 1;
  let cx = 0, cy = 0;
  for (let i = 0; i < count; i++) {
    cx += x[i];
    cy += y[i];
  }
  cx /= count;
  cy /= count;
  let scale = 0;
  for (let i = 0; i < count; i++) scale = Math.max(scale, Math.abs(x[i] - cx), Math.abs(y[i] - cy));
  scale = scale || 1;
  let u0 = Infinity, u1 = -Infinity, v0 = Infinity, v1 = -Infinity;
  for (let i = 0; i < count; i++) {
    const u = (x[i] - cx) / scale, v = (y[i] - cy) / scale;
    u0 = Math.min(u0, u);
    u1 = Math.max(u1, u);
    v0 = Math.min(v0, v);
    v1 = Math.max(v1, v);
  }
  const weight = new Float64Array(count).fill(1);
  const residual = new Float64Array(count);
  const t = new Float64Array(10);
  const m = new Float64Array(terms * (terms + 1));
  const my = new Float64Array(terms * (terms + 1));
  let ux = new Float64Array(terms), uy = new Float64Array(terms);
  let spread = 0;
  for (let round = 0; round < 6; round++) {
    m.fill(0);
    my.fill(0);
    for (let i = 0; i < count; i++) {
      const wi = weight[i];
      if (wi === 0) continue;
      basis((x[i] - cx) / scale, (y[i] - cy) / scale, terms, t);
      for (let r = 0; r < terms; r++) {
        const wr = wi * t[r];
        for (let c = 0; c < terms; c++) m[r * (terms + 1) + c] += wr * t[c];
        m[r * (terms + 1) + terms] += wr * dx[i];
        my[r * (terms + 1) + terms] += wr * dy[i];
      }
    }
    for (let r = 0; r < terms; r++) for (let c = 0; c < terms; c++) my[r * (terms + 1) + c] = m[r * (terms + 1) + c];
    const nx = new Float64Array(terms), ny = new Float64Array(terms);
    if (!solveAugmented(m, terms, nx) || !solveAugmented(my, terms, ny)) break;
    ux = nx;
    uy = ny;
    const f: SmoothField = { terms, cx, cy, scale, u0, u1, v0, v1, ux, uy, spread: 0 };
    const p = new Float64Array(2);
    for (let i = 0; i < count; i++) {
      fieldAt(f, x[i], y[i], p);
      residual[i] = Math.hypot(dx[i] - p[0], dy[i] - p[1]);
    }
    // 1.4826 x median absolute residual estimates a normal spread (common practice).
    spread = 1.4826 * median(residual, count);
    const c = 4.685 * Math.max(spread, floorPx);
    for (let i = 0; i < count; i++) weight[i] = residual[i] < c ? (1 - (residual[i] / c) ** 2) ** 2 : 0;
  }
  return { terms, cx, cy, scale, u0, u1, v0, v1, ux, uy, spread };
}
