import type { ScratchPool } from '../image/scratch.js';
import { orderByKeyDescending } from '../numeric/sort-keys.js';

/** Corner candidates on one response map: positions (sub-pixel) and responses, strongest first. */
export interface CornerCandidates {
  count: number;
  x: Float32Array;
  y: Float32Array;
  response: Float32Array;
}

export interface CandidateParams {
  /** Candidates closer than this to the border are skipped (the descriptor needs room). */
  readonly margin: number;
  /**
   * A candidate must reach this fraction of a high quantile of the frame's own candidate responses.
   * Relative, so that scaling the frame's brightness (which scales R by the fourth power) does not
   * starve a darker frame of corners.
   */
  readonly relativeThreshold: number;
  /** Quantile of candidate responses the threshold is relative to (robust against one glint). */
  readonly referenceQuantile: number;
}

export const defaultCandidateParams: CandidateParams = { margin: 22, relativeThreshold: 1e-3, referenceQuantile: 0.99 };

/**
 * Strict 3x3 local maxima of a positive response, thresholded relative to the frame, refined to
 * sub-pixel position by a separable quadratic fit, and sorted by response (strongest first); at most
 * `maxCandidates`, the strongest.
 */
export function findCandidates(
  response: Float32Array,
  width: number,
  height: number,
  params: CandidateParams,
  pool: ScratchPool,
  maxCandidates = Infinity,
): CornerCandidates {
  const m = Math.max(params.margin, 1);
  const idxBuf = pool.int32('candIdx', Math.max(16, ((width * height) / 4) | 0));
  let count = 0;
  for (let y = m; y < height - m; y++) {
    const row = y * width;
    for (let x = m; x < width - m; x++) {
      const o = row + x;
      const v = response[o];
      if (v <= 0 || v < response[o + 1]) continue;
      if (v <= response[o - 1]) continue;
      // v >= its right neighbour, so that neighbour cannot be a strict maximum: skip it (Neubeck &
      // Van Gool, "Efficient non-maximum suppression", ICPR 2006).
      const u = o - width;
      const d = o + width;
      if (v > response[u - 1] && v > response[u] && v > response[u + 1] && v >= response[d - 1] && v >= response[d] && v >= response[d + 1]) {
        if (count < idxBuf.length) idxBuf[count++] = o;
      }
      x++;
    }
  }
  const values = pool.float32('candVal', count);
  for (let i = 0; i < count; i++) values[i] = response[idxBuf[i]];
  const order = orderByKeyDescending(values, count);
  const ref = count > 0 ? values[order[Math.min(count - 1, Math.floor((1 - params.referenceQuantile) * (count - 1)))]] : 0;
  const threshold = ref * params.relativeThreshold;
  let kept = 0;
  while (kept < count && kept < maxCandidates && values[order[kept]] >= threshold) kept++;
  const keptOrder = order;

  const out: CornerCandidates = { count: kept, x: new Float32Array(kept), y: new Float32Array(kept), response: new Float32Array(kept) };
  for (let i = 0; i < kept; i++) {
    const o = idxBuf[keptOrder[i]];
    const y = (o / width) | 0;
    const x = o - y * width;
    const c = response[o];
    out.x[i] = x + quadraticPeak(response[o - 1], c, response[o + 1]);
    out.y[i] = y + quadraticPeak(response[o - width], c, response[o + width]);
    out.response[i] = c;
  }
  return out;
}

/** Offset of the vertex of the parabola through (-1, a), (0, b), (1, c), clamped to +/-0.5. */
function quadraticPeak(a: number, b: number, c: number): number {
  const den = a - 2 * b + c;
  if (den >= 0) return 0;
  const t = (0.5 * (a - c)) / den;
  return t > 0.5 ? 0.5 : t < -0.5 ? -0.5 : t;
}
