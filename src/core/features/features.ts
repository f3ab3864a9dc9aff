import { adaptiveNonMaximalSuppression } from './anms.js';
import { angleStep, describe, descriptorWords, patchSize, steeredOffsets } from './binary-descriptor.js';
import type { CandidateParams, CornerCandidates } from './corners.js';
import { defaultCandidateParams, findCandidates } from './corners.js';
import type { HarrisParams } from './harris.js';
import { defaultHarrisParams, harrisResponse } from './harris.js';
import type { GrayImage } from '../image/image.js';
import { expectImage } from '../image/image.js';
import { integralImage } from '../image/integral-image.js';
import type { Keypoints } from './keypoints.js';
import { createKeypoints } from './keypoints.js';
import { intensityCentroidAngle } from './orientation.js';
import { insideConvex } from '../numeric/polygon.js';
import type { Polygon } from '../numeric/polygon.js';
import type { PyramidLevel } from './pyramid.js';
import { buildPyramid } from './pyramid.js';
import type { ScratchPool } from '../image/scratch.js';
import { createScratchPool } from '../image/scratch.js';

export interface FeatureParams {
  /** Keypoints kept per frame over all levels, shared between levels in proportion to their area. */
  readonly maxKeypoints: number;
  readonly pyramidLevels: number;
  /** Size ratio between consecutive pyramid levels. */
  readonly pyramidStep: number;
  /**
   * Times the image is halved before the first level (0: detect at full size). Keypoint positions
   * are always in the image's own pixels.
   */
  readonly halvings: number;
  readonly harris: HarrisParams;
  readonly candidates: CandidateParams;
  /** Brown, Szeliski & Winder's robustness factor c for adaptive non-maximal suppression. */
  readonly anmsRobustness: number;
  /**
   * Corners are kept only within this share of the width (left and right) or of the height (top
   * and bottom) from the frame's edge, where a narrow overlap between neighbours lies; 0.5 or more
   * keeps the whole frame.
   */
  readonly borderBand: number;
  /** Corners are kept only inside this convex polygon (image pixels), where one is given. */
  readonly region: Polygon | null;
}

export const defaultFeatureParams: FeatureParams = {
  maxKeypoints: 1500,
  pyramidLevels: 3,
  pyramidStep: 1.25,
  halvings: 0,
  harris: defaultHarrisParams,
  candidates: defaultCandidateParams,
  anmsRobustness: 0.9,
  borderBand: 0.5,
  region: null,
};

/** What a frame contributes to matching: its keypoints and their descriptors (descriptorWords each). */
export interface Features {
  readonly width: number;
  readonly height: number;
  readonly keypoints: Keypoints;
  readonly descriptors: Uint32Array;
}

const offsetCache = new Map<number, Int32Array>();
function offsetsFor(stride: number): Int32Array {
  let o = offsetCache.get(stride);
  if (!o) {
    if (offsetCache.size > 16) offsetCache.clear();
    o = steeredOffsets(stride);
    offsetCache.set(stride, o);
  }
  return o;
}

/** Keeps, strongest first, at most `limit` candidates inside the border band and the region. */
function keepInside(c: CornerCandidates, level: PyramidLevel, band: number, region: Polygon | null, limit: number): void {
  const bx = band * level.width, by = band * level.height;
  let k = 0;
  for (let i = 0; i < c.count && k < limit; i++) {
    const x = c.x[i], y = c.y[i];
    if (band < 0.5 && x >= bx && x <= level.width - 1 - bx && y >= by && y <= level.height - 1 - by) continue;
    if (region && !insideConvex(region, (x + 0.5) * level.scaleX - 0.5, (y + 0.5) * level.scaleY - 0.5)) continue;
    c.x[k] = x;
    c.y[k] = y;
    c.response[k] = c.response[i];
    k++;
  }
  c.count = k;
}

/**
 * Detects Harris corners on a small pyramid, spreads them with adaptive non-maximal suppression,
 * orients and describes them. Deterministic; `pool` is reused across calls to avoid allocation.
 */
export function detectAndDescribe(image: GrayImage, params: Partial<FeatureParams> = {}, pool: ScratchPool = createScratchPool()): Features {
  expectImage(image, 'image');
  const p: FeatureParams = { ...defaultFeatureParams, ...params };
  const levels = buildPyramid(image, p.pyramidLevels, p.pyramidStep, pool, p.halvings);
  const totalArea = levels.reduce((s, l) => s + l.width * l.height, 0);
  const keypoints = createKeypoints(p.maxKeypoints);
  const descriptors = new Uint32Array(p.maxKeypoints * descriptorWords);
  let n = 0;
  for (const level of levels) {
    const area = level.width * level.height;
    const quota = level.index === levels.length - 1 ? p.maxKeypoints - n : Math.round((p.maxKeypoints * area) / totalArea);
    if (quota <= 0) continue;
    const response = pool.float32('response', area);
    harrisResponse(level, response, pool, p.harris);
    // Restricted to a part of the frame, all of the level's corners are candidates, so that the
    // part gets the whole quota and not only those among the frame's strongest.
    const restricted = p.borderBand < 0.5 || p.region !== null;
    const candidates = findCandidates(response, level.width, level.height, p.candidates, pool, restricted ? Infinity : 10 * quota);
    if (restricted) keepInside(candidates, level, p.borderBand, p.region, 10 * quota);
    const chosen = adaptiveNonMaximalSuppression(candidates, Math.min(quota, p.maxKeypoints - n), level.width, level.height, p.anmsRobustness);
    const stride = level.width + 1;
    const integral = integralImage(level, pool.float64('integral', stride * (level.height + 1)));
    const offsets = offsetsFor(stride);
    for (let c = 0; c < chosen.length; c++) {
      const i = chosen[c];
      const lx = candidates.x[i];
      const ly = candidates.y[i];
      const cx = Math.round(lx);
      const cy = Math.round(ly);
      const angle = intensityCentroidAngle(level, cx, cy);
      describe(integral, stride, offsets, cx, cy, angleStep(angle), descriptors, n * descriptorWords);
      keypoints.x[n] = (lx + 0.5) * level.scaleX - 0.5;
      keypoints.y[n] = (ly + 0.5) * level.scaleY - 0.5;
      keypoints.response[n] = candidates.response[i];
      keypoints.angle[n] = angle;
      keypoints.level[n] = level.index;
      keypoints.size[n] = patchSize * level.scaleX;
      n++;
    }
  }
  keypoints.count = n;
  return { width: image.width, height: image.height, keypoints, descriptors: descriptors.subarray(0, n * descriptorWords) };
}
