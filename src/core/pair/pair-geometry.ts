import { patchSize } from '../features/binary-descriptor.js';
import type { Features } from '../features/features.js';
import type { Correspondences, Homography } from '../geometry/homography.js';
import type { HomographyFitParams } from '../geometry/homography-estimator.js';
import { fitHomography } from '../geometry/homography-estimator.js';
import type { MatchParams, Matches } from '../features/match.js';
import { matchDescriptors } from '../features/match.js';
import { overlapRegions } from '../geometry/overlap.js';
import { insideConvex } from '../numeric/polygon.js';

/** Why a pair has no model. */
export type NoModelReason = 'too-few-matches' | 'no-consensus' | 'unverified';

/** The geometric relation of two frames as found from their features (analysis pixels). */
export interface PairGeometry {
  /** Tentative matches (ratio test and mutual check passed). */
  readonly matches: Matches;
  /** Per tentative match, 1 when it is an inlier of the accepted model. */
  readonly inlierMask: Uint8Array;
  readonly inliers: number;
  /** Inliers as a share of the tentative matches (0 when there is no model). */
  readonly inlierRatio: number;
  /** a -> b, or null: "no model", never a guess. */
  readonly homography: Homography | null;
  readonly overlap: number | null;
  /** Root-mean-square transfer error of the inliers in pixels, or null. */
  readonly rmsError: number | null;
  /** Tentative matches whose point in a lies in the overlap (n_f of the verification). */
  readonly matchesInOverlap: number;
  readonly noModel: NoModelReason | null;
}

export interface PairParams {
  readonly match: Partial<MatchParams>;
  readonly fit: Partial<HomographyFitParams>;
  /** Fewest tentative matches worth a RANSAC run. */
  readonly minMatches: number;
}

export const defaultPairParams: PairParams = { match: {}, fit: {}, minMatches: 12 };

/**
 * Brown & Lowe's probabilistic verification ("Automatic panoramic image stitching using invariant
 * features", IJCV 2007, eq. 16 as remembered): accept the pair when n_i > 8 + 0.3 n_f, with n_i the
 * inliers and n_f the tentative matches inside the overlap.
 */
export function passesVerification(inliers: number, matchesInOverlap: number): boolean {
  return inliers > 8 + 0.3 * matchesInOverlap;
}

export function correspondencesOf(fa: Features, fb: Features, m: Matches): Correspondences {
  const n = m.count;
  const c = { count: n, ax: new Float64Array(n), ay: new Float64Array(n), bx: new Float64Array(n), by: new Float64Array(n), weight: new Float64Array(n) };
  for (let i = 0; i < n; i++) {
    // Keypoints from coarser pyramid levels are located less precisely: weight by inverse variance,
    // taking the localisation error as proportional to the level's pixel size.
    const sa = fa.keypoints.size[m.a[i]] / patchSize, sb = fb.keypoints.size[m.b[i]] / patchSize;
    c.weight[i] = 2 / (sa * sa + sb * sb);
    c.ax[i] = fa.keypoints.x[m.a[i]];
    c.ay[i] = fa.keypoints.y[m.a[i]];
    c.bx[i] = fb.keypoints.x[m.b[i]];
    c.by[i] = fb.keypoints.y[m.b[i]];
  }
  return c;
}

/** Matches two frames' features and estimates and verifies their homography. Deterministic. */
export function estimatePairGeometry(fa: Features, fb: Features, params: Partial<PairParams> = {}): PairGeometry {
  const p = { ...defaultPairParams, ...params };
  return fitAndVerify(fa, fb, matchDescriptors(fa.descriptors, fb.descriptors, p.match), p);
}

/**
 * The homography through tentative matches (RANSAC and refinement), accepted only when it passes
 * Brown & Lowe's verification; shared by plain and guided matching.
 */
export function fitAndVerify(fa: Features, fb: Features, matches: Matches, params: Partial<PairParams> = {}): PairGeometry {
  const p = { ...defaultPairParams, ...params };
  const none = (reason: NoModelReason, inlierMask = new Uint8Array(matches.count), inOverlap = 0): PairGeometry => ({
    matches, inlierMask, inliers: 0, inlierRatio: 0, homography: null, overlap: null, rmsError: null, matchesInOverlap: inOverlap, noModel: reason,
  });
  if (matches.count < p.minMatches) return none('too-few-matches');
  const c = correspondencesOf(fa, fb, matches);
  const fit = fitHomography(c, p.fit);
  if (!fit) return none('no-consensus');
  const regions = overlapRegions(fit.homography, fa.width, fa.height, fb.width, fb.height);
  let inOverlap = 0;
  for (let i = 0; i < c.count; i++) if (insideConvex(regions.inA, c.ax[i], c.ay[i])) inOverlap++;
  if (!passesVerification(fit.inlierCount, inOverlap)) return none('unverified', new Uint8Array(matches.count), inOverlap);
  return {
    matches,
    inlierMask: fit.inliers,
    inliers: fit.inlierCount,
    inlierRatio: fit.inlierCount / matches.count,
    homography: fit.homography,
    overlap: regions.overlap,
    rmsError: fit.rmsError,
    matchesInOverlap: inOverlap,
    noModel: null,
  };
}
