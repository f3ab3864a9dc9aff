// Brightness difference in EV over the overlap, in linear light (sRGB transfer function, IEC
// 61966-2-1; EV as log2 of a light ratio, APEX).
import { describe, expect, it } from 'vitest';
import { exposureDifference } from '../../../src/core/pair/exposure.js';
import type { GrayImage } from '../../../src/core/image/image.js';
import { createRandom } from '../../../src/core/numeric/random.js';
import { linearToSrgb, srgbToLinear } from '../../../src/core/image/srgb.js';

describe('sRGB transfer function (IEC 61966-2-1)', () => {
  it('decodes and encodes to the standard values', () => {
    expect(srgbToLinear(0.5)).toBeCloseTo(0.214041, 5);
    expect(srgbToLinear(0.04045)).toBeCloseTo(0.04045 / 12.92, 10);
    expect(srgbToLinear(1)).toBeCloseTo(1, 12);
    for (const v of [0, 0.01, 0.2, 0.7, 1]) expect(linearToSrgb(srgbToLinear(v))).toBeCloseTo(v, 10);
  });
});

function texture(w: number, h: number, seed: number, gainEv = 0): GrayImage {
  const rnd = createRandom(seed);
  const base = Float64Array.from({ length: w * h }, () => 0.02 + 0.5 * rnd.next());
  const g = Math.pow(2, gainEv);
  return { width: w, height: h, data: Uint8Array.from(base, (l) => Math.round(255 * linearToSrgb(Math.min(1, l * g)))) };
}

describe('exposure difference', () => {
  const id = [1, 0, 0, 0, 1, 0, 0, 0, 1];
  it('is log2 of the linear-light ratio, positive when b is brighter', () => {
    const a = texture(200, 150, 1);
    for (const ev of [-2, -0.5, 0.3, 1]) {
      const d = exposureDifference(a, texture(200, 150, 1, ev), id)!;
      expect(d.ev).toBeCloseTo(ev, 1);
      expect(Math.abs(d.ev - ev)).toBeLessThan(0.03);
    }
  });

  it('leaves out clipped pixels instead of being pulled towards zero by them', () => {
    const a = texture(200, 150, 2);
    // +1.5 EV clips the brightest third of the texture; the rest still measures +1.5.
    const d = exposureDifference(a, texture(200, 150, 2, 1.5), id)!;
    expect(Math.abs(d.ev - 1.5)).toBeLessThan(0.03);
  });

  it('gives no measure without enough overlap', () => {
    const a = texture(200, 150, 3);
    expect(exposureDifference(a, a, [1, 0, -199, 0, 1, 0, 0, 0, 1])).toBeNull();
  });
});
