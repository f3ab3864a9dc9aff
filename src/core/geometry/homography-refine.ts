import type { Correspondences, Homography } from './homography.js';
import { invert, multiply, normalisingTransform, orientPositive } from './homography.js';
import { solveAugmented } from '../numeric/linear-solve.js';

/**
 * Levenberg-Marquardt refinement of a homography on the transfer error |b - H a|^2 over the given
 * correspondences (Hartley & Zisserman, Multiple View Geometry, sec. 4.2 and A6.2), in Hartley-
 * normalised coordinates with h33 = 1 and eight free parameters, each correspondence weighted by its
 * `weight` when given. Returns the refined homography, or the input when no step lowers the cost.
 */
export function refineHomography(h: Homography, c: Correspondences, idx: ArrayLike<number>, count: number, maxIterations = 10): Homography {
  if (count < 5) return h;
  const ta = normalisingTransform(c.ax, c.ay, idx, count);
  const tb = normalisingTransform(c.bx, c.by, idx, count);
  const taInv = invert(ta);
  if (!taInv) return h;
  const hn0 = multiply(multiply(tb, h), taInv);
  if (Math.abs(hn0[8]) < 1e-9) return h;
  let p = new Float64Array(8);
  for (let i = 0; i < 8; i++) p[i] = hn0[i] / hn0[8];
  const xs = new Float64Array(count), ys = new Float64Array(count), us = new Float64Array(count), vs = new Float64Array(count);
  const wt = new Float64Array(count);
  for (let k = 0; k < count; k++) {
    const i = idx[k];
    wt[k] = c.weight ? c.weight[i] : 1;
    xs[k] = ta[0] * c.ax[i] + ta[2];
    ys[k] = ta[4] * c.ay[i] + ta[5];
    us[k] = tb[0] * c.bx[i] + tb[2];
    vs[k] = tb[4] * c.by[i] + tb[5];
  }
  const cost = (q: Float64Array): number => {
    let s = 0;
    for (let k = 0; k < count; k++) {
      const x = xs[k], y = ys[k];
      const w = q[6] * x + q[7] * y + 1;
      if (w <= 1e-9) return Infinity;
      const dx = (q[0] * x + q[1] * y + q[2]) / w - us[k];
      const dy = (q[3] * x + q[4] * y + q[5]) / w - vs[k];
      s += wt[k] * (dx * dx + dy * dy);
    }
    return s;
  };
  let current = cost(p);
  if (!Number.isFinite(current)) return h;
  let lambda = 1e-3;
  const jtj = new Float64Array(64);
  const jtr = new Float64Array(8);
  const aug = new Float64Array(72);
  const delta = new Float64Array(8);
  const jx = new Float64Array(8);
  const jy = new Float64Array(8);
  for (let it = 0; it < maxIterations; it++) {
    jtj.fill(0);
    jtr.fill(0);
    for (let k = 0; k < count; k++) {
      const x = xs[k], y = ys[k];
      const w = p[6] * x + p[7] * y + 1;
      const px = (p[0] * x + p[1] * y + p[2]) / w;
      const py = (p[3] * x + p[4] * y + p[5]) / w;
      const rx = us[k] - px, ry = vs[k] - py;
      const iw = 1 / w;
      jx[0] = x * iw; jx[1] = y * iw; jx[2] = iw; jx[3] = 0; jx[4] = 0; jx[5] = 0; jx[6] = -x * px * iw; jx[7] = -y * px * iw;
      jy[0] = 0; jy[1] = 0; jy[2] = 0; jy[3] = x * iw; jy[4] = y * iw; jy[5] = iw; jy[6] = -x * py * iw; jy[7] = -y * py * iw;
      const wk = wt[k];
      for (let a = 0; a < 8; a++) {
        jtr[a] += wk * (jx[a] * rx + jy[a] * ry);
        for (let b = a; b < 8; b++) jtj[a * 8 + b] += wk * (jx[a] * jx[b] + jy[a] * jy[b]);
      }
    }
    let improved = false;
    for (let attempt = 0; attempt < 8 && !improved; attempt++) {
      for (let a = 0; a < 8; a++) {
        for (let b = 0; b < 8; b++) aug[a * 9 + b] = a <= b ? jtj[a * 8 + b] : jtj[b * 8 + a];
        aug[a * 9 + a] *= 1 + lambda;
        aug[a * 9 + 8] = jtr[a];
      }
      if (!solveAugmented(aug, 8, delta)) {
        lambda *= 10;
        continue;
      }
      const trial = new Float64Array(8);
      for (let a = 0; a < 8; a++) trial[a] = p[a] + delta[a];
      const c2 = cost(trial);
      if (c2 < current) {
        const gain = (current - c2) / Math.max(current, 1e-30);
        p = trial;
        current = c2;
        lambda = Math.max(lambda / 10, 1e-9);
        improved = true;
        if (gain < 1e-10) it = maxIterations;
      } else lambda *= 10;
    }
    if (!improved) break;
  }
  const hn = Float64Array.of(p[0], p[1], p[2], p[3], p[4], p[5], p[6], p[7], 1);
  const tbInv = invert(tb);
  if (!tbInv) return h;
  const out = multiply(multiply(tbInv, hn), ta);
  if (!out.every(Number.isFinite)) return h;
  for (let i = 0; i < 9; i++) out[i] /= out[8];
  return orientPositive(out, -ta[2] / ta[0], -ta[5] / ta[4]);
}
