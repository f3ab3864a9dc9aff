import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { solveAugmented } from '../numeric/linear-solve.js';
import { identity, invert, multiply, normalise, project } from '../numeric/matrix3.js';

/** A 3x3 homography, row-major, mapping (x, y, 1) of frame a to frame b up to scale. */
export type Homography = Float64Array;

/** Point correspondences as a struct of arrays: (ax[i], ay[i]) in a matches (bx[i], by[i]) in b. */
export interface Correspondences {
  readonly count: number;
  readonly ax: Float64Array;
  readonly ay: Float64Array;
  readonly bx: Float64Array;
  readonly by: Float64Array;
  /** Optional weight of each correspondence in least-squares refinement (inverse variance). */
  readonly weight?: Float64Array;
}

// The 3x3 operations live in matrix3.ts; homography code and its callers use them under these names.
export { identity, invert, multiply, normalise, project };

/** The similarity T of Hartley's normalisation: centroid to the origin, mean distance sqrt(2). */
export function normalisingTransform(xs: Float64Array, ys: Float64Array, idx: ArrayLike<number> | null, count: number): Homography {
  let cx = 0, cy = 0;
  for (let k = 0; k < count; k++) {
    const i = idx ? idx[k] : k;
    cx += xs[i];
    cy += ys[i];
  }
  cx /= count;
  cy /= count;
  let d = 0;
  for (let k = 0; k < count; k++) {
    const i = idx ? idx[k] : k;
    d += Math.hypot(xs[i] - cx, ys[i] - cy);
  }
  d /= count;
  const s = d > 0 ? Math.SQRT2 / d : 1;
  return Float64Array.of(s, 0, -s * cx, 0, s, -s * cy, 0, 0, 1);
}

/**
 * Homography from n >= 4 correspondences by the normalised direct linear transform (Hartley, "In
 * defense of the eight-point algorithm", PAMI 1997; Hartley & Zisserman, Multiple View Geometry,
 * 2nd ed., alg. 4.2): the null vector of A is the eigenvector of A^T A with the smallest eigenvalue
 * (ml-matrix's symmetric eigendecomposition; A^T A is accumulated directly, 9x9, whatever n is).
 */
export function fitHomographyDLT(c: Correspondences, idx: ArrayLike<number> | null, count: number): Homography | null {
  if (count < 4) return null;
  const ta = normalisingTransform(c.ax, c.ay, idx, count);
  const tb = normalisingTransform(c.bx, c.by, idx, count);
  const ata = new Float64Array(81);
  const r1 = new Float64Array(9);
  const r2 = new Float64Array(9);
  for (let k = 0; k < count; k++) {
    const i = idx ? idx[k] : k;
    const x = ta[0] * c.ax[i] + ta[2], y = ta[4] * c.ay[i] + ta[5];
    const u = tb[0] * c.bx[i] + tb[2], v = tb[4] * c.by[i] + tb[5];
    r1[0] = -x; r1[1] = -y; r1[2] = -1; r1[3] = 0; r1[4] = 0; r1[5] = 0; r1[6] = u * x; r1[7] = u * y; r1[8] = u;
    r2[0] = 0; r2[1] = 0; r2[2] = 0; r2[3] = -x; r2[4] = -y; r2[5] = -1; r2[6] = v * x; r2[7] = v * y; r2[8] = v;
    for (let p = 0; p < 9; p++) {
      const a1 = r1[p], a2 = r2[p];
      for (let q = p; q < 9; q++) ata[p * 9 + q] += a1 * r1[q] + a2 * r2[q];
    }
  }
  const rows: number[][] = [];
  for (let p = 0; p < 9; p++) {
    const row: number[] = [];
    for (let q = 0; q < 9; q++) row.push(p <= q ? ata[p * 9 + q] : ata[q * 9 + p]);
    rows.push(row);
  }
  const evd = new EigenvalueDecomposition(new Matrix(rows), { assumeSymmetric: true });
  const values = evd.realEigenvalues;
  let min = 0;
  for (let i = 1; i < values.length; i++) if (values[i] < values[min]) min = i;
  const vec = evd.eigenvectorMatrix.getColumn(min);
  const hn = Float64Array.from(vec);
  const tbInv = invert(tb);
  if (!tbInv) return null;
  const h = multiply(multiply(tbInv, hn), ta);
  return h.every(Number.isFinite) ? orientPositive(normalise(h), -ta[2] / ta[0], -ta[5] / ta[4]) : null;
}

const minimalSystem = new Float64Array(8 * 9);
const minimalX = new Float64Array(8);

/**
 * Homography through exactly four correspondences (the RANSAC minimal sample): the 8x8 system with
 * h33 = 1 in Hartley-normalised coordinates, solved by elimination. Null when degenerate.
 */
export function fitHomographyMinimal(c: Correspondences, idx: ArrayLike<number>): Homography | null {
  const ta = normalisingTransform(c.ax, c.ay, idx, 4);
  const tb = normalisingTransform(c.bx, c.by, idx, 4);
  const m = minimalSystem;
  for (let k = 0; k < 4; k++) {
    const i = idx[k];
    const x = ta[0] * c.ax[i] + ta[2], y = ta[4] * c.ay[i] + ta[5];
    const u = tb[0] * c.bx[i] + tb[2], v = tb[4] * c.by[i] + tb[5];
    let o = 2 * k * 9;
    m[o] = x; m[o + 1] = y; m[o + 2] = 1; m[o + 3] = 0; m[o + 4] = 0; m[o + 5] = 0; m[o + 6] = -u * x; m[o + 7] = -u * y; m[o + 8] = u;
    o += 9;
    m[o] = 0; m[o + 1] = 0; m[o + 2] = 0; m[o + 3] = x; m[o + 4] = y; m[o + 5] = 1; m[o + 6] = -v * x; m[o + 7] = -v * y; m[o + 8] = v;
  }
  if (!solveAugmented(m, 8, minimalX)) return null;
  const hn = Float64Array.of(minimalX[0], minimalX[1], minimalX[2], minimalX[3], minimalX[4], minimalX[5], minimalX[6], minimalX[7], 1);
  const tbInv = Float64Array.of(1 / tb[0], 0, -tb[2] / tb[0], 0, 1 / tb[4], -tb[5] / tb[4], 0, 0, 1);
  const h = multiply(multiply(tbInv, hn), ta);
  return h.every(Number.isFinite) ? orientPositive(h, -ta[2] / ta[0], -ta[5] / ta[4]) : null;
}

/**
 * The overall sign of a homography is arbitrary; fix it so that w > 0 at (cx, cy), a point of the
 * data, so that "w <= 0" means "behind the camera" for every later test.
 */
export function orientPositive(h: Homography, cx: number, cy: number): Homography {
  if (h[6] * cx + h[7] * cy + h[8] < 0) for (let i = 0; i < 9; i++) h[i] = -h[i];
  return h;
}

/** Squared transfer error |b - H a|^2 of each correspondence; Infinity where a maps behind b's camera (w <= 0, see orientPositive). */
export function transferErrors(h: ArrayLike<number>, c: Correspondences, out: Float64Array): void {
  const h0 = h[0], h1 = h[1], h2 = h[2], h3 = h[3], h4 = h[4], h5 = h[5], h6 = h[6], h7 = h[7], h8 = h[8];
  for (let i = 0; i < c.count; i++) {
    const x = c.ax[i], y = c.ay[i];
    const w = h6 * x + h7 * y + h8;
    if (w <= 1e-12) {
      out[i] = Infinity;
      continue;
    }
    const dx = (h0 * x + h1 * y + h2) / w - c.bx[i];
    const dy = (h3 * x + h4 * y + h5) / w - c.by[i];
    out[i] = dx * dx + dy * dy;
  }
}
