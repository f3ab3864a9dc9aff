/**
 * A smooth displacement field over the overlap, fitted robustly to the measured block displacements:
 * a homography cannot absorb a lens's radial distortion, so after it the blocks of a rotating camera
 * still move by a few pixels that vary slowly and systematically over the frame. Near and far things
 * at one image place that disagree (parallax) and things that moved break from such a field; what the
 * field explains is neither.
 */
import { solveAugmented } from '../numeric/linear-solve.js';

/** A fitted field: a polynomial in x and y per component, in coordinates centred and scaled by the data. */
export interface SmoothField {
  /** Number of polynomial terms (1, 3, 6 or 10: constant to cubic). */
  readonly terms: number;
  readonly cx: number;
  readonly cy: number;
  readonly scale: number;
  /** The points' extent in the centred, scaled coordinates: beyond it the field goes on along its slope at the edge (fieldAt). */
  readonly u0: number;
  readonly u1: number;
  readonly v0: number;
  readonly v1: number;
  readonly ux: Float64Array;
  readonly uy: Float64Array;
  /** Robust spread of the residuals of the points the fit kept, px. */
  readonly spread: number;
  /** The pair's lens geometry when the field has radial terms (their coefficients follow the polynomial's in ux, uy). */
  readonly lens?: LensPair | null;
}

/**
 * Where two frames of one camera sit: the homography a -> b (pixels) and both frame centres, with
 * the radius distortion is measured on. With it the field gains the shape radial distortion takes
 * (Brown's model, first order in k1 and k2): a point p of a is seen at D_b(H(U_a(p))) with
 * D(q) = q + k (q - c) |q - c|^2 / rn^2 and U its inverse, so its displacement from H(p), carried
 * back to a's grid, is k [J_H(p)^-1 rho_b(H p) - rho_a(p)] plus what H absorbed. That shape, and
 * not a polynomial's, is what the field follows toward the corners where it has few points.
 */
export interface LensPair {
  readonly h: ArrayLike<number>;
  readonly ax: number;
  readonly ay: number;
  readonly bx: number;
  readonly by: number;
  readonly rn: number;
}

/** The two radial shapes (r^2 and r^4) at a's pixel (x, y): out = [g1x, g1y, g2x, g2y]. */
function radialShapes(l: LensPair, x: number, y: number, out: Float64Array): void {
  const h = l.h;
  const w = h[6] * x + h[7] * y + h[8];
  const qx = (h[0] * x + h[1] * y + h[2]) / w, qy = (h[3] * x + h[4] * y + h[5]) / w;
  // Jacobian of the homography at (x, y).
  const j00 = (h[0] - h[6] * qx) / w, j01 = (h[1] - h[7] * qx) / w, j10 = (h[3] - h[6] * qy) / w, j11 = (h[4] - h[7] * qy) / w;
  const det = j00 * j11 - j01 * j10 || 1;
  const ux = (x - l.ax) / l.rn, uy = (y - l.ay) / l.rn, vx = (qx - l.bx) / l.rn, vy = (qy - l.by) / l.rn;
  const ra = ux * ux + uy * uy, rb = vx * vx + vy * vy;
  for (let p = 0; p < 2; p++) {
    const fa = p ? ra * ra : ra, fb = p ? rb * rb : rb;
    const bxp = vx * fb * l.rn, byp = vy * fb * l.rn;
    out[2 * p] = (j11 * bxp - j01 * byp) / det - ux * fa * l.rn;
    out[2 * p + 1] = (-j10 * bxp + j00 * byp) / det - uy * fa * l.rn;
  }
}

export const zeroField: SmoothField = { terms: 1, cx: 0, cy: 0, scale: 1, u0: 0, u1: 0, v0: 0, v1: 0, ux: new Float64Array(1), uy: new Float64Array(1), spread: 0 };

function basis(u: number, v: number, terms: number, out: Float64Array): void {
  // Every monomial u^i v^j with i + j up to the degree, by degree: 1, u, v, u^2, u v, v^2, ...
  out[0] = 1;
  for (let k = 1, start = 0, d = 1; k < terms; d++) {
    const prev = start;
    start = k;
    for (let j = 0; j < d && k < terms; j++) out[k++] = out[prev + j] * u;
    if (k < terms) out[k++] = out[start - 1] * v;
  }
}

const basisScratch = new Float64Array(10);

function evaluate(f: SmoothField, u: number, v: number, out: Float64Array): void {
  const t = basisScratch;
  basis(u, v, f.terms, t);
  let dx = 0, dy = 0;
  for (let i = 0; i < f.terms; i++) {
    dx += f.ux[i] * t[i];
    dy += f.uy[i] * t[i];
  }
  out[0] = dx;
  out[1] = dy;
}

const edgeScratch = new Float64Array(2), lensScratch = new Float64Array(4);

/**
 * The field's displacement at (x, y), written to out[0], out[1]. Past its points the field is
 * continued along its slope at their edge, never by its polynomial: a lens's distortion keeps
 * growing toward the frame's edge, which a field held constant there would miss, while a cubic
 * carried on would soon run wild.
 */
export function fieldAt(f: SmoothField, x: number, y: number, out: Float64Array): void {
  const u = (x - f.cx) / f.scale, v = (y - f.cy) / f.scale;
  const cu = u < f.u0 ? f.u0 : u > f.u1 ? f.u1 : u, cv = v < f.v0 ? f.v0 : v > f.v1 ? f.v1 : v;
  evaluate(f, cu, cv, out);
  const e = edgeScratch, h = 1e-3;
  const bx = out[0], by = out[1];
  let dx = bx, dy = by;
  if (cu !== u) {
    const s = u > cu ? -h : h;
    evaluate(f, cu + s, cv, e);
    dx += ((bx - e[0]) / -s) * (u - cu);
    dy += ((by - e[1]) / -s) * (u - cu);
  }
  if (cv !== v) {
    const s = v > cv ? -h : h;
    evaluate(f, cu, cv + s, e);
    dx += ((bx - e[0]) / -s) * (v - cv);
    dy += ((by - e[1]) / -s) * (v - cv);
  }
  if (f.lens) {
    radialShapes(f.lens, x, y, lensScratch);
    dx += f.ux[f.terms] * lensScratch[0] + f.ux[f.terms + 1] * lensScratch[2];
    dy += f.uy[f.terms] * lensScratch[1] + f.uy[f.terms + 1] * lensScratch[3];
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
export function fitSmoothField(x: Float64Array, y: Float64Array, dx: Float64Array, dy: Float64Array, count: number, floorPx = 0.5, lens: LensPair | null = null): SmoothField {
  if (count < 3) return zeroField;
  // With the lens's shape the polynomial only takes up what the homography absorbed, which a
  // quadratic does; a cubic beside the radial shapes trades terms with them and carries neither
  // past the points.
  const lensTerms = lens && count >= 40 ? 2 : 0;
  const terms = lensTerms ? 6 : count >= 40 ? 10 : count >= 15 ? 6 : 1, all = terms + lensTerms;
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
  const t = new Float64Array(10 + 2), ty = new Float64Array(10 + 2), g = new Float64Array(4);
  const m = new Float64Array(all * (all + 1));
  const my = new Float64Array(all * (all + 1));
  let ux = new Float64Array(all), uy = new Float64Array(all);
  let spread = 0;
  const fieldLens = lensTerms ? lens : null;
  for (let round = 0; round < 6; round++) {
    m.fill(0);
    my.fill(0);
    for (let i = 0; i < count; i++) {
      const wi = weight[i];
      if (wi === 0) continue;
      basis((x[i] - cx) / scale, (y[i] - cy) / scale, terms, t);
      ty.set(t);
      if (fieldLens) {
        radialShapes(fieldLens, x[i], y[i], g);
        [t[terms], t[terms + 1], ty[terms], ty[terms + 1]] = [g[0], g[2], g[1], g[3]];
      }
      for (let r = 0; r < all; r++) {
        for (let c = 0; c < all; c++) {
          m[r * (all + 1) + c] += wi * t[r] * t[c];
          my[r * (all + 1) + c] += wi * ty[r] * ty[c];
        }
        m[r * (all + 1) + all] += wi * t[r] * dx[i];
        my[r * (all + 1) + all] += wi * ty[r] * dy[i];
      }
    }
    const nx = new Float64Array(all), ny = new Float64Array(all);
    if (!solveAugmented(m, all, nx) || !solveAugmented(my, all, ny)) break;
    ux = nx;
    uy = ny;
    const f: SmoothField = { terms, cx, cy, scale, u0, u1, v0, v1, ux, uy, spread: 0, lens: fieldLens };
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
  return { terms, cx, cy, scale, u0, u1, v0, v1, ux, uy, spread, lens: fieldLens };
}
