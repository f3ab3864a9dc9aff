import type { GrayImage } from './image.js';

/**
 * A contrast-independent sharpness: the mean squared gradient at full analysis resolution over the
 * same on a 4x4 block average (in the coarse image's own pixels). Blur takes the fine detail first,
 * so the ratio falls; scaling the brightness scales both energies alike and leaves it unchanged.
 * Comparable between frames of one sequence (same scene, lens and size), not across sequences.
 * Clipped pixels (<= 2 or >= 253) are left out of both.
 */
export function sharpness(img: GrayImage): number {
  const { width: w, height: h, data } = img;
  let fine = 0, nFine = 0;
  for (let y = 1; y < h - 1; y++) {
    const row = y * w;
    for (let x = 1; x < w - 1; x++) {
      const c = data[row + x];
      if (c <= 2 || c >= 253) continue;
      const gx = data[row + x + 1] - data[row + x - 1];
      const gy = data[row + x + w] - data[row + x - w];
      fine += gx * gx + gy * gy;
      nFine++;
    }
  }
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
          const v = data[(4 * y + dy) * w + 4 * x + dx];
          s += v;
          if (v <= 2 || v >= 253) clip = 1;
        }
      coarse[y * cw + x] = s / 16;
      clipped[y * cw + x] = clip;
    }
  let coarseE = 0, nCoarse = 0;
  for (let y = 1; y < ch - 1; y++)
    for (let x = 1; x < cw - 1; x++) {
      const o = y * cw + x;
      if (clipped[o]) continue;
      const gx = coarse[o + 1] - coarse[o - 1];
      const gy = coarse[o + cw] - coarse[o - cw];
      coarseE += gx * gx + gy * gy;
      nCoarse++;
    }
  if (nCoarse === 0 || coarseE === 0) return 0;
  return fine / nFine / (coarseE / nCoarse);
}
