import { sampleBilinear } from './bilinear.js';
import type { FloatImage, GrayImage } from './image.js';

/**
 * Resamples `src` into a width x height frame: output pixel (x, y) takes src's bilinear value at
 * `srcFromDst` applied to (x, y). Pixels that fall outside src (or behind the camera) get NaN.
 */
export function warpBilinear(src: GrayImage | FloatImage, srcFromDst: ArrayLike<number>, width: number, height: number): FloatImage {
  const h = srcFromDst;
  const { width: sw, height: sh, data: s } = src;
  const out = new Float32Array(width * height);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const w = h[6] * x + h[7] * y + h[8];
      const u = (h[0] * x + h[1] * y + h[2]) / w;
      const v = (h[3] * x + h[4] * y + h[5]) / w;
      out[y * width + x] = w > 0 ? sampleBilinear(s, sw, sh, u, v) : NaN;
    }
  }
  return { width, height, data: out };
}
