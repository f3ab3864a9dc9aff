import { exposureDifference } from '../core/exposure.js';
import type { Features, FeatureParams } from '../core/features.js';
import { detectAndDescribe } from '../core/features.js';
import type { Homography } from '../core/homography.js';
import { transferErrors } from '../core/homography.js';
import { isPlausible } from '../core/homography-estimator.js';
import { refineHomography } from '../core/homography-refine.js';
import { overlapRegions } from '../core/overlap.js';
import { refineTiePoints } from '../core/tie-point-refine.js';
import type { GrayImage } from '../core/image.js';
import { imageFingerprint } from '../core/image.js';
import { estimatePairGeometry } from '../core/pair-geometry.js';
import { sharpness } from '../core/sharpness.js';
import { decodeForAnalysis } from './decode.js';

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
  readonly noModel: string | null;
}

/** Decodes a frame at the analysis size and extracts everything later steps need from it. */
export async function analyseFrameFile(path: string, maxSide: number, params: Partial<FeatureParams> = {}): Promise<FrameAnalysis> {
  const decoded = await decodeForAnalysis(path, maxSide);
  const features = detectAndDescribe(decoded.image, params);
  return { fullWidth: decoded.fullWidth, fullHeight: decoded.fullHeight, features, image: decoded.image, sharpness: sharpness(decoded.image), fingerprint: imageFingerprint(decoded.image) };
}

/** Most tie points refined per pair. */
export const refinedTiePoints = 300;

/**
 * Matches two analysed frames, refines the inlier tie points on the pixels and refits the
 * homography to them, and measures overlap and exposure difference.
 */
export function analysePair(a: FrameAnalysis, b: FrameAnalysis): PairAnalysis {
  const g = estimatePairGeometry(a.features, b.features);
  let evDiff: number | null = null;
  let tie = new Float32Array(0);
  let homography: Homography | null = g.homography;
  let overlap = g.overlap;
  let rmsError = g.rmsError;
  if (g.homography) {
    const ka = a.features.keypoints, kb = b.features.keypoints;
    const idx: number[] = [];
    for (let i = 0; i < g.matches.count; i++) if (g.inlierMask[i]) idx.push(i);
    // Refining costs about 0.05 ms a point; a few hundred spread over the overlap pin the mapping.
    const stride = Math.max(1, Math.ceil(idx.length / refinedTiePoints));
    const chosen = idx.filter((_, k) => k % stride === 0);
    const ax = Float64Array.from(chosen, (i) => ka.x[g.matches.a[i]]);
    const ay = Float64Array.from(chosen, (i) => ka.y[g.matches.a[i]]);
    const refined = refineTiePoints(a.image, b.image, g.homography, ax, ay);
    const keep = chosen.map((_, k) => k).filter((k) => refined.score[k] > 0);
    if (keep.length >= Math.max(12, 0.5 * chosen.length)) {
      const c = {
        count: keep.length,
        ax: Float64Array.from(keep, (k) => ax[k]),
        ay: Float64Array.from(keep, (k) => ay[k]),
        bx: Float64Array.from(keep, (k) => refined.bx[k]),
        by: Float64Array.from(keep, (k) => refined.by[k]),
      };
      const all = Int32Array.from(keep, (_, k) => k);
      const h = refineHomography(g.homography, c, all, all.length, 20);
      const errors = new Float64Array(c.count);
      transferErrors(h, c, errors);
      const rms = Math.sqrt(errors.reduce((s, e) => s + e, 0) / c.count);
      const cx = c.ax.reduce((t, v) => t + v, 0) / c.count, cy = c.ay.reduce((t, v) => t + v, 0) / c.count;
      if (Number.isFinite(rms) && isPlausible(h, cx, cy)) {
        homography = h;
        rmsError = rms;
        overlap = overlapRegions(h, a.features.width, a.features.height, b.features.width, b.features.height).overlap;
        tie = new Float32Array(4 * c.count);
        for (let k = 0; k < c.count; k++) tie.set([c.ax[k], c.ay[k], c.bx[k], c.by[k]], 4 * k);
      }
    }
    if (tie.length === 0) {
      tie = new Float32Array(4 * idx.length);
      idx.forEach((i, k) => tie.set([ka.x[g.matches.a[i]], ka.y[g.matches.a[i]], kb.x[g.matches.b[i]], kb.y[g.matches.b[i]]], 4 * k));
    }
    evDiff = exposureDifference(a.image, b.image, homography!, { step: 4 })?.ev ?? null;
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
    noModel: g.noModel,
  };
}
