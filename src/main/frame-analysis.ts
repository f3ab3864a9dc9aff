import { exposureDifference } from '../core/exposure.js';
import type { Features, FeatureParams } from '../core/features.js';
import { detectAndDescribe } from '../core/features.js';
import { multiply, invert } from '../core/homography.js';
import type { GrayImage } from '../core/image.js';
import { estimatePairGeometry } from '../core/pair-geometry.js';
import { sharpness } from '../core/sharpness.js';
import { decodeForAnalysis } from './decode.js';

/** What one frame contributes to a check; small enough to keep for every frame of a card. */
export interface FrameAnalysis {
  readonly fullWidth: number;
  readonly fullHeight: number;
  readonly features: Features;
  /** The analysis image at half size, for brightness measures. */
  readonly thumb: GrayImage;
  readonly sharpness: number;
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

function halve(img: GrayImage): GrayImage {
  const w = img.width >> 1, h = img.height >> 1;
  const out = new Uint8Array(w * h);
  const s = img.data, W = img.width;
  for (let y = 0; y < h; y++)
    for (let x = 0; x < w; x++) {
      const o = 2 * y * W + 2 * x;
      out[y * w + x] = (s[o] + s[o + 1] + s[o + W] + s[o + W + 1] + 2) >> 2;
    }
  return { width: w, height: h, data: out };
}

/** Decodes a frame at the analysis size and extracts everything later steps need from it. */
export async function analyseFrameFile(path: string, maxSide: number, params: Partial<FeatureParams> = {}): Promise<FrameAnalysis> {
  const decoded = await decodeForAnalysis(path, maxSide);
  const features = detectAndDescribe(decoded.image, params);
  return { fullWidth: decoded.fullWidth, fullHeight: decoded.fullHeight, features, thumb: halve(decoded.image), sharpness: sharpness(decoded.image) };
}

/** Analysis pixel to thumbnail pixel (half size, pixel centres at integers). */
function toThumb(an: Features, thumb: GrayImage): Float64Array {
  const sx = thumb.width / an.width, sy = thumb.height / an.height;
  return Float64Array.of(sx, 0, 0.5 * sx - 0.5, 0, sy, 0.5 * sy - 0.5, 0, 0, 1);
}

/** Matches two analysed frames and measures overlap and exposure difference. */
export function analysePair(a: FrameAnalysis, b: FrameAnalysis): PairAnalysis {
  const g = estimatePairGeometry(a.features, b.features);
  let evDiff: number | null = null;
  const tie: number[] = [];
  if (g.homography) {
    const ta = toThumb(a.features, a.thumb), tb = toThumb(b.features, b.thumb);
    const hThumb = multiply(multiply(tb, g.homography), invert(ta)!);
    evDiff = exposureDifference(a.thumb, b.thumb, hThumb, { step: 2 })?.ev ?? null;
    const ka = a.features.keypoints, kb = b.features.keypoints;
    for (let i = 0; i < g.matches.count; i++) {
      if (!g.inlierMask[i]) continue;
      tie.push(ka.x[g.matches.a[i]], ka.y[g.matches.a[i]], kb.x[g.matches.b[i]], kb.y[g.matches.b[i]]);
    }
  }
  return {
    matches: g.matches.count,
    inliers: g.inliers,
    matchesInOverlap: g.matchesInOverlap,
    overlap: g.overlap,
    homography: g.homography ? Array.from(g.homography) : null,
    rmsError: g.rmsError,
    evDiff,
    tiePoints: Float32Array.from(tie),
    noModel: g.noModel,
  };
}
