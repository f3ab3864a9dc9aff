import type { RandomSource } from '../numeric/random.js';
import { createRandom } from '../numeric/random.js';

/**
 * What the RANSAC engine needs from a model (the estimator engine and the model kept apart, as in
 * OpenCV's calib3d): a minimal solver, an error per datum, and optional sample and model checks and
 * a refit on all inliers.
 */
export interface RansacModel<M> {
  /** Number of data. */
  readonly size: number;
  /** Data per minimal sample (4 for a homography). */
  readonly sampleSize: number;
  /** Rejects a degenerate sample before solving (collinear points, inconsistent orientation). */
  checkSample?(sample: Int32Array): boolean;
  /** The model through a minimal sample, or null when there is none. */
  fitMinimal(sample: Int32Array): M | null;
  /** Rejects a model before it is scored (implausible geometry). */
  checkModel?(model: M): boolean;
  /** Squared error of every datum under the model. */
  squaredErrors(model: M, out: Float64Array): void;
  /** Least-squares model through all inliers (indices), or null. */
  refit?(inliers: Int32Array, count: number): M | null;
}

export interface RansacParams {
  /** Inlier threshold on the error (not squared), in the model's units (pixels for a homography). */
  readonly threshold: number;
  /** Probability that at least one sample is outlier-free, for the adaptive iteration count. */
  readonly confidence: number;
  readonly maxIterations: number;
  /** Refit-and-rescore rounds after sampling (local optimisation on all inliers). */
  readonly refitRounds: number;
  readonly seed: number;
}

export const defaultRansacParams: RansacParams = { threshold: 3, confidence: 0.999, maxIterations: 2000, refitRounds: 4, seed: 1 };

export interface RansacResult<M> {
  readonly model: M;
  readonly inliers: Uint8Array;
  readonly inlierCount: number;
  readonly iterations: number;
}

/**
 * Iterations needed so that, with inlier fraction w, a sample of s is all inliers with probability
 * p: N = log(1 - p) / log(1 - w^s) (Fischler & Bolles, CACM 1981; Hartley & Zisserman, eq. 4.18),
 * clamped to [0, max].
 */
export function requiredIterations(p: number, w: number, s: number, max: number): number {
  if (w >= 1) return 0;
  const ws = Math.pow(w, s);
  if (ws <= 0) return max;
  const denom = Math.log(1 - ws);
  if (denom >= 0 || !Number.isFinite(denom)) return max;
  const n = Math.log(1 - p) / denom;
  return n >= max ? max : Math.max(0, Math.ceil(n));
}

/**
 * RANSAC with MSAC scoring (Torr & Zisserman 2000: inliers cost their squared error, outliers the
 * squared threshold) and a seeded random source, so a run repeats exactly. Returns null when no
 * sample gave a model with at least sampleSize + 1 inliers.
 */
export function ransac<M>(model: RansacModel<M>, params: Partial<RansacParams> = {}, random?: RandomSource): RansacResult<M> | null {
  const p = { ...defaultRansacParams, ...params };
  const n = model.size;
  const s = model.sampleSize;
  if (n < s) return null;
  const rnd = random ?? createRandom(p.seed);
  const t2 = p.threshold * p.threshold;
  const errors = new Float64Array(n);
  const sample = new Int32Array(s);
  let best: M | null = null;
  let bestCost = Infinity;
  let bestCount = 0;
  let needed = p.maxIterations;
  let iterations = 0;
  let attempts = 0;
  const maxAttempts = p.maxIterations * 10;

  const score = (m: M): [number, number] => {
    model.squaredErrors(m, errors);
    let cost = 0;
    let count = 0;
    for (let i = 0; i < n; i++) {
      const e = errors[i];
      if (e < t2) {
        cost += e;
        count++;
      } else cost += t2;
    }
    return [cost, count];
  };

  while (iterations < needed && attempts < maxAttempts) {
    attempts++;
    for (let k = 0; k < s; k++) {
      let v: number;
      let dup: boolean;
      do {
        v = rnd.int(n);
        dup = false;
        for (let q = 0; q < k; q++) if (sample[q] === v) dup = true;
      } while (dup);
      sample[k] = v;
    }
    if (model.checkSample && !model.checkSample(sample)) continue;
    iterations++;
    const m = model.fitMinimal(sample);
    if (!m || (model.checkModel && !model.checkModel(m))) continue;
    const [cost, count] = score(m);
    if (cost < bestCost) {
      bestCost = cost;
      best = m;
      bestCount = count;
      needed = Math.min(needed, requiredIterations(p.confidence, count / n, s, p.maxIterations));
    }
  }
  if (!best || bestCount <= s) return null;

  const inlierIdx = new Int32Array(n);
  const collect = (m: M): number => {
    model.squaredErrors(m, errors);
    let c = 0;
    for (let i = 0; i < n; i++) if (errors[i] < t2) inlierIdx[c++] = i;
    return c;
  };
  let count = collect(best);
  if (model.refit) {
    for (let round = 0; round < p.refitRounds; round++) {
      const m = model.refit(inlierIdx, count);
      if (!m || (model.checkModel && !model.checkModel(m))) break;
      const [cost] = score(m);
      if (cost > bestCost) break;
      const changed = cost < bestCost;
      best = m;
      bestCost = cost;
      count = collect(best);
      if (!changed) break;
    }
  }
  count = collect(best);
  const inliers = new Uint8Array(n);
  for (let i = 0; i < count; i++) inliers[inlierIdx[i]] = 1;
  return { model: best, inliers, inlierCount: count, iterations };
}
