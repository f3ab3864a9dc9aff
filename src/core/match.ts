import { descriptorWords } from './binary-descriptor.js';

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
 * Brute-force nearest neighbours under Hamming distance, one pass over all pairs, keeping for each
 * descriptor of a its best and second-best distance and for each descriptor of b its best, so that
 * the ratio test and the mutual check cost no second pass.
 */
export function matchDescriptors(da: Uint32Array, db: Uint32Array, params: Partial<MatchParams> = {}): Matches {
  const p = { ...defaultMatchParams, ...params };
  const W = descriptorWords;
  const na = (da.length / W) | 0;
  const nb = (db.length / W) | 0;
  const best = new Int32Array(na).fill(-1);
  const bestD = new Uint16Array(na).fill(0xffff);
  const secondD = new Uint16Array(na).fill(0xffff);
  const bestOfB = new Int32Array(nb).fill(-1);
  const bestDOfB = new Uint16Array(nb).fill(0xffff);
  if (W !== 8) throw new Error('matchDescriptors is unrolled for 256-bit descriptors');
  for (let i = 0; i < na; i++) {
    const o = i * 8;
    const a0 = da[o], a1 = da[o + 1], a2 = da[o + 2], a3 = da[o + 3];
    const a4 = da[o + 4], a5 = da[o + 5], a6 = da[o + 6], a7 = da[o + 7];
    let b1 = 0xffff, b2 = 0xffff, bi = -1;
    for (let j = 0, q = 0; j < nb; j++, q += 8) {
      // Hamming distance: the SWAR bit count (Warren, "Hacker's Delight", 2nd ed., section 5-1),
      // the words' counts summed as 4-bit and then 8-bit fields before one horizontal add. Written
      // out here, not called: the engine does not inline a function this long.
      let v: number, t: number, acc: number;
      v = a0 ^ db[q]; v -= (v >>> 1) & 0x55555555; t = (v & 0x33333333) + ((v >>> 2) & 0x33333333);
      v = a1 ^ db[q + 1]; v -= (v >>> 1) & 0x55555555; t += (v & 0x33333333) + ((v >>> 2) & 0x33333333);
      acc = (t & 0x0f0f0f0f) + ((t >>> 4) & 0x0f0f0f0f);
      v = a2 ^ db[q + 2]; v -= (v >>> 1) & 0x55555555; t = (v & 0x33333333) + ((v >>> 2) & 0x33333333);
      v = a3 ^ db[q + 3]; v -= (v >>> 1) & 0x55555555; t += (v & 0x33333333) + ((v >>> 2) & 0x33333333);
      acc += (t & 0x0f0f0f0f) + ((t >>> 4) & 0x0f0f0f0f);
      v = a4 ^ db[q + 4]; v -= (v >>> 1) & 0x55555555; t = (v & 0x33333333) + ((v >>> 2) & 0x33333333);
      v = a5 ^ db[q + 5]; v -= (v >>> 1) & 0x55555555; t += (v & 0x33333333) + ((v >>> 2) & 0x33333333);
      acc += (t & 0x0f0f0f0f) + ((t >>> 4) & 0x0f0f0f0f);
      v = a6 ^ db[q + 6]; v -= (v >>> 1) & 0x55555555; t = (v & 0x33333333) + ((v >>> 2) & 0x33333333);
      v = a7 ^ db[q + 7]; v -= (v >>> 1) & 0x55555555; t += (v & 0x33333333) + ((v >>> 2) & 0x33333333);
      acc += (t & 0x0f0f0f0f) + ((t >>> 4) & 0x0f0f0f0f);
      // Each byte now holds at most 64: add them in 16-bit fields so that 256 does not wrap.
      acc = (acc & 0x00ff00ff) + ((acc >>> 8) & 0x00ff00ff);
      const d = (acc & 0xffff) + (acc >>> 16);
      if (d < b2) {
        if (d < b1) {
          b2 = b1;
          b1 = d;
          bi = j;
        } else b2 = d;
      }
      if (d < bestDOfB[j]) {
        bestDOfB[j] = d;
        bestOfB[j] = i;
      }
    }
    best[i] = bi;
    bestD[i] = b1;
    secondD[i] = b2;
  }
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
