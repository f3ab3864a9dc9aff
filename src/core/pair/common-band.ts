/**
 * Two frames brought onto one grid and to one sharpness before they are compared: b resampled into
 * a's pixels through the pair's homography, then both low-passed together until their fine detail
 * agrees. A frame smeared by motion, or seen at a coarser scale (b foreshortened under strong
 * perspective, then stretched back onto a's grid), has lost the fine band; compared in the band both
 * keep, the same content correlates again, while something that moved still differs.
 */
import type { FloatImage, GrayImage } from '../image/image.js';
import { warpBilinear } from '../image/warp.js';

/** Both frames on a's grid; b is NaN where it has no pixel. */
export interface CommonBand {
  readonly width: number;
  readonly height: number;
  readonly a: Float32Array;
  readonly b: Float32Array;
  /** Standard deviation of the Gaussian both were low-passed with, px (0: compared as they are). */
  readonly sigma: number;
  /** Per direction (across, down, both diagonals), b's fine detail over a's (each against its own coarse detail), after the low-pass. */
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

/** Side of the tiles whose detail ratios are compared, px. */
const tile = 64;

/**
 * Squared differences over two pixels' distance across, down and along both diagonals, summed over
 * the pixels flagged in `use`, per tile of `tile` x `tile` px: out[4 * t + d] for tile t and
 * direction d.
 */
function directionalEnergy(img: Float32Array, w: number, h: number, use: Uint8Array, out: Float64Array): void {
  const tw = Math.ceil(w / tile);
  out.fill(0);
  for (let y = 1; y < h - 1; y++)
    for (let x = 1, o = y * w + 1; x < w - 1; x++, o++) {
      if (!use[o]) continue;
      const gx = img[o + 1] - img[o - 1], gy = img[o + w] - img[o - w];
      const gd = img[o + w + 1] - img[o - w - 1], ga = img[o - w + 1] - img[o + w - 1];
      const t = 4 * (Math.floor(y / tile) * tw + Math.floor(x / tile));
      out[t] += gx * gx;
      out[t + 1] += gy * gy;
      out[t + 2] += gd * gd;
      out[t + 3] += ga * ga;
    }
}

/**
 * A box mean of odd width `width` along rows (`dx` = 1) or columns, by running sums, so that its
 * cost does not grow with the width. A window that reaches past the frame or holds a NaN gives
 * NaN: what it would mix in there is unknown, and a block near the edge is better skipped than
 * compared with a smear.
 */
function boxMean(src: Float32Array, dst: Float32Array, w: number, h: number, width: number, alongRows: boolean): void {
  const r = width >> 1;
  const lines = alongRows ? h : w, length = alongRows ? w : h, stride = alongRows ? 1 : w, next = alongRows ? w : 1;
  for (let line = 0; line < lines; line++) {
    const base = line * next;
    let sum = 0, bad = 0;
    // The window over positions [i - r, i + r]; positions outside the frame count as bad.
    bad += r;
    for (let j = 0; j < r && j < length; j++) {
      const v = src[base + j * stride];
      if (v === v) sum += v;
      else bad++;
    }
    if (r >= length) bad += r + 1 - length;
    for (let i = 0; i < length; i++) {
      const inIdx = i + r;
      if (inIdx < length) {
        const v = src[base + inIdx * stride];
        if (v === v) sum += v;
        else bad++;
      } else bad++;
      dst[base + i * stride] = bad > 0 ? NaN : sum / width;
      const outIdx = i - r;
      if (outIdx < 0) bad--;
      else {
        const v = src[base + outIdx * stride];
        if (v === v) sum -= v;
        else bad--;
      }
    }
  }
}

/**
 * Widths of three successive box means whose result is close to a Gaussian of `sigma` (Kovesi,
 * "Fast almost-Gaussian filtering", DICTA 2010), and the sigma they make.
 */
export function boxWidths(sigma: number): { widths: number[]; sigma: number } {
  const n = 3;
  let wl = Math.floor(Math.sqrt((12 * sigma * sigma) / n + 1));
  if (wl % 2 === 0) wl--;
  const wu = wl + 2;
  const m = Math.round((12 * sigma * sigma - n * wl * wl - 4 * n * wl - 3 * n) / (-4 * wl - 4));
  const widths = [0, 1, 2].map((i) => (i < m ? wl : wu));
  return { widths, sigma: Math.sqrt(widths.reduce((t, x) => t + (x * x - 1), 0) / 12) };
}

/** Almost-Gaussian low-pass of `src` into `dst`: three box means along rows, then along columns. */
function lowPass(src: Float32Array, dst: Float32Array, w: number, h: number, widths: readonly number[], tmp: Float32Array): void {
  let from = src;
  for (const [i, alongRows] of [true, false].entries())
    for (const [j, width] of widths.entries()) {
      // Ping-pong between dst and tmp, ending in dst.
      const to = (i * widths.length + j) % 2 === (2 * widths.length - 1) % 2 ? dst : tmp;
      if (width <= 1) {
        if (to !== from) to.set(from);
      } else boxMean(from, to, w, h, width, alongRows);
      from = to;
    }
}

/** `src` low-passed by an almost-Gaussian of about `sigma` px; NaN where the window reaches past the frame or a NaN. */
export function lowPassed(src: Float32Array, w: number, h: number, sigma: number): Float32Array {
  const out = new Float32Array(w * h);
  lowPass(src, out, w, h, boxWidths(sigma).widths, new Float32Array(w * h));
  return out;
}

/**
 * Resamples b onto a's grid through `h` (a -> b) and low-passes both by the first step of
 * `lowPassSteps` at which their fine detail agrees over the pixels both see (unclipped in both);
 * the last step when none does.
 */
export function commonBand(a: GrayImage | FloatImage, b: GrayImage | FloatImage, h: ArrayLike<number>): CommonBand {
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
  // Chosen on a window of at most 512 x 512 px at the middle of what both see: each step filters
  // both images, which over the whole frame costs seconds.
  let x0 = w, x1 = -1, y0 = ht, y1 = -1;
  for (let y = 0; y < ht; y++)
    for (let x = 0, o = y * w; x < w; x++, o++)
      if (use[o]) {
        if (x < x0) x0 = x;
        if (x > x1) x1 = x;
        if (y < y0) y0 = y;
        if (y > y1) y1 = y;
      }
  const unfiltered = { width: w, height: ht, a: a0, b: warped, sigma: 0, use };
  if (shared === 0 || x1 - x0 < 48 || y1 - y0 < 48) return { ...unfiltered, detailRatio: [1, 1, 1, 1] };
  const ww = Math.min(512, x1 - x0 + 1), wh = Math.min(512, y1 - y0 + 1);
  const wx = Math.floor((x0 + x1 + 1 - ww) / 2), wy = Math.floor((y0 + y1 + 1 - wh) / 2), wn = ww * wh;
  const wa = new Float32Array(wn), wb = new Float32Array(wn), wuse = new Uint8Array(wn);
  for (let y = 0; y < wh; y++) {
    const o = (wy + y) * w + wx;
    wa.set(a0.subarray(o, o + ww), y * ww);
    wb.set(warped.subarray(o, o + ww), y * ww);
    wuse.set(use.subarray(o, o + ww), y * ww);
  }
  // Each frame's fine detail is measured against its own coarse detail (after the strongest
  // low-pass), so that what scales all detail alike (exposure, vignetting, the contrast of the
  // light) cancels, and what is left is how much of the fine band each frame kept.
  const fwa = new Float32Array(wn), fwb = new Float32Array(wn), wtmp = new Float32Array(wn);
  const coarse = boxWidths(lowPassSteps[lowPassSteps.length - 1] * 1.25).widths;
  lowPass(wa, fwa, ww, wh, coarse, wtmp);
  lowPass(wb, fwb, ww, wh, coarse, wtmp);
  for (let y = 1; y < wh - 1; y++)
    for (let x = 1, o = y * ww + 1; x < ww - 1; x++, o++) {
      const around = fwa[o - ww - 1] + fwa[o + ww + 1] + fwa[o - ww + 1] + fwa[o + ww - 1] + fwb[o - ww - 1] + fwb[o + ww + 1] + fwb[o - ww + 1] + fwb[o + ww - 1];
      if (!(around === around)) wuse[o] = 0;
    }
  const tiles = Math.ceil(ww / tile) * Math.ceil(wh / tile);
  const refA = new Float64Array(4 * tiles), refB = new Float64Array(4 * tiles), da = new Float64Array(4 * tiles), db = new Float64Array(4 * tiles);
  directionalEnergy(fwa, ww, wh, wuse, refA);
  directionalEnergy(fwb, ww, wh, wuse, refB);
  // Per direction, the median over the tiles with coarse detail in both: something that moved, or
  // a patch of sky, changes a few tiles and not the median.
  const ratioOf = (fa: Float32Array, fb: Float32Array): number[] => {
    directionalEnergy(fa, ww, wh, wuse, da);
    directionalEnergy(fb, ww, wh, wuse, db);
    return [0, 1, 2, 3].map((d) => {
      const r: number[] = [];
      for (let t = d; t < 4 * tiles; t += 4) if (refA[t] > 0 && refB[t] > 0 && da[t] > 0) r.push(db[t] / refB[t] / (da[t] / refA[t]));
      r.sort((x, y) => x - y);
      return r.length ? r[r.length >> 1] : NaN;
    });
  };
  const agree = (r: number[]): boolean => r.every((x) => !(x < detailAgreement || x > 1 / detailAgreement));
  let ratio = ratioOf(wa, wb);
  if (agree(ratio) || ratio.some((x) => !Number.isFinite(x))) return { ...unfiltered, detailRatio: ratio };
  let box = boxWidths(lowPassSteps[1]);
  for (const s of lowPassSteps.slice(1)) {
    box = boxWidths(s);
    lowPass(wa, fwa, ww, wh, box.widths, wtmp);
    lowPass(wb, fwb, ww, wh, box.widths, wtmp);
    ratio = ratioOf(fwa, fwb);
    if (agree(ratio)) break;
  }
  const fa = new Float32Array(n), fb = new Float32Array(n), tmp = new Float32Array(n);
  lowPass(a0, fa, w, ht, box.widths, tmp);
  lowPass(warped, fb, w, ht, box.widths, tmp);
  const sigma = box.sigma;
  return { width: w, height: ht, a: fa, b: fb, sigma, detailRatio: ratio, use };
}
