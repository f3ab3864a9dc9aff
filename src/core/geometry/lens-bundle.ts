/**
 * Bundle adjustment of a sequence shot from one place, with a lens term: the station rotations,
 * the focal length and the radial distortion (lens.ts) refined jointly over the tie points of all
 * matched pairs, as in Brown & Lowe, "Automatic panoramic image stitching using invariant
 * features", IJCV 2007, sec. 4 (rotations and focal length, Levenberg-Marquardt, robust error),
 * with Brown's radial terms added (D. C. Brown 1966, (memory)).
 *
 * A tie point (x_a in frame i, x_b in frame j, full-resolution pixels, principal point at the frame
 * centre) is undistorted in i, turned into a ray, carried into j by R_j R_i^T, projected, distorted
 * and compared with x_b: the residual is in pixels of j. Parametrisation, for a solve that stays
 * well conditioned: rotation increments as small rotation vectors about the current estimate
 * (station 0 held fixed), the focal length as log f (so a step is a relative change), k1 and k2 on
 * the focal-normalised radius (so they are of order 0.1 whatever the pixel count). The focal length
 * from EXIF enters as a soft prior, not a constant; k1 and k2 have a weak prior towards zero and a
 * plausible range, and steps that would make the model fold back inside the frames are refused.
 */
import { Matrix, SingularValueDecomposition } from 'ml-matrix';
import type { RadialDistortion } from './lens.js';
import { monotonicUpTo, undistortRadius } from './lens.js';
import type { FrameSize, Rotation, RotationLink } from './rotations.js';
import { nearestRotation, rotationOfVector } from './rotations.js';
import { multiply, transpose } from '../numeric/matrix3.js';

export interface BundleOptions {
  /** Refine the focal length (else it stays at f0). */
  readonly refineFocal: boolean;
  /**
   * The focal length the files claim, full-resolution pixels, and how far off it may be (relative
   * standard deviation, e.g. 0.05): a soft pull on log f. Null: no prior.
   */
  readonly focalPrior: { readonly focalPx: number; readonly relativeSd: number } | null;
  /** Radial terms refined: 0 (a pinhole), 1 (k1) or 2 (k1 and k2). */
  readonly distortionTerms: 0 | 1 | 2;
  /** Where k1 and k2 start (their value when not refined). */
  readonly distortion: RadialDistortion;
  readonly maxIterations: number;
}

export const defaultBundleOptions: BundleOptions = {
  refineFocal: true,
  focalPrior: null,
  distortionTerms: 0,
  distortion: { k1: 0, k2: 0 },
  maxIterations: 20,
};

export interface BundleResult {
  readonly rotations: (Rotation | null)[];
  readonly focalPx: number;
  readonly distortion: RadialDistortion;
  /** Root-mean-square residual of all tie points taking part, pixels. */
  readonly rmsPx: number;
  /** The same per link, in the order given (NaN for links that took no part). */
  readonly linkRmsPx: number[];
}

/** Most tie points of one link that take part (spread evenly over its list). */
const pointsPerLink = 200;
/** Residuals beyond this (pixels) count linearly, not squared (Huber). */
const huberPx = 2;
/**
 * Largest |k1| and |k2| on the focal-normalised radius: beyond any rectilinear lens we know of
 * ((memory): uncorrected zooms reach about -0.3 at the wide end; fisheye lenses follow another model).
 */
export const maxAbsK = 0.5;
/** Weak priors: a k of this size costs as much as one tie point one pixel off (our own choice). */
const kPriorSd = 0.2;

/**
 * Solves A x = b for a symmetric positive definite A (n x n, row-major; overwritten by its Cholesky
 * factor), false when A is not positive definite to working precision.
 */
export function choleskySolve(a: Float64Array, n: number, b: ArrayLike<number>, x: Float64Array): boolean {
  for (let j = 0; j < n; j++) {
    const rj = j * n;
    let d = a[rj + j];
    for (let k = 0; k < j; k++) d -= a[rj + k] * a[rj + k];
    if (!(d > 1e-300)) return false;
    const l = Math.sqrt(d);
    a[rj + j] = l;
    for (let i = j + 1; i < n; i++) {
      const ri = i * n;
      let s = a[ri + j];
      for (let k = 0; k < j; k++) s -= a[ri + k] * a[rj + k];
      a[ri + j] = s / l;
    }
  }
  // L y = b, then L^T x = y.
  for (let i = 0; i < n; i++) {
    let s = b[i];
    for (let k = 0; k < i; k++) s -= a[i * n + k] * x[k];
    x[i] = s / a[i * n + i];
  }
  for (let i = n - 1; i >= 0; i--) {
    let s = x[i];
    for (let k = i + 1; k < n; k++) s -= a[k * n + i] * x[k];
    x[i] = s / a[i * n + i];
  }
  return true;
}

/** Kabsch: the rotation R minimising sum |b_k - R a_k|^2 over unit rays (rows of 3), via SVD. */
export function rotationFromRays(a: ArrayLike<number>, b: ArrayLike<number>): Rotation | null {
  const n = Math.floor(a.length / 3);
  if (n < 3) return null;
  const m = new Matrix(3, 3);
  for (let k = 0; k < n; k++)
    for (let r = 0; r < 3; r++) for (let c = 0; c < 3; c++) m.set(r, c, m.get(r, c) + b[3 * k + r] * a[3 * k + c]);
  const svd = new SingularValueDecomposition(m);
  if (!(svd.diagonal[1] > 1e-12)) return null;
  return nearestRotation(m.to1DArray());
}

/** The unit ray (camera frame) of a full-resolution pixel through the lens, into out at o; false where the lens images nothing. */
export function pixelRay(x: number, y: number, size: FrameSize, f: number, d: RadialDistortion, out: Float64Array, o: number): boolean {
  const xd = (x - (size.width - 1) / 2) / f, yd = (y - (size.height - 1) / 2) / f;
  const rd = Math.hypot(xd, yd);
  const ru = undistortRadius(rd, d.k1, d.k2);
  if (!Number.isFinite(ru)) return false;
  const s = rd > 0 ? ru / rd : 1;
  const u = xd * s, v = yd * s, n = Math.sqrt(u * u + v * v + 1);
  out[o] = u / n;
  out[o + 1] = v / n;
  out[o + 2] = 1 / n;
  return true;
}

/** The largest focal-normalised radius any frame reaches (its corners), at focal length f. */
export function cornerRadius(sizes: readonly FrameSize[], f: number): number {
  let r = 0;
  for (const s of sizes) r = Math.max(r, Math.hypot(s.width / 2, s.height / 2) / f);
  return r;
}

/**
 * Refines the rotations (station 0 held fixed; stations without one stay without), the focal
 * length and the radial terms by Levenberg-Marquardt on the Huber-weighted transfer error.
 */
export function bundleAdjust(initial: readonly (Rotation | null)[], links: readonly RotationLink[], f0: number, sizes: readonly FrameSize[], options: Partial<BundleOptions> = {}): BundleResult {
  const o = { ...defaultBundleOptions, ...options };
  if (!(f0 > 0 && Number.isFinite(f0))) throw new RangeError(`Expected a positive focal length in pixels for f0 but received ${f0}`);
  const n = initial.length;
  const index = new Int32Array(n).fill(-1);
  let params = 0;
  for (let s = 1; s < n; s++) if (initial[s]) index[s] = 3 * params++;
  const focalIndex = o.refineFocal ? 3 * params : -1;
  const k1Index = o.distortionTerms >= 1 ? 3 * params + (o.refineFocal ? 1 : 0) : -1;
  const k2Index = o.distortionTerms >= 2 ? k1Index + 1 : -1;
  const P = 3 * params + (o.refineFocal ? 1 : 0) + o.distortionTerms;
  const used = links.filter((l) => initial[l.i] && initial[l.j] && l.i !== l.j);
  // Each link's sampled tie points, packed: xa, ya, xb, yb.
  const samples = used.map((l) => {
    const count = Math.floor(l.points.length / 4);
    const stride = Math.max(1, Math.ceil(count / pointsPerLink));
    const out: number[] = [];
    for (let k = 0; k < count; k += stride) out.push(l.points[4 * k], l.points[4 * k + 1], l.points[4 * k + 2], l.points[4 * k + 3]);
    return Float64Array.from(out);
  });

  let rotations: (Rotation | null)[] = initial.map((r) => (r ? Float64Array.from(r) : null));
  let logF = Math.log(f0);
  let k1 = o.distortion.k1, k2 = o.distortion.k2;
  const priorLogF = o.focalPrior ? Math.log(o.focalPrior.focalPx) : 0;
  const priorW = o.focalPrior ? 1 / Math.max(1e-6, o.focalPrior.relativeSd) : 0;

  // The ideal (undistorted, focal-normalised) points of side a of one link, into out (2 per point;
  // NaN where the lens images nothing). They do not depend on the rotations, so the rotations'
  // derivatives reuse them.
  const idealA = (li: number, lf: number, a1: number, a2: number, out: Float64Array): void => {
    const l = used[li], f = Math.exp(lf), pts = samples[li];
    const a = sizes[l.i];
    const cxa = (a.width - 1) / 2, cya = (a.height - 1) / 2;
    for (let k = 0, p = 0; p < pts.length; k += 2, p += 4) {
      const xd = (pts[p] - cxa) / f, yd = (pts[p + 1] - cya) / f;
      const rd = Math.sqrt(xd * xd + yd * yd);
      const s = rd > 0 ? undistortRadius(rd, a1, a2) / rd : 1;
      out[k] = xd * s;
      out[k + 1] = yd * s;
    }
  };
  // Residuals of one link (2 per sampled point, pixels of j) from its ideal points, into out.
  const project = (li: number, ri: Rotation, rj: Rotation, lf: number, a1: number, a2: number, ideal: Float64Array, out: Float64Array): void => {
    const l = used[li], f = Math.exp(lf), pts = samples[li];
    const b = sizes[l.j];
    const rel = multiply(rj, transpose(ri));
    const cxb = (b.width - 1) / 2, cyb = (b.height - 1) / 2;
    for (let k = 0, p = 0; p < pts.length; k += 2, p += 4) {
      const u = ideal[k], v = ideal[k + 1];
      const x = rel[0] * u + rel[1] * v + rel[2], y = rel[3] * u + rel[4] * v + rel[5], z = rel[6] * u + rel[7] * v + rel[8];
      if (!(z > 1e-9)) {
        out[k] = 1e3;
        out[k + 1] = 1e3;
        continue;
      }
      const xu = x / z, yu = y / z, r2 = xu * xu + yu * yu;
      const g = 1 + r2 * (a1 + a2 * r2);
      out[k] = f * xu * g + cxb - pts[p + 2];
      out[k + 1] = f * yu * g + cyb - pts[p + 3];
    }
  };
  const idealScratch = used.map((_, li) => new Float64Array(samples[li].length / 2));
  const residuals = (li: number, ri: Rotation, rj: Rotation, lf: number, a1: number, a2: number, out: Float64Array): void => {
    idealA(li, lf, a1, a2, idealScratch[li]);
    project(li, ri, rj, lf, a1, a2, idealScratch[li], out);
  };
  const huberCost = (r: number): number => (Math.abs(r) <= huberPx ? r * r : 2 * huberPx * Math.abs(r) - huberPx * huberPx);
  const priorCost = (lf: number, a1: number, a2: number): number => (priorW * (lf - priorLogF)) ** 2 + (a1 / kPriorSd) ** 2 + (a2 / kPriorSd) ** 2;
  const scratch = used.map((_, li) => new Float64Array(samples[li].length / 2));
  const totalCost = (rots: (Rotation | null)[], lf: number, a1: number, a2: number): number => {
    let c = priorCost(lf, a1, a2);
    used.forEach((l, li) => {
      const out = scratch[li];
      residuals(li, rots[l.i]!, rots[l.j]!, lf, a1, a2, out);
      for (let k = 0; k < out.length; k++) c += huberCost(out[k]);
    });
    return c;
  };
  // The lens must not fold back inside any frame (with a margin for focal-length steps).
  const plausible = (lf: number, a1: number, a2: number): boolean =>
    Math.abs(a1) <= maxAbsK && Math.abs(a2) <= maxAbsK && monotonicUpTo(1.1 * cornerRadius(sizes, Math.exp(lf)), a1, a2);

  let cost = totalCost(rotations, logF, k1, k2);
  const damped = new Float64Array(P * P), rhs = new Float64Array(P), delta = new Float64Array(P);
  let lambda = 1e-3;
  const eps = 1e-6;
  for (let it = 0; it < o.maxIterations && P > 0 && used.length > 0; it++) {
    const jtj = new Float64Array(P * P);
    const jtr = new Float64Array(P);
    used.forEach((l, li) => {
      const m = samples[li].length / 2;
      const base = new Float64Array(m);
      const ri = rotations[l.i]!, rj = rotations[l.j]!;
      const ideal = new Float64Array(m);
      idealA(li, logF, k1, k2, ideal);
      project(li, ri, rj, logF, k1, k2, ideal, base);
      // Forward differences for the parameters this link depends on: its two rotations, the lens.
      const cols: { p: number; d: Float64Array }[] = [];
      const probe = new Float64Array(m);
      const column = (p: number): void => {
        const d = new Float64Array(m);
        for (let k = 0; k < m; k++) d[k] = (probe[k] - base[k]) / eps;
        cols.push({ p, d });
      };
      for (const [s, which] of [[l.i, 'i'], [l.j, 'j']] as const) {
        if (index[s] < 0) continue;
        for (let axis = 0; axis < 3; axis++) {
          const w = [0, 0, 0];
          w[axis] = eps;
          const moved = multiply(rotationOfVector(w[0], w[1], w[2]), rotations[s]!);
          project(li, which === 'i' ? moved : ri, which === 'j' ? moved : rj, logF, k1, k2, ideal, probe);
          column(index[s] + axis);
        }
      }
      if (focalIndex >= 0) {
        residuals(li, ri, rj, logF + eps, k1, k2, probe);
        column(focalIndex);
      }
      if (k1Index >= 0) {
        residuals(li, ri, rj, logF, k1 + eps, k2, probe);
        column(k1Index);
      }
      if (k2Index >= 0) {
        residuals(li, ri, rj, logF, k1, k2 + eps, probe);
        column(k2Index);
      }
      // Huber as iteratively reweighted least squares.
      const wts = Float64Array.from(base, (r) => (Math.abs(r) <= huberPx ? 1 : huberPx / Math.abs(r)));
      for (let x = 0; x < cols.length; x++) {
        const cx = cols[x];
        let g = 0;
        for (let k = 0; k < m; k++) g += wts[k] * cx.d[k] * base[k];
        jtr[cx.p] += g;
        for (let y = x; y < cols.length; y++) {
          const cy = cols[y];
          let s = 0;
          for (let k = 0; k < m; k++) s += wts[k] * cx.d[k] * cy.d[k];
          jtj[cx.p * P + cy.p] += s;
          if (cy.p !== cx.p) jtj[cy.p * P + cx.p] += s;
        }
      }
    });
    // The priors' own residuals: w (log f - log f_exif), k / sd.
    if (focalIndex >= 0 && priorW > 0) {
      jtj[focalIndex * P + focalIndex] += priorW * priorW;
      jtr[focalIndex] += priorW * priorW * (logF - priorLogF);
    }
    if (k1Index >= 0) {
      jtj[k1Index * P + k1Index] += 1 / kPriorSd ** 2;
      jtr[k1Index] += k1 / kPriorSd ** 2;
    }
    if (k2Index >= 0) {
      jtj[k2Index * P + k2Index] += 1 / kPriorSd ** 2;
      jtr[k2Index] += k2 / kPriorSd ** 2;
    }
    let improved = false;
    for (let attempt = 0; attempt < 8 && !improved; attempt++) {
      for (let r = 0; r < P; r++) for (let c = 0; c < P; c++) damped[r * P + c] = jtj[r * P + c] + (r === c ? lambda * (jtj[r * P + r] + 1e-9) : 0);
      for (let r = 0; r < P; r++) rhs[r] = -jtr[r];
      if (!choleskySolve(damped, P, rhs, delta)) {
        lambda *= 10;
        continue;
      }
      const next = rotations.map((r, s) => (r && index[s] >= 0 ? multiply(rotationOfVector(delta[index[s]], delta[index[s] + 1], delta[index[s] + 2]), r) : r));
      const nextF = focalIndex >= 0 ? logF + delta[focalIndex] : logF;
      const nextK1 = k1Index >= 0 ? k1 + delta[k1Index] : k1;
      const nextK2 = k2Index >= 0 ? k2 + delta[k2Index] : k2;
      const c = plausible(nextF, nextK1, nextK2) ? totalCost(next, nextF, nextK1, nextK2) : Infinity;
      if (c < cost) {
        const gain = (cost - c) / Math.max(cost, 1e-12);
        rotations = next.map((r) => (r ? nearestRotation(r) : null));
        logF = nextF;
        k1 = nextK1;
        k2 = nextK2;
        cost = c;
        lambda = Math.max(1e-9, lambda / 10);
        improved = true;
        if (gain < 1e-7) it = o.maxIterations;
      } else lambda *= 10;
    }
    if (!improved) break;
  }

  const linkRmsPx = used.map((l, li) => {
    const out = new Float64Array(samples[li].length / 2);
    residuals(li, rotations[l.i]!, rotations[l.j]!, logF, k1, k2, out);
    return out.length ? Math.sqrt(out.reduce((s, r) => s + r * r, 0) / (out.length / 2)) : 0;
  });
  const counts = samples.map((s) => s.length / 4);
  const all = counts.reduce((s, c) => s + c, 0);
  const rmsPx = all ? Math.sqrt(linkRmsPx.reduce((s, r, li) => s + r * r * counts[li], 0) / all) : 0;
  const byLink = links.map((l) => {
    const k = used.indexOf(l);
    return k >= 0 ? linkRmsPx[k] : NaN;
  });
  return { rotations, focalPx: Math.exp(logF), distortion: { k1, k2 }, rmsPx, linkRmsPx: byLink };
}

/**
 * The rotation R_j R_i^T one link's tie points show under the given lens (Kabsch on their rays),
 * or null with fewer than three usable points.
 */
export function linkRotation(l: RotationLink, sizes: readonly FrameSize[], f: number, d: RadialDistortion): Rotation | null {
  const count = Math.floor(l.points.length / 4);
  const a = new Float64Array(3 * count), b = new Float64Array(3 * count);
  let m = 0;
  for (let k = 0; k < count; k++) {
    if (!pixelRay(l.points[4 * k], l.points[4 * k + 1], sizes[l.i], f, d, a, 3 * m)) continue;
    if (!pixelRay(l.points[4 * k + 2], l.points[4 * k + 3], sizes[l.j], f, d, b, 3 * m)) continue;
    m++;
  }
  return rotationFromRays(a.subarray(0, 3 * m), b.subarray(0, 3 * m));
}
