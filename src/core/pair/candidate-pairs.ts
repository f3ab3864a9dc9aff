import { descriptorWords } from '../features/binary-descriptor.js';
import type { Features } from '../features/features.js';
import { fitHomography } from '../geometry/homography-estimator.js';
import { matchDescriptors } from '../features/match.js';

/** A frame's sample of keypoints for cheap pair screening. */
export interface FrameSample {
  readonly x: Float64Array;
  readonly y: Float64Array;
  readonly descriptors: Uint32Array;
}

/** Every k-th keypoint (spread over levels and the frame), at most `size` of them. */
export function sampleFeatures(f: Features, size = 256): FrameSample {
  const n = f.keypoints.count;
  const step = Math.max(1, Math.floor(n / size));
  const m = Math.min(size, Math.ceil(n / step));
  const s = { x: new Float64Array(m), y: new Float64Array(m), descriptors: new Uint32Array(m * descriptorWords) };
  for (let k = 0; k < m; k++) {
    const i = k * step;
    s.x[k] = f.keypoints.x[i];
    s.y[k] = f.keypoints.y[i];
    s.descriptors.set(f.descriptors.subarray(i * descriptorWords, (i + 1) * descriptorWords), k * descriptorWords);
  }
  return s;
}

/**
 * Screens pairs of frames cheaply before full matching (for multi-row or unordered sets): matches
 * the small samples and keeps pairs whose sample matches hold a geometrically consistent group
 * (a homography with at least `minInliers` inliers at a loose threshold). Chance matches between
 * unrelated frames rarely agree on one homography, so most of the n^2 pairs stop here at about a
 * fiftieth of the cost of matching them in full.
 */
export function screenPairs(samples: readonly FrameSample[], pairs: readonly [number, number][], minInliers = 7): [number, number][] {
  const out: [number, number][] = [];
  for (const [i, j] of pairs) {
    const a = samples[i], b = samples[j];
    const m = matchDescriptors(a.descriptors, b.descriptors, { ratio: 0.85 });
    if (m.count < minInliers) continue;
    const c = { count: m.count, ax: new Float64Array(m.count), ay: new Float64Array(m.count), bx: new Float64Array(m.count), by: new Float64Array(m.count) };
    for (let k = 0; k < m.count; k++) {
      c.ax[k] = a.x[m.a[k]];
      c.ay[k] = a.y[m.a[k]];
      c.bx[k] = b.x[m.b[k]];
      c.by[k] = b.y[m.b[k]];
    }
    const fit = fitHomography(c, { ransac: { threshold: 6, maxIterations: 300 }, refine: false });
    if (fit && fit.inlierCount >= minInliers) out.push([i, j]);
  }
  return out;
}
