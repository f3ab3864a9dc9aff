import { describe, expect, it } from 'vitest';
import { sampleBilinear } from '../../../src/core/image/bilinear.js';

// A 5 x 4 image of the plane 3x - 2y + 7: bilinear interpolation reproduces any affine function
// exactly (it is linear along each axis), so every in-range sample must equal the plane there.
const W = 5, H = 4;
const plane = (x: number, y: number): number => 3 * x - 2 * y + 7;
const data = Float32Array.from({ length: W * H }, (_, i) => plane(i % W, Math.floor(i / W)));

describe('sampleBilinear', () => {
  it('reproduces a plane between pixel centres', () => {
    for (const [x, y] of [[0.25, 0.5], [1.5, 2.75], [3.9, 0.1], [2, 1]]) expect(sampleBilinear(data, W, H, x, y)).toBeCloseTo(plane(x, y), 5);
  });

  it('samples the closed rectangle of pixel centres, the last column and row included', () => {
    expect(sampleBilinear(data, W, H, W - 1, H - 1)).toBe(plane(W - 1, H - 1));
    expect(sampleBilinear(data, W, H, W - 1, 1.5)).toBeCloseTo(plane(W - 1, 1.5), 5);
    expect(sampleBilinear(data, W, H, 0, 0)).toBe(plane(0, 0));
  });

  it('gives NaN outside that rectangle and at NaN coordinates', () => {
    for (const [x, y] of [[-0.01, 1], [1, -0.01], [W - 1 + 1e-9, 1], [1, H - 0.5], [NaN, 1], [1, NaN]]) expect(sampleBilinear(data, W, H, x, y)).toBeNaN();
  });
});
