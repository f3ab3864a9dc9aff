import type { GrayImage } from './image.js';

/** Offsets (dx, dy) of the four directions measured: across, down and the two diagonals. */
const directions = [[1, 0], [0, 1], [1, 1], [1, -1]];

function directionalEnergy(data: ArrayLike<number>, w: number, h: number, skip: Uint8Array | null, out: Float64Array): number {
  out.fill(0);
  let n = 0;
  for (let y = 1; y < h - 1; y++) {
    const row = y * w;
    for (let x = 1; x < w - 1; x++) {
      const o = row + x;
      if (skip && skip[o]) continue;
      for (let k = 0; k < 4; k++) {
        const d = directions[k][1] * w + directions[k][0];
        const g = data[o + d] - data[o - d];
        out[k] += g * g;
      }
      n++;
    }
  }
  return n;
}

/**
 * A contrast-independent sharpness: in each of four directions, the mean squared difference at full
 * analysis resolution over the same on a 4x4 block average (in the coarse image's own pixels); the
 * smallest of the four. Blur takes the fine detail first, so the ratio falls, and motion blur takes
 * it in one direction only, which the smallest ratio catches; scaling the brightness scales both
 * energies alike. Comparable between frames of one sequence (same scene, lens and size), not across
 * sequences. Clipped pixels (<= 2 or >= 253) are left out.
 */
export function sharpness(img: GrayImage): number {
  const { width: w, height: h, data } = img;
  const clippedFine = new Uint8Array(w * h);
  for (let i = 0; i < w * h; i++) clippedFine[i] = data[i] <= 2 || data[i] >= 253 ? 1 : 0;
  const fine = new Float64Array(4);
  const nFine = directionalEnergy(data, w, h, clippedFine, fine);
  const cw = (w / 4) | 0, ch = (h / 4) | 0;
  if (cw < 3 || ch < 3 || nFine === 0) return 0;
  const coarse = new Float32Array(cw * ch);
  const clipped = new Uint8Array(cw * ch);
  for (let y = 0; y < ch; y++)
    for (let x = 0; x < cw; x++) {
      let s = 0;
      let clip = 0;
      for (let dy = 0; dy < 4; dy++)
        for (let dx = 0; dx < 4; dx++) {
          const o = (4 * y + dy) * w + 4 * x + dx;
          s += data[o];
          clip |= clippedFine[o];
        }
      coarse[y * cw + x] = s / 16;
      clipped[y * cw + x] = clip;
    }
  const coarseE = new Float64Array(4);
  const nCoarse = directionalEnergy(coarse, cw, ch, clipped, coarseE);
  if (nCoarse === 0) return 0;
  let best = Infinity;
  for (let k = 0; k < 4; k++) {
    if (coarseE[k] <= 0) continue;
    best = Math.min(best, fine[k] / nFine / (coarseE[k] / nCoarse));
  }
  return Number.isFinite(best) ? best : 0;
}
