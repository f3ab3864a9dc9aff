import { nearestNeighbours } from './nearest-hamming.js';

/** Tentative matches as a struct of arrays: keypoint `a[i]` of frame a with `b[i]` of frame b. */
export interface Matches {
  count: number;
  a: Int32Array;
  b: Int32Array;
  /** Hamming distance in bits; lower is better. */
  distance: Uint16Array;
}

export interface MatchParams {
  /** Lowe's ratio test: best distance must be below ratio x second best (Lowe, IJCV 2004: 0.8). */
  readonly ratio: number;
  /** Keep only pairs that are each other's nearest neighbour. */
  readonly mutual: boolean;
  /** Reject matches farther apart than this many bits outright. */
  readonly maxDistance: number;
}

export const defaultMatchParams: MatchParams = { ratio: 0.8, mutual: true, maxDistance: 96 };

/**
 * Lowe's ratio test and the mutual check over brute-force nearest neighbours under Hamming distance
 * (nearest-hamming.ts: one pass over all pairs yields both directions).
 */
export function matchDescriptors(da: Uint32Array, db: Uint32Array, params: Partial<MatchParams> = {}): Matches {
  const p = { ...defaultMatchParams, ...params };
  const { best, bestD, secondD, bestOfB } = nearestNeighbours(da, db);
  const na = best.length;
  const out: Matches = { count: 0, a: new Int32Array(na), b: new Int32Array(na), distance: new Uint16Array(na) };
  for (let i = 0; i < na; i++) {
    const j = best[i];
    if (j < 0 || bestD[i] > p.maxDistance) continue;
    if (!(bestD[i] < p.ratio * secondD[i])) continue;
    if (p.mutual && bestOfB[j] !== i) continue;
    out.a[out.count] = i;
    out.b[out.count] = j;
    out.distance[out.count] = bestD[i];
    out.count++;
  }
  return out;
}
