/**
 * Guided matching: where the turn between two frames is already known from the rest of the
 * sequence, their homography can be predicted (H = K R_b R_a^T K^-1 for a camera turning about its
 * centre; Hartley & Zisserman, sec. 8.4.2), and a keypoint of a is compared only with b's keypoints
 * near where the prediction puts it. With a handful of candidates instead of every keypoint of b,
 * the ratio test keeps matches it would lose among a whole frame's look-alikes, which is what a
 * narrow overlap needs. The prediction is trusted for where to look, never for the answer: the
 * model is fitted by RANSAC on the matches and verified as any other pair's (pair-geometry.ts).
 */
import { descriptorWords } from '../features/binary-descriptor.js';
import type { Features } from '../features/features.js';
import type { Homography } from '../geometry/homography.js';
import { invert, multiply, project } from '../geometry/homography.js';
import type { Matches } from '../features/match.js';
import type { PairGeometry, PairParams } from './pair-geometry.js';
import { fitAndVerify } from './pair-geometry.js';
import type { Polygon } from '../numeric/polygon.js';
import { clipConvex, frameRectangle, projectPolygon } from '../numeric/polygon.js';
import type { FrameSize, Rotation, RotationLink } from '../geometry/rotations.js';
import { chainRotations, homographyOfRotations } from '../geometry/rotations.js';
import { bundleAdjust } from '../geometry/lens-bundle.js';

export interface GuidedMatchParams {
  /**
   * Radius of the first, wide search around the prediction, as a share of b's longer side: a
   * prediction a few degrees off (0.1 is about 5 degrees for a 50-degree lens) is still found.
   */
  readonly searchShare: number;
  /** Radius of the final search around the prediction corrected by the common shift, share of b's longer side. */
  readonly windowShare: number;
  /** Lowe's ratio test among the candidates in the window (Lowe, IJCV 2004: 0.8). */
  readonly ratio: number;
  /** Matches farther apart than this many bits are rejected outright (as match.ts). */
  readonly maxDistance: number;
  /** Fewest votes for a common shift of the prediction; with fewer, the prediction is used as it is. */
  readonly minVotes: number;
}

export const defaultGuidedMatchParams: GuidedMatchParams = { searchShare: 0.1, windowShare: 0.015, ratio: 0.8, maxDistance: 96, minVotes: 5 };

function expectHomography(h: ArrayLike<number>, name: string): void {
  if (h.length !== 9 || !Array.prototype.every.call(h, (v: number) => Number.isFinite(v))) {
    throw new Error(`Expected 9 finite numbers for ${name} but received ${h.length} values`);
  }
}

/** The rectangle of a w x h frame widened by `reach` px on every side. */
function widened(width: number, height: number, reach: number): Polygon {
  const r = frameRectangle(width, height);
  return [r[0] - reach, r[1] - reach, r[2] + reach, r[3] - reach, r[4] + reach, r[5] + reach, r[6] - reach, r[7] + reach];
}

/**
 * Where the prediction puts the overlap, in each frame's pixels, widened by `reach` px so that a
 * prediction that is somewhat off still finds it: the parts of the frames worth detecting in.
 */
export function predictedRegions(predicted: ArrayLike<number>, a: FrameSize, b: FrameSize, reach: number): { inA: Polygon; inB: Polygon } {
  expectHomography(predicted, 'predicted');
  const inverse = invert(predicted);
  const inB = clipConvex(projectPolygon(predicted, widened(a.width, a.height, reach)), frameRectangle(b.width, b.height));
  const inA = inverse ? clipConvex(projectPolygon(inverse, widened(b.width, b.height, reach)), frameRectangle(a.width, a.height)) : [];
  return { inA, inB };
}

/** Hamming distance of descriptor i of da and j of db (SWAR bit count, Warren, "Hacker's Delight", 5-1). */
function hamming(da: Uint32Array, i: number, db: Uint32Array, j: number): number {
  let d = 0;
  for (let k = 0, p = i * descriptorWords, q = j * descriptorWords; k < descriptorWords; k++) {
    let v = da[p + k] ^ db[q + k];
    v -= (v >>> 1) & 0x55555555;
    v = (v & 0x33333333) + ((v >>> 2) & 0x33333333);
    d += Math.imul((v + (v >>> 4)) & 0x0f0f0f0f, 0x01010101) >>> 24;
  }
  return d;
}

/** b's keypoints bucketed on a square grid, for the keypoints near a point. */
interface Grid {
  readonly cell: number;
  readonly cols: number;
  readonly rows: number;
  readonly head: Int32Array;
  readonly next: Int32Array;
}

function gridOf(f: Features, cell: number): Grid {
  const cols = Math.max(1, Math.ceil(f.width / cell) + 1), rows = Math.max(1, Math.ceil(f.height / cell) + 1);
  const head = new Int32Array(cols * rows).fill(-1);
  const next = new Int32Array(f.keypoints.count);
  for (let j = 0; j < f.keypoints.count; j++) {
    const cx = Math.min(cols - 1, Math.max(0, Math.floor((f.keypoints.x[j] + 0.5) / cell)));
    const cy = Math.min(rows - 1, Math.max(0, Math.floor((f.keypoints.y[j] + 0.5) / cell)));
    next[j] = head[cy * cols + cx];
    head[cy * cols + cx] = j;
  }
  return { cell, cols, rows, head, next };
}

/** Writes into `out` the keypoints of b within `radius` of (x, y); returns how many. */
function near(g: Grid, f: Features, x: number, y: number, radius: number, out: Int32Array): number {
  const x0 = Math.max(0, Math.floor((x + 0.5 - radius) / g.cell)), x1 = Math.min(g.cols - 1, Math.floor((x + 0.5 + radius) / g.cell));
  const y0 = Math.max(0, Math.floor((y + 0.5 - radius) / g.cell)), y1 = Math.min(g.rows - 1, Math.floor((y + 0.5 + radius) / g.cell));
  const r2 = radius * radius;
  let n = 0;
  for (let cy = y0; cy <= y1; cy++)
    for (let cx = x0; cx <= x1; cx++)
      for (let j = g.head[cy * g.cols + cx]; j >= 0; j = g.next[j]) {
        const dx = f.keypoints.x[j] - x, dy = f.keypoints.y[j] - y;
        if (dx * dx + dy * dy <= r2) out[n++] = j;
      }
  return n;
}

export interface GuidedMatches {
  readonly matches: Matches;
  /** The common shift (b's pixels) found between the prediction and the matches, [0, 0] when none was found. */
  readonly shift: readonly [number, number];
}

/** Where `predicted` puts each of a's keypoints in b, and whether it lands in front of b's camera within `search` px of b. */
interface Predicted {
  readonly x: Float64Array;
  readonly y: Float64Array;
  readonly inFront: Uint8Array;
}

function predictInB(fa: Features, fb: Features, predicted: ArrayLike<number>, search: number): Predicted {
  const na = fa.keypoints.count;
  const px = new Float64Array(na), py = new Float64Array(na);
  const inFront = new Uint8Array(na);
  for (let i = 0; i < na; i++) {
    const [u, v, w] = project(predicted, fa.keypoints.x[i], fa.keypoints.y[i]);
    px[i] = u;
    py[i] = v;
    inFront[i] = w > 0 && u > -search && v > -search && u < fb.width + search && v < fb.height + search ? 1 : 0;
  }
  return { x: px, y: py, inFront };
}

/** Pass 1: the wide search's ratio-tested matches, each a vote for the shift (b's pixels) from prediction to match. */
function shiftVotes(fa: Features, fb: Features, pred: Predicted, search: number, window: number, p: GuidedMatchParams, candidates: Int32Array): { vx: Float64Array; vy: Float64Array; votes: number } {
  const na = fa.keypoints.count;
  const px = pred.x, py = pred.y, inFront = pred.inFront;
  const grid = gridOf(fb, Math.max(window, search / 4));
  const vx = new Float64Array(na), vy = new Float64Array(na);
  let votes = 0;
  for (let i = 0; i < na; i++) {
    if (!inFront[i]) continue;
    let b1 = Infinity, b2 = Infinity, bj = -1;
    const found = near(grid, fb, px[i], py[i], search, candidates);
    for (let c = 0; c < found; c++) {
      const j = candidates[c];
      const d = hamming(fa.descriptors, i, fb.descriptors, j);
      if (d < b1) {
        b2 = b1;
        b1 = d;
        bj = j;
      } else if (d < b2) b2 = d;
    }
    if (bj >= 0 && b1 <= p.maxDistance && b1 < p.ratio * b2) {
      vx[votes] = fb.keypoints.x[bj] - px[i];
      vy[votes] = fb.keypoints.y[bj] - py[i];
      votes++;
    }
  }
  return { vx, vy, votes };
}

/** The common shift the votes agree on; [0, 0] with fewer than `minVotes` votes in its neighbourhood. */
function commonShift(vx: Float64Array, vy: Float64Array, votes: number, window: number, minVotes: number): [number, number] {
  let sx = 0, sy = 0;
  if (votes >= minVotes) {
    // The densest window-sized neighbourhood of votes, then their mean.
    let bestCount = 0;
    for (let k = 0; k < votes; k++) {
      let c = 0, mx = 0, my = 0;
      for (let q = 0; q < votes; q++) {
        if (Math.abs(vx[q] - vx[k]) <= window && Math.abs(vy[q] - vy[k]) <= window) {
          c++;
          mx += vx[q];
          my += vy[q];
        }
      }
      if (c > bestCount) {
        bestCount = c;
        sx = mx / c;
        sy = my / c;
      }
    }
    if (bestCount < minVotes) sx = sy = 0;
  }
  return [sx, sy];
}

/** Pass 2: the tight window around the shifted prediction, with the ratio test among its candidates and the mutual check. */
function windowMatches(fa: Features, fb: Features, pred: Predicted, sx: number, sy: number, window: number, p: GuidedMatchParams, candidates: Int32Array): Matches {
  const na = fa.keypoints.count, nb = fb.keypoints.count;
  const px = pred.x, py = pred.y, inFront = pred.inFront;
  const best = new Int32Array(na).fill(-1);
  const bestD = new Float64Array(na).fill(Infinity);
  const bestOfB = new Int32Array(nb).fill(-1);
  const bestDOfB = new Float64Array(nb).fill(Infinity);
  const passes = new Uint8Array(na);
  const tight = gridOf(fb, window);
  for (let i = 0; i < na; i++) {
    if (!inFront[i]) continue;
    let b1 = Infinity, b2 = Infinity, bj = -1;
    const found = near(tight, fb, px[i] + sx, py[i] + sy, window, candidates);
    for (let c = 0; c < found; c++) {
      const j = candidates[c];
      const d = hamming(fa.descriptors, i, fb.descriptors, j);
      if (d < b1) {
        b2 = b1;
        b1 = d;
        bj = j;
      } else if (d < b2) b2 = d;
      if (d < bestDOfB[j]) {
        bestDOfB[j] = d;
        bestOfB[j] = i;
      }
    }
    best[i] = bj;
    bestD[i] = b1;
    passes[i] = bj >= 0 && b1 <= p.maxDistance && b1 < p.ratio * b2 ? 1 : 0;
  }
  const out: Matches = { count: 0, a: new Int32Array(na), b: new Int32Array(na), distance: new Uint16Array(na) };
  for (let i = 0; i < na; i++) {
    if (!passes[i] || bestOfB[best[i]] !== i) continue;
    out.a[out.count] = i;
    out.b[out.count] = best[i];
    out.distance[out.count] = bestD[i];
    out.count++;
  }
  return out;
}

/**
 * Matches a's keypoints with b's near where `predicted` (a -> b) puts them, in two passes: a wide
 * search whose ratio-tested matches vote for the prediction's common shift (a turn a few degrees
 * off moves the whole narrow overlap alike), then a tight window around the shifted prediction,
 * with the ratio test among the window's candidates and the mutual check. Deterministic.
 */
export function guidedMatches(fa: Features, fb: Features, predicted: ArrayLike<number>, params: Partial<GuidedMatchParams> = {}): GuidedMatches {
  expectHomography(predicted, 'predicted');
  const p = { ...defaultGuidedMatchParams, ...params };
  const side = Math.max(fb.width, fb.height);
  const search = p.searchShare * side, window = Math.max(2, p.windowShare * side);
  const pred = predictInB(fa, fb, predicted, search);
  const candidates = new Int32Array(fb.keypoints.count);
  const { vx, vy, votes } = shiftVotes(fa, fb, pred, search, window, p, candidates);
  const [sx, sy] = commonShift(vx, vy, votes, window, p.minVotes);
  return { matches: windowMatches(fa, fb, pred, sx, sy, window, p, candidates), shift: [sx, sy] };
}

/** Guided matching, then the homography fitted and verified as for any pair (pair-geometry.ts). */
export function estimateGuidedPairGeometry(fa: Features, fb: Features, predicted: ArrayLike<number>, params: Partial<GuidedMatchParams> = {}, pairParams: Partial<PairParams> = {}): PairGeometry {
  return fitAndVerify(fa, fb, guidedMatches(fa, fb, predicted, params).matches, pairParams);
}

/**
 * The homography of stations i -> j (full-resolution pixels) predicted from the other matched
 * pairs: rotations chained along them and refined jointly with the focal length (from focalPx),
 * then K R_j R_i^T K^-1. Null when no chain of matched pairs joins i and j.
 */
export function predictPairHomography(links: readonly RotationLink[], focalPx: number, sizes: readonly FrameSize[], i: number, j: number): Homography | null {
  if (!(focalPx > 0)) throw new Error(`Expected a positive focal length for focalPx but received ${focalPx}`);
  for (const [k, name] of [[i, 'i'], [j, 'j']] as const) {
    if (!Number.isInteger(k) || k < 0 || k >= sizes.length) throw new Error(`Expected a station index below ${sizes.length} for ${name} but received ${k}`);
  }
  const chained = chainRotations(sizes.length, links, focalPx, sizes);
  if (!chained[i] || !chained[j]) return null;
  // The focal length is refined too, from focalPx: across a gap the prediction adds up the turns
  // of every pair the long way round, and an EXIF focal length rounded to the millimetre (1 to 3 %
  // off) makes each of them a few tenths of a degree short or long.
  const refined = bundleAdjust(chained, links, focalPx, sizes, { refineFocal: true });
  const ri: Rotation | null = refined.rotations[i], rj: Rotation | null = refined.rotations[j];
  if (!ri || !rj || !(refined.focalPx > 0)) return null;
  return homographyOfRotations(ri, rj, refined.focalPx, sizes[i], sizes[j]);
}

/** A full-resolution homography expressed between analysis images: B^-1 H A, with A and B analysis -> full. */
export function toAnalysisPixels(h: ArrayLike<number>, aToFull: ArrayLike<number>, bToFull: ArrayLike<number>): Homography | null {
  const bInv = invert(bToFull);
  return bInv ? multiply(multiply(bInv, h), aToFull) : null;
}
