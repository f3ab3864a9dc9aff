/**
 * Two frames brought onto one grid and to one sharpness before they are compared: b resampled into
 * a's pixels through the pair's homography, then both low-passed together until their fine detail
 * agrees. A frame smeared by motion, or seen at a coarser scale (b foreshortened under strong
 * perspective, then stretched back onto a's grid), has lost the fine band; compared in the band both
 * keep, the same content correlates again, while something that moved still differs.
 */
import type { GrayImage } from './image.js';
import { warpBilinear } from './warp.js';

/** Both frames on a's grid; b is NaN where it has no pixel. */
export interface CommonBand {
  readonly width: number;
  readonly height: number;
  readonly a: Float32Array;
  readonly b: Float32Array;
  /** Standard deviation of the Gaussian both were low-passed with, px (0: compared as they are). */
  readonly sigma: number;
  /** Per direction (across, down, both diagonals), b's fine detail over a's, after the low-pass. */
  readonly detailRatio: readonly number[];
  /** 1 where both frames see the pixel unclipped. */
  readonly use: Uint8Array;
}

/**
 * Low-pass steps tried in turn (Gaussian sigma, px): the last one covers a smear of about 20 px.
 * Common practice (memory): a line blur of length L is about a Gaussian of sigma L / sqrt(12), and
 * compared through a common Gaussian of sigma near L / 3 the two differ little.
 */
export const lowPassSteps = [0, 1, 1.5, 2, 3, 4.5, 6.5];

/** Fine detail of the two frames agrees when each direction's ratio is within this factor. */
export const detailAgreement = 0.7;

/** Pixels at or beyond these 8-bit values are clipped and say nothing about detail. */
const clippedLow = 2, clippedHigh = 253;

/**
 * Contrast-free fine detail in four directions over the pixels both frames see: mean squared
 * difference over two pixels' distance divided by the variance there, so that an exposure or
 * vignetting difference (a gain) cancels. Every `step`-th pixel of every `step`-th row.
 */
function directionalDetail(img: Float32Array, w: number, h: number, use: Uint8Array, step: number, out: Float64Array): void {
  let ex = 0, ey = 0, ed = 0, ea = 0, s = 0, ss = 0, n = 0;
  for (let y = 1; y < h - 1; y += step)
    for (let x = 1, o = y * w + 1; x < w - 1; x += step, o += step) {
      if (!use[o]) continue;
      const gx = img[o + 1] - img[o - 1], gy = img[o + w] - img[o - w];
      const gd = img[o + w + 1] - img[o - w - 1], ga = img[o - w + 1] - img[o + w - 1];
      // NaN beside the edge of b's pixels: left out.
      if (!(gx === gx && gy === gy && gd === gd && ga === ga)) continue;
      ex += gx * gx;
      ey += gy * gy;
      ed += gd * gd;
      ea += ga * ga;
      s += img[o];
      ss += img[o] * img[o];
      n++;
    }
  const variance = n > 1 ? ss / n - (s / n) ** 2 : 0;
  const d = variance > 1e-6 ? n * variance : NaN;
  out[0] = ex / d;
  out[1] = ey / d;
  out[2] = ed / d;
  out[3] = ea / d;
}

/**
 * Separable Gaussian low-pass of `src` into `dst`. Beyond the frame and next to NaN the result is
 * NaN: what the filter would mix in there is unknown, and a block near the edge is better skipped
 * than compared with a smear.
 */
function gaussian(src: Float32Array, dst: Float32Array, w: number, h: number, sigma: number, tmp: Float32Array): void {
  const r = Math.max(1, Math.ceil(3 * sigma));
  const k = new Float32Array(2 * r + 1);
  let sum = 0;
  for (let i = -r; i <= r; i++) sum += k[i + r] = Math.exp(-(i * i) / (2 * sigma * sigma));
  for (let i = 0; i < k.length; i++) k[i] /= sum;
  for (let y = 0; y < h; y++) {
    const row = y * w;
    for (let x = 0; x < w; x++) {
      let acc = 0;
      for (let i = -r; i <= r; i++) {
        const xx = x + i;
        acc += xx < 0 || xx >= w ? NaN : k[i + r] * src[row + xx];
      }
      tmp[row + x] = acc;
    }
  }
  for (let y = 0; y < h; y++)
    for (let x = 0; x < w; x++) {
      let acc = 0;
      for (let i = -r; i <= r; i++) {
        const yy = y + i;
        acc += yy < 0 || yy >= h ? NaN : k[i + r] * tmp[yy * w + x];
      }
      dst[y * w + x] = acc;
    }
}

/**
 * Resamples b onto a's grid through `h` (a -> b) and low-passes both by the first step of
 * `lowPassSteps` at which their fine detail agrees over the pixels both see (unclipped in both).
 */
export function commonBand(a: GrayImage, b: GrayImage, h: ArrayLike<number>): CommonBand {
  const w = a.width, ht = a.height, n = w * ht;
  const warped = warpBilinear(b, h, w, ht).data;
  const a0 = new Float32Array(n);
  const use = new Uint8Array(n);
  let shared = 0;
  for (let i = 0; i < n; i++) {
    const va = a.data[i], vb = warped[i];
    a0[i] = va;
    if (vb === vb && va > clippedLow && va < clippedHigh && vb > clippedLow && vb < clippedHigh) {
      use[i] = 1;
      shared++;
    }
  }
  const step = Math.max(1, Math.floor(Math.sqrt(shared / 40000)));
  const da = new Float64Array(4), db = new Float64Array(4);
  const ratios = (fa: Float32Array, fb: Float32Array): number[] => {
    directionalDetail(fa, w, ht, use, step, da);
    directionalDetail(fb, w, ht, use, step, db);
    return [0, 1, 2, 3].map((d) => db[d] / da[d]);
  };
  const agree = (r: number[]): boolean => r.every((x) => !(x < detailAgreement || x > 1 / detailAgreement));
  let ratio = ratios(a0, warped);
  if (shared === 0 || agree(ratio) || ratio.some((x) => !Number.isFinite(x))) return { width: w, height: ht, a: a0, b: warped, sigma: 0, detailRatio: ratio, use };
  const fa = new Float32Array(n), fb = new Float32Array(n), tmp = new Float32Array(n);
  let sigma = 0;
  for (const s of lowPassSteps.slice(1)) {
    sigma = s;
    gaussian(a0, fa, w, ht, s, tmp);
    gaussian(warped, fb, w, ht, s, tmp);
    ratio = ratios(fa, fb);
    if (agree(ratio)) break;
  }
  return { width: w, height: ht, a: fa, b: fb, sigma, detailRatio: ratio, use };
}
