// A pair of analysed frames measured: matching, tie points refined on the pixels and the homography
// refitted to them, overlap, exposure difference, sharpness on the shared content, movement and
// parallax; the same judged again through a refined lens; the result carried to full resolution.
// Pure: frames come in analysed, the caller passes its scratch pool (one per thread), nothing is kept.
import { exposureDifference } from './exposure.js';
import type { Features, FeatureParams } from '../features/features.js';
import { defaultFeatureParams, detectAndDescribe } from '../features/features.js';
import type { Homography } from '../geometry/homography.js';
import { fitHomographyDLT, invert, multiply, normalise, project, transferErrors } from '../geometry/homography.js';
import { idealImage, idealPoint } from '../geometry/ideal-image.js';
import type { RadialDistortion } from '../geometry/lens.js';
import { isPlausible } from '../geometry/homography-estimator.js';
import { refineHomography } from '../geometry/homography-refine.js';
import type { MovedRegion } from './movement.js';
import { findMovement } from './movement.js';
import { overlapRegions } from '../geometry/overlap.js';
import type { RefinedPoints } from '../geometry/tie-point-refine.js';
import { refineTiePoints } from '../geometry/tie-point-refine.js';
import type { GrayImage } from '../image/image.js';
import { imageFingerprint } from '../image/image.js';
import { defaultGuidedMatchParams, estimateGuidedPairGeometry, predictedRegions } from './guided-match.js';
import type { PairGeometry } from './pair-geometry.js';
import { estimatePairGeometry } from './pair-geometry.js';
import { analysisToFull } from '../image/resolution.js';
import type { ScratchPool } from '../image/scratch.js';
import { sharpness } from './sharpness.js';
import type { SharedSharpness } from './shared-sharpness.js';
import { sharedSharpness } from './shared-sharpness.js';

/** What one frame contributes to a check; small enough to keep for every frame of a card. */
export interface FrameAnalysis {
  readonly fullWidth: number;
  readonly fullHeight: number;
  readonly features: Features;
  /** The analysis image, for refining tie points and measuring brightness. */
  readonly image: GrayImage;
  readonly sharpness: number;
  /** Fingerprint of the decoded pixels, equal for copies of one picture. */
  readonly fingerprint: string;
}

/** The measured relation of two frames, in analysis pixels. */
export interface PairAnalysis {
  readonly matches: number;
  readonly inliers: number;
  readonly matchesInOverlap: number;
  readonly overlap: number | null;
  readonly homography: number[] | null;
  readonly rmsError: number | null;
  readonly evDiff: number | null;
  /** Inlier correspondences xa, ya, xb, yb in analysis pixels. */
  readonly tiePoints: Float32Array;
  /** Regions of a whose content b does not repeat where the model puts it, analysis pixels (null without a model). */
  readonly moved: MovedRegion[] | null;
  /** Share of the overlap's textured blocks that do not line up (null without a model or with too few blocks). */
  readonly misfit: number | null;
  /** Near and far things do not line up together (see core/pair/movement.ts); null as misfit. */
  readonly parallax: boolean | null;
  /** b's sharpness over a's on the content both see (null without a model or with too little texture). */
  readonly sharpness: SharedSharpness | null;
  readonly noModel: string | null;
}

/**
 * The detector settings of a check: corners are found on the analysis image halved (a quarter of
 * the cost), while tie points, brightness and sharpness are measured on the analysis image itself.
 */
export const checkFeatureParams: FeatureParams = { ...defaultFeatureParams, halvings: 1 };

/** A frame as decoded at the analysis size: its pixels and the size it has at full resolution. */
export interface DecodedImage {
  readonly image: GrayImage;
  readonly fullWidth: number;
  readonly fullHeight: number;
}

/** Extracts from a decoded frame everything later steps need of it. */
export function analyseFrame(decoded: DecodedImage, params: FeatureParams, scratch: ScratchPool): FrameAnalysis {
  const features = detectAndDescribe(decoded.image, params, scratch);
  return { fullWidth: decoded.fullWidth, fullHeight: decoded.fullHeight, features, image: decoded.image, sharpness: sharpness(decoded.image), fingerprint: imageFingerprint(decoded.image) };
}

/**
 * The homography refitted (Levenberg-Marquardt) to refined tie points, once on all of them and once
 * more without those left farther than max(1 px, 3 x rms) from the first fit (a moving object,
 * a repeated pattern); null when it fails or is implausible.
 */
function fitTiePoints(start: Homography, ax: Float64Array, ay: Float64Array, refined: RefinedPoints): { h: Homography; rms: number; count: number; points: Float32Array } | null {
  let keep = Array.from(ax, (_, k) => k).filter((k) => refined.score[k] > 0);
  let h = start;
  let errors = new Float64Array(0);
  for (let round = 0; round < 2 && keep.length >= 12; round++) {
    const c = {
      count: keep.length,
      ax: Float64Array.from(keep, (k) => ax[k]),
      ay: Float64Array.from(keep, (k) => ay[k]),
      bx: Float64Array.from(keep, (k) => refined.bx[k]),
      by: Float64Array.from(keep, (k) => refined.by[k]),
    };
    const all = Int32Array.from(keep, (_, k) => k);
    h = refineHomography(h, c, all, all.length, 20);
    errors = new Float64Array(c.count);
    transferErrors(h, c, errors);
    if (round === 0) {
      const rms = Math.sqrt(errors.reduce((s, e) => s + e, 0) / c.count);
      const limit = Math.max(1, 3 * rms) ** 2;
      const next = keep.filter((_, x) => errors[x] <= limit);
      if (next.length === keep.length) break;
      keep = next;
    }
  }
  if (keep.length < 12 || errors.length !== keep.length) return null;
  const rms = Math.sqrt(errors.reduce((s, e) => s + e, 0) / keep.length);
  const cx = keep.reduce((t, k) => t + ax[k], 0) / keep.length, cy = keep.reduce((t, k) => t + ay[k], 0) / keep.length;
  if (!Number.isFinite(rms) || !isPlausible(h, cx, cy)) return null;
  const points = new Float32Array(4 * keep.length);
  keep.forEach((k, x) => points.set([ax[k], ay[k], refined.bx[k], refined.by[k]], 4 * x));
  return { h, rms, count: keep.length, points };
}

/** Fewest compared blocks for the share that does not line up, or the blocks that moved, to mean anything. */
const minMisfitBlocks = 40;

/** Most tie points refined per pair. */
export const refinedTiePoints = 300;

export interface PairOptions {
  /**
   * When the frames' own (halved) features find no model, detect again on the full analysis
   * images, first along their edges and then over the whole frames, and try again: a narrow
   * overlap may hold too few corners at half size.
   */
  readonly retryAtFullSize: boolean;
  /** Compare the aligned overlap block by block for movement and parallax (pairs between stations). */
  readonly overlapBlocks: boolean;
  /**
   * The pair's homography a -> b in analysis pixels as predicted from the rest of the sequence:
   * when given, corners are detected where it puts the overlap and matched near where it puts
   * them (core/pair/guided-match.ts) instead of over the whole frames.
   */
  readonly predicted?: readonly number[] | null;
}

/**
 * The second try for a pair without a model: corners at full analysis size along the frames'
 * edges (15 % of the width or height), where a narrow overlap between neighbours lies, three times
 * as many as a frame's own. At half size, the descriptor's margin on both frames (22 px of the
 * level each) leaves almost nothing of a strip of 8 %; at full size over the whole frame, a strip
 * gets too few of the frame's corners to pass the verification.
 */
const edgeFeatureParams: FeatureParams = { ...checkFeatureParams, halvings: 0, borderBand: 0.15, maxKeypoints: 3 * checkFeatureParams.maxKeypoints };

/** Guided matching detects at full analysis size inside the predicted overlap, as densely as the edge try. */
const guidedFeatureParams: FeatureParams = { ...checkFeatureParams, halvings: 0, maxKeypoints: 2 * checkFeatureParams.maxKeypoints };

/**
 * Matches two analysed frames, finds tie points on the pixels (a's keypoints inside b, located in
 * b by correlation) and refits the homography to them, and measures overlap, exposure difference,
 * sharpness on the content both see and, between stations, movement and parallax in the aligned overlap.
 */
export function analysePair(a: FrameAnalysis, b: FrameAnalysis, options: PairOptions, scratch: ScratchPool): PairAnalysis {
  let fa = a.features, fb = b.features;
  let g: PairGeometry;
  if (options.predicted) {
    const predicted = options.predicted;
    const reach = defaultGuidedMatchParams.searchShare * Math.max(b.image.width, b.image.height);
    const regions = predictedRegions(predicted, a.image, b.image, reach);
    fa = detectAndDescribe(a.image, { ...guidedFeatureParams, region: regions.inA }, scratch);
    fb = detectAndDescribe(b.image, { ...guidedFeatureParams, region: regions.inB }, scratch);
    g = estimateGuidedPairGeometry(fa, fb, predicted);
  } else {
    g = estimatePairGeometry(fa, fb);
    for (const params of [edgeFeatureParams, { ...checkFeatureParams, halvings: 0 }]) {
      if (g.homography || !options.retryAtFullSize) break;
      fa = detectAndDescribe(a.image, params, scratch);
      fb = detectAndDescribe(b.image, params, scratch);
      g = estimatePairGeometry(fa, fb);
    }
  }
  let evDiff: number | null = null;
  let moved: MovedRegion[] | null = null;
  let misfit: number | null = null;
  let parallax: boolean | null = null;
  let shared: SharedSharpness | null = null;
  let tie: Float32Array = new Float32Array(0);
  let homography: Homography | null = g.homography;
  let overlap = g.overlap;
  let rmsError = g.rmsError;
  if (g.homography) {
    const ka = fa.keypoints, kb = fb.keypoints;
    const idx: number[] = [];
    for (let i = 0; i < g.matches.count; i++) if (g.inlierMask[i]) idx.push(i);
    // Tie points: a's keypoints that the model puts inside b (matched or not, so that they reach
    // as far across the overlap as a's corners do), a few hundred spread evenly, each located in b
    // by its appearance. The farther they reach, the better the model holds outside the overlap.
    const inside: number[] = [];
    for (let i = 0; i < ka.count; i++) {
      const [u, v, w] = project(g.homography, ka.x[i], ka.y[i]);
      if (w > 0 && u >= 0 && v >= 0 && u <= fb.width - 1 && v <= fb.height - 1) inside.push(i);
    }
    const stride = Math.max(1, Math.ceil(inside.length / refinedTiePoints));
    const chosen = inside.filter((_, k) => k % stride === 0);
    const ax = Float64Array.from(chosen, (i) => ka.x[i]);
    const ay = Float64Array.from(chosen, (i) => ka.y[i]);
    const refined = refineTiePoints(a.image, b.image, g.homography, ax, ay);
    const fitted = fitTiePoints(g.homography, ax, ay, refined);
    if (fitted && fitted.count >= Math.max(12, 0.25 * chosen.length)) {
      homography = fitted.h;
      rmsError = fitted.rms;
      overlap = overlapRegions(fitted.h, fa.width, fa.height, fb.width, fb.height).overlap;
      tie = fitted.points;
    }
    if (tie.length === 0) {
      tie = new Float32Array(4 * idx.length);
      idx.forEach((i, k) => tie.set([ka.x[g.matches.a[i]], ka.y[g.matches.a[i]], kb.x[g.matches.b[i]], kb.y[g.matches.b[i]]], 4 * k));
    }
    evDiff = exposureDifference(a.image, b.image, homography!, { step: 4 })?.ev ?? null;
    shared = sharedSharpness(a.image, b.image, homography!);
    if (options.overlapBlocks) {
      const m = findMovement(a.image, b.image, homography!);
      // Too few blocks compared say nothing about the share that differs, nor about where
      // something moved: a narrow overlap (often between rows) stays unjudged rather than flagged.
      moved = m.blocks >= minMisfitBlocks ? m.regions : null;
      misfit = m.blocks >= minMisfitBlocks ? m.misfit : null;
      parallax = m.blocks >= minMisfitBlocks ? m.parallax : null;
    }
  }
  return {
    matches: g.matches.count,
    inliers: g.inliers,
    matchesInOverlap: g.matchesInOverlap,
    overlap,
    homography: homography ? Array.from(homography) : null,
    rmsError,
    evDiff,
    tiePoints: tie,
    moved,
    misfit,
    parallax,
    sharpness: shared,
    noModel: g.noModel,
  };
}

/** The lens of a sequence at one frame's analysis size. */
export interface AnalysisLens {
  /** Focal length in a's and b's analysis pixels. */
  readonly focalA: number;
  readonly focalB: number;
  readonly distortion: RadialDistortion;
}

/** Movement and parallax judged again on the frames as an ideal pinhole camera would have seen them. */
export interface LensJudgement {
  readonly moved: MovedRegion[] | null;
  readonly misfit: number | null;
  readonly parallax: boolean | null;
}

/**
 * Judges a measured pair's overlap again once the sequence's lens is known (the bundle adjustment
 * of the whole sequence): both frames are resampled onto their ideal grids, the homography is
 * refitted to the pair's tie points carried there, and the overlap is compared block by block as
 * analysePair does. For a camera turning about its centre one homography then fits the overlap
 * exactly, whatever the lens did; null when the tie points do not carry over or fit.
 */
export function judgeThroughLens(a: FrameAnalysis, b: FrameAnalysis, tiePoints: Float32Array, lens: AnalysisLens): LensJudgement | null {
  const n = tiePoints.length / 4;
  const c = { count: 0, ax: new Float64Array(n), ay: new Float64Array(n), bx: new Float64Array(n), by: new Float64Array(n) };
  const pa = new Float64Array(2), pb = new Float64Array(2);
  for (let k = 0; k < n; k++) {
    const ok =
      idealPoint(tiePoints[4 * k], tiePoints[4 * k + 1], a.image.width, a.image.height, lens.focalA, lens.distortion, pa) &&
      idealPoint(tiePoints[4 * k + 2], tiePoints[4 * k + 3], b.image.width, b.image.height, lens.focalB, lens.distortion, pb);
    if (!ok) continue;
    [c.ax[c.count], c.ay[c.count], c.bx[c.count], c.by[c.count]] = [pa[0], pa[1], pb[0], pb[1]];
    c.count++;
  }
  if (c.count < 12) return null;
  const start = fitHomographyDLT(c, null, c.count);
  if (!start) return null;
  const all = Int32Array.from({ length: c.count }, (_, k) => k);
  const h = refineHomography(start, c, all, c.count, 20);
  if (!isPlausible(h, c.ax.reduce((t, x) => t + x, 0) / c.count, c.ay.reduce((t, y) => t + y, 0) / c.count)) return null;
  const m = findMovement(idealImage(a.image, lens.focalA, lens.distortion), idealImage(b.image, lens.focalB, lens.distortion), h);
  if (m.blocks < minMisfitBlocks) return { moved: null, misfit: null, parallax: null };
  return { moved: m.regions, misfit: m.misfit, parallax: m.parallax };
}

/** What the full-resolution mapping needs of a frame: its size at full resolution and at the analysis size. */
export interface FrameSizes {
  readonly fullWidth: number;
  readonly fullHeight: number;
  readonly anWidth: number;
  readonly anHeight: number;
}

/** A pair's homography carried from analysis pixels to full-resolution pixels (null without a model), and a's scale between them. */
export function fullResolution(pair: PairAnalysis, a: FrameSizes, b: FrameSizes): { h: Float64Array | null; scale: number } {
  const fa = analysisToFull(a.fullWidth, a.fullHeight, a.anWidth, a.anHeight);
  const fb = analysisToFull(b.fullWidth, b.fullHeight, b.anWidth, b.anHeight);
  const scale = a.fullWidth / a.anWidth;
  if (!pair.homography) return { h: null, scale };
  return { h: normalise(multiply(multiply(fb, pair.homography), invert(fa)!)), scale };
}

/** Farthest that h moves a corner of a w x hh frame, px. */
export function cornerShift(h: Float64Array, w: number, hh: number): number {
  let worst = 0;
  for (const [x, y] of [[0, 0], [w - 1, 0], [w - 1, hh - 1], [0, hh - 1]]) {
    const [u, v] = project(h, x, y);
    worst = Math.max(worst, Math.hypot(u - x, v - y));
  }
  return worst;
}
