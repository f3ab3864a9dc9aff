import type { GrayImage } from '../image/image.js';

/** Pixels at or beyond these values are clipped, and left out of both energies. */
export const clippedLow = 2, clippedHigh = 253;

/**
 * Sums of squared differences across, down and along both diagonals (each over two pixels' distance)
 * at every `step`-th pixel of every `step`-th row, skipping pixels flagged in `skip` (or, without
 * it, clipped ones); returns how many pixels.
 */
function directionalEnergy(data: ArrayLike<number>, w: number, h: number, skip: Uint8Array | null, step: number, out: Float64Array): number {
  let ex = 0, ey = 0, ed = 0, ea = 0, n = 0;
  for (let y = 1; y < h - 1; y += step) {
    const row = y * w;
    for (let x = 1; x < w - 1; x += step) {
      const o = row + x;
      if (skip ? skip[o] : data[o] <= clippedLow || data[o] >= clippedHigh) continue;
      const gx = data[o + 1] - data[o - 1];
      const gy = data[o + w] - data[o - w];
      const gd = data[o + w + 1] - data[o - w - 1];
      const ga = data[o - w + 1] - data[o + w - 1];
      ex += gx * gx;
      ey += gy * gy;
      ed += gd * gd;
      ea += ga * ga;
      n++;
    }
  }
  out[0] = ex;
  out[1] = ey;
  out[2] = ed;
  out[3] = ea;
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
  const fine = new Float64Array(4);
  // Every other pixel of every other row is plenty for a statistic over the whole frame.
  const nFine = directionalEnergy(data, w, h, null, 2, fine);
  const cw = (w / 4) | 0, ch = (h / 4) | 0;
  if (cw < 3 || ch < 3 || nFine === 0) return 0;
  const coarse = new Float32Array(cw * ch);
  const clipped = new Uint8Array(cw * ch);
  for (let y = 0; y < ch; y++)
    for (let x = 0; x < cw; x++) {
      let s = 0;
      let clip = 0;
      for (let dy = 0; dy < 4; dy++)
        for (let dx = 0, o = (4 * y + dy) * w + 4 * x; dx < 4; dx++, o++) {
          const v = data[o];
          s += v;
          if (v <= clippedLow || v >= clippedHigh) clip = 1;
        }
      coarse[y * cw + x] = s / 16;
      clipped[y * cw + x] = clip;
    }
  const coarseE = new Float64Array(4);
  const nCoarse = directionalEnergy(coarse, cw, ch, clipped, 1, coarseE);
  if (nCoarse === 0) return 0;
  let best = Infinity;
  for (let k = 0; k < 4; k++) {
    if (coarseE[k] <= 0) continue;
    best = Math.min(best, fine[k] / nFine / (coarseE[k] / nCoarse));
  }
  return Number.isFinite(best) ? best : 0;
}
