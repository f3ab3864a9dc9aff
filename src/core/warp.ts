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
      if (!(w > 0 && u >= 0 && v >= 0 && u <= sw - 1 && v <= sh - 1)) {
        out[y * width + x] = NaN;
        continue;
      }
      const x0 = Math.min(u | 0, sw - 2), y0 = Math.min(v | 0, sh - 2);
      const tx = u - x0, ty = v - y0;
      const o = y0 * sw + x0;
      const top = s[o] + tx * (s[o + 1] - s[o]);
      const bottom = s[o + sw] + tx * (s[o + sw + 1] - s[o + sw]);
      out[y * width + x] = top + ty * (bottom - top);
    }
  }
  return { width, height, data: out };
}
