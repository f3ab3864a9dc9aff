import type { FloatImage } from './image.js';

/**
 * Summed-area table with one extra leading row and column of zeros: entry (x, y) holds the sum of
 * all pixels above and left of (x, y). Float64, since sums of 8-bit values over a frame exceed the
 * exact integer range of float32.
 */
export function integralImage(image: FloatImage, out: Float64Array): Float64Array {
  const { width: w, height: h, data } = image;
  const w1 = w + 1;
  out.fill(0, 0, w1);
  for (let y = 0; y < h; y++) {
    let rowSum = 0;
    const src = y * w;
    const dst = (y + 1) * w1;
    out[dst] = 0;
    for (let x = 0; x < w; x++) {
      rowSum += data[src + x];
      out[dst + x + 1] = out[dst - w1 + x + 1] + rowSum;
    }
  }
  return out;
}
