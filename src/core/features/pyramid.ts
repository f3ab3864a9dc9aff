import type { FloatImage, GrayImage } from '../image/image.js';
import { toFloatImage } from '../image/image.js';
import type { ScratchPool } from '../image/scratch.js';

/** One level of the image pyramid and how its pixels map to level 0. */
export interface PyramidLevel extends FloatImage {
  readonly index: number;
  /** Level-0 pixels per level pixel, horizontally and vertically. */
  readonly scaleX: number;
  readonly scaleY: number;
}

/**
 * A small pyramid with a fine step between levels (1.25 by default): Harris is not covariant with
 * scale, so neighbours whose focal length differs by up to 20 % are matched across levels, and a
 * step this small keeps the worst residual scale mismatch near 5 %.
 *
 * With `halvings` h > 0 the first level is the image halved h times by 2x2 averaging, so detection
 * costs a quarter per halving while the image itself stays at full size for the steps that measure
 * on pixels.
 */
export function buildPyramid(image: GrayImage, levels: number, step: number, pool: ScratchPool, halvings = 0): PyramidLevel[] {
  const halfOf = (src: FloatImage | GrayImage, k: number): FloatImage => halve(src, pool.float32(`half${k}`, (src.width >> 1) * (src.height >> 1)));
  const halvable = (src: { width: number; height: number }): boolean => src.width >= 128 && src.height >= 128;
  let base = halvings > 0 && halvable(image) ? halfOf(image, 0) : toFloatImage(image, pool.float32('pyr0', image.width * image.height));
  let factor = base.width === image.width ? 1 : 2;
  for (let k = 1; k < halvings && halvable(base); k++) {
    base = halfOf(base, k);
    factor *= 2;
  }
  const out: PyramidLevel[] = [{ ...base, index: 0, scaleX: factor, scaleY: factor }];
  for (let k = 1; k < levels; k++) {
    const prev = out[k - 1];
    const w = Math.round(base.width / Math.pow(step, k));
    const h = Math.round(base.height / Math.pow(step, k));
    if (w < 64 || h < 64) break;
    const data = pool.float32(`pyr${k}`, w * h);
    // Bilinear resampling without a separate anti-aliasing blur: at a step of 1.25 the aliasing is
    // slight and the interpolation itself smooths (ORB builds its pyramid the same way).
    resampleBilinear(prev, { width: w, height: h, data });
    out.push({ width: w, height: h, data, index: k, scaleX: (factor * base.width) / w, scaleY: (factor * base.height) / h });
  }
  return out;
}

/** The image at half size, each pixel the mean of a 2x2 block (an odd last row or column dropped). */
export function halve(src: FloatImage | GrayImage, out: Float32Array): FloatImage {
  const { width: sw, data: s } = src;
  const w = src.width >> 1, h = src.height >> 1;
  for (let y = 0; y < h; y++) {
    const r0 = 2 * y * sw, r1 = r0 + sw, o = y * w;
    for (let x = 0; x < w; x++) {
      const i = 2 * x;
      out[o + x] = 0.25 * (s[r0 + i] + s[r0 + i + 1] + s[r1 + i] + s[r1 + i + 1]);
    }
  }
  return { width: w, height: h, data: out.subarray(0, w * h) };
}

/**
 * Bilinear resampling with pixel centres aligned (x_src = (x + 0.5) * sw / dw - 0.5). Not the shared
 * sampler (bilinear.ts) on purpose: every output pixel of a pyramid level needs a value, so positions
 * up to half a pixel outside the outer centres are clamped to the edge instead of giving NaN.
 */
export function resampleBilinear(src: FloatImage, dst: FloatImage): void {
  const { width: sw, height: sh, data: s } = src;
  const { width: dw, height: dh, data: d } = dst;
  const fx = sw / dw;
  const fy = sh / dh;
  for (let y = 0; y < dh; y++) {
    let sy = (y + 0.5) * fy - 0.5;
    if (sy < 0) sy = 0;
    if (sy > sh - 1) sy = sh - 1;
    const y0 = Math.min(Math.floor(sy), sh - 2);
    const ty = sy - y0;
    const r0 = y0 * sw;
    const r1 = r0 + sw;
    for (let x = 0; x < dw; x++) {
      let sx = (x + 0.5) * fx - 0.5;
      if (sx < 0) sx = 0;
      if (sx > sw - 1) sx = sw - 1;
      const x0 = Math.min(Math.floor(sx), sw - 2);
      const tx = sx - x0;
      const top = s[r0 + x0] + tx * (s[r0 + x0 + 1] - s[r0 + x0]);
      const bottom = s[r1 + x0] + tx * (s[r1 + x0 + 1] - s[r1 + x0]);
      d[y * dw + x] = top + ty * (bottom - top);
    }
  }
}
