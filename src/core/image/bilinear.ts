/**
 * The one bilinear sampler of the core. Edge rule: a point is sampled wherever it lies in the closed
 * rectangle [0, width - 1] x [0, height - 1] spanned by the pixel centres (on the last column or row
 * the cell to its left or above is used, with weight 1 on the edge pixel); anywhere else, and at NaN
 * coordinates, the result is NaN, so callers leave such points out rather than inventing values.
 * The image is a flat row-major array of `width` x `height` values.
 */
export function sampleBilinear(data: ArrayLike<number>, width: number, height: number, x: number, y: number): number {
  if (!(x >= 0 && y >= 0 && x <= width - 1 && y <= height - 1)) return NaN;
  const x0 = Math.min(x | 0, width - 2), y0 = Math.min(y | 0, height - 2);
  const tx = x - x0, ty = y - y0;
  const o = y0 * width + x0;
  const top = data[o] + tx * (data[o + 1] - data[o]);
  const bottom = data[o + width] + tx * (data[o + width + 1] - data[o + width]);
  return top + ty * (bottom - top);
}
