import type { GrayImage } from '../image/image.js';
import { linearOf8bit } from '../image/srgb.js';

export interface ExposureParams {
  /** Sampling step over frame a, in pixels. */
  readonly step: number;
  /** 8-bit values at or below this count as clipped black (noise floor, crushed shadows). */
  readonly clipLow: number;
  /** 8-bit values at or above this count as clipped white. */
  readonly clipHigh: number;
  /** Fewer usable samples than this give no measure. */
  readonly minSamples: number;
}

export const defaultExposureParams: ExposureParams = { step: 3, clipLow: 4, clipHigh: 250, minSamples: 200 };

export interface ExposureDifference {
  /** log2(mean linear light of b / that of a) over the overlap: positive when b is brighter. */
  readonly ev: number;
  readonly samples: number;
}

/**
 * Brightness difference in exposure values over the overlap, in linear light: every `step`-th pixel
 * of a that h maps inside b is paired with b's bilinear sample there; pairs where either side is
 * clipped are left out; EV = log2(sum L_b / sum L_a) with L the sRGB-decoded value (IEC 61966-2-1).
 * Sums rather than per-pixel ratios, so dark noisy pixels do not dominate.
 */
export function exposureDifference(a: GrayImage, b: GrayImage, h: ArrayLike<number>, params: Partial<ExposureParams> = {}): ExposureDifference | null {
  const p = { ...defaultExposureParams, ...params };
  const lut = linearOf8bit;
  const { width: wa, height: ha, data: da } = a;
  const { width: wb, height: hb, data: db } = b;
  let sumA = 0, sumB = 0, n = 0;
  for (let y = 0; y < ha; y += p.step) {
    for (let x = 0; x < wa; x += p.step) {
      const va = da[y * wa + x];
      if (va <= p.clipLow || va >= p.clipHigh) continue;
      const w = h[6] * x + h[7] * y + h[8];
      if (w <= 0) continue;
      const u = (h[0] * x + h[1] * y + h[2]) / w;
      const v = (h[3] * x + h[4] * y + h[5]) / w;
      if (!(u >= 0 && v >= 0 && u < wb - 1 && v < hb - 1)) continue;
      // Not the shared sampler (bilinear.ts): the clip test needs each of the four neighbours, and the
      // neighbours are interpolated after their sRGB decode, so the loop reads them itself.
      const x0 = u | 0, y0 = v | 0;
      const tx = u - x0, ty = v - y0;
      const o = y0 * wb + x0;
      const c00 = db[o], c10 = db[o + 1], c01 = db[o + wb], c11 = db[o + wb + 1];
      if (c00 <= p.clipLow || c10 <= p.clipLow || c01 <= p.clipLow || c11 <= p.clipLow) continue;
      if (c00 >= p.clipHigh || c10 >= p.clipHigh || c01 >= p.clipHigh || c11 >= p.clipHigh) continue;
      const top = lut[c00] + tx * (lut[c10] - lut[c00]);
      const bottom = lut[c01] + tx * (lut[c11] - lut[c01]);
      sumB += top + ty * (bottom - top);
      sumA += lut[va];
      n++;
    }
  }
  if (n < p.minSamples || sumA <= 0 || sumB <= 0) return null;
  return { ev: Math.log2(sumB / sumA), samples: n };
}
