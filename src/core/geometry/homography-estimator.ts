import type { Correspondences, Homography } from './homography.js';
import { fitHomographyDLT, fitHomographyMinimal, project, transferErrors } from './homography.js';
import { refineHomography } from './homography-refine.js';
import type { RandomSource } from '../numeric/random.js';
import type { RansacModel, RansacParams, RansacResult } from './ransac.js';
import { defaultRansacParams, ransac } from './ransac.js';

export interface PlausibilityLimits {
  /** Largest local magnification (and smallest, as its inverse) a pair may show. */
  readonly maxScale: number;
  /** Largest ratio of the local stretch in two directions (skew, strong perspective). */
  readonly maxAnisotropy: number;
}

/**
 * A focal-length slip of 20 % is a 1.2x scale; a 40-degree change of viewpoint on a plane stays
 * within a stretch of about 2. Beyond these, a model is far likelier to be a wrong fit than a shot.
 */
export const defaultPlausibility: PlausibilityLimits = { maxScale: 4, maxAnisotropy: 4 };

/** Local linear behaviour of h at (x, y): determinant and singular values of its Jacobian. */
export function localJacobian(h: ArrayLike<number>, x: number, y: number): { det: number; sMax: number; sMin: number; w: number } {
  const [px, py, w] = project(h, x, y);
  const a = (h[0] - h[6] * px) / w, b = (h[1] - h[7] * px) / w;
  const c = (h[3] - h[6] * py) / w, d = (h[4] - h[7] * py) / w;
  const e = (a + d) / 2, f = (a - d) / 2, g = (c + b) / 2, k = (c - b) / 2;
  const q = Math.hypot(e, k), r = Math.hypot(f, g);
  return { det: a * d - b * c, sMax: q + r, sMin: Math.abs(q - r), w };
}

/** True when h keeps orientation and stays within the limits near (x, y), a point of the data. */
export function isPlausible(h: ArrayLike<number>, x: number, y: number, limits: PlausibilityLimits = defaultPlausibility): boolean {
  const j = localJacobian(h, x, y);
  if (!(j.w > 0) || !(j.det > 0)) return false;
  if (j.sMax > limits.maxScale || j.sMin < 1 / limits.maxScale) return false;
  return j.sMax <= limits.maxAnisotropy * j.sMin;
}

function cross(ax: number, ay: number, bx: number, by: number, cx: number, cy: number): number {
  return (bx - ax) * (cy - ay) - (by - ay) * (cx - ax);
}

const triples = [[0, 1, 2], [0, 1, 3], [0, 2, 3], [1, 2, 3]];

/**
 * A minimal sample is usable when no three of its points are (nearly) collinear in either frame and
 * every triangle keeps its orientation from a to b: a homography that keeps orientation cannot map
 * it otherwise, so such a sample holds an outlier or asks for a mirror image.
 */
export function isSampleUsable(c: Correspondences, s: ArrayLike<number>): boolean {
  for (const [i, j, k] of triples) {
    const p = s[i], q = s[j], r = s[k];
    const ca = cross(c.ax[p], c.ay[p], c.ax[q], c.ay[q], c.ax[r], c.ay[r]);
    const cb = cross(c.bx[p], c.by[p], c.bx[q], c.by[q], c.bx[r], c.by[r]);
    const la = Math.hypot(c.ax[q] - c.ax[p], c.ay[q] - c.ay[p]) * Math.hypot(c.ax[r] - c.ax[p], c.ay[r] - c.ay[p]);
    const lb = Math.hypot(c.bx[q] - c.bx[p], c.by[q] - c.by[p]) * Math.hypot(c.bx[r] - c.bx[p], c.by[r] - c.by[p]);
    if (Math.abs(ca) <= 0.01 * la || Math.abs(cb) <= 0.01 * lb) return false;
    if (ca > 0 !== cb > 0) return false;
  }
  return true;
}

export interface HomographyFit {
  readonly homography: Homography;
  readonly inliers: Uint8Array;
  readonly inlierCount: number;
  readonly iterations: number;
  /** Root-mean-square transfer error over the inliers, in pixels. */
  readonly rmsError: number;
}

export interface HomographyFitParams {
  readonly ransac: Partial<RansacParams>;
  readonly plausibility: PlausibilityLimits;
  /** Levenberg-Marquardt refinement on the final inliers. */
  readonly refine: boolean;
}

export const defaultHomographyFitParams: HomographyFitParams = { ransac: {}, plausibility: defaultPlausibility, refine: true };

/**
 * Robust homography: RANSAC on minimal 4-point samples (degenerate and orientation-inconsistent
 * samples rejected, implausible models skipped), refits by normalised DLT on all inliers, and an
 * optional Levenberg-Marquardt refinement. Null when no plausible model has support: "no model",
 * never a guess.
 */
export function fitHomography(c: Correspondences, params: Partial<HomographyFitParams> = {}, random?: RandomSource): HomographyFit | null {
  const p = { ...defaultHomographyFitParams, ...params };
  if (c.count < 4) return null;
  let mx = 0, my = 0;
  for (let i = 0; i < c.count; i++) {
    mx += c.ax[i];
    my += c.ay[i];
  }
  mx /= c.count;
  my /= c.count;
  const model: RansacModel<Homography> = {
    size: c.count,
    sampleSize: 4,
    checkSample: (s) => isSampleUsable(c, s),
    fitMinimal: (s) => fitHomographyMinimal(c, s),
    checkModel: (h) => isPlausible(h, mx, my, p.plausibility),
    squaredErrors: (h, out) => transferErrors(h, c, out),
    refit: (idx, n) => fitHomographyDLT(c, idx, n),
  };
  const found: RansacResult<Homography> | null = ransac(model, p.ransac, random);
  if (!found) return null;
  let h = found.model;
  const threshold = p.ransac.threshold ?? defaultRansacParams.threshold;
  const errors = new Float64Array(c.count);
  const collect = (hh: Homography): Int32Array => {
    transferErrors(hh, c, errors);
    const idx: number[] = [];
    for (let i = 0; i < c.count; i++) if (errors[i] < threshold * threshold) idx.push(i);
    return Int32Array.from(idx);
  };
  let idx = collect(h);
  if (p.refine) {
    const refined = refineHomography(h, c, idx, idx.length);
    const refinedIdx = collect(refined);
    if (refinedIdx.length >= idx.length) {
      h = refined;
      idx = refinedIdx;
    }
  }
  let cx = 0, cy = 0, sse = 0;
  transferErrors(h, c, errors);
  for (const i of idx) {
    cx += c.ax[i];
    cy += c.ay[i];
    sse += errors[i];
  }
  if (idx.length < 5) return null;
  cx /= idx.length;
  cy /= idx.length;
  if (!isPlausible(h, cx, cy, p.plausibility)) return null;
  for (const i of idx) if (!(errors[i] < Infinity)) return null;
  const inliers = new Uint8Array(c.count);
  for (const i of idx) inliers[i] = 1;
  return { homography: h, inliers, inlierCount: idx.length, iterations: found.iterations, rmsError: Math.sqrt(sse / idx.length) };
}
