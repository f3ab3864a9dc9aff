// The bracket shift: the largest corner displacement under the least-squares camera turn between
// the tie points' rays (Kabsch; Umeyama, IEEE PAMI 1991). Checked against the displacement of the corners under the
// known motion, computed directly, for a camera turned a little about its centre (the published
// model H = K R K^-1, Hartley & Zisserman sec. 8.4.2).
import { describe, expect, it } from 'vitest';
import { cameraModel, focalLengthPx, rotationHomography } from '../../../src/core/demo/camera.js';
import { bracketShift } from '../../../src/core/geometry/bracket-shift.js';
import { project } from '../../../src/core/geometry/homography.js';
import { createRandom } from '../../../src/core/numeric/random.js';

const W = 3000, H = 2000;
const camera = cameraModel(W, H, 35);
const f = focalLengthPx(camera);

function tiePoints(h: Float64Array, region: { y0: number; y1: number }, noise: number, seed: number): Float64Array {
  const rnd = createRandom(seed);
  const pts: number[] = [];
  for (let k = 0; k < 200; k++) {
    const x = 50 + rnd.next() * (W - 100), y = region.y0 + rnd.next() * (region.y1 - region.y0);
    const [u, v] = project(h, x, y);
    pts.push(x, y, u + noise * rnd.normal(), v + noise * rnd.normal());
  }
  return Float64Array.from(pts);
}

const cornerShift = (h: Float64Array): number => Math.max(...[[0, 0], [W - 1, 0], [W - 1, H - 1], [0, H - 1]].map(([x, y]) => {
  const [u, v] = project(h, x, y);
  return Math.hypot(u - x, v - y);
}));

describe('the bracket shift', () => {
  it('is the corner displacement of a hand-held drift of 0.3 degrees yaw, 0.2 pitch, 0.1 roll', () => {
    const h = rotationHomography(camera, { yawDeg: 0, pitchDeg: 0, rollDeg: 0 }, camera, { yawDeg: 0.3, pitchDeg: 0.2, rollDeg: 0.1 });
    const truth = cornerShift(h);
    const s = bracketShift(tiePoints(h, { y0: 50, y1: H - 50 }, 0.2, 1), W, H, f)!;
    expect(Math.abs(s - truth)).toBeLessThan(0.5);
  });

  it('stays right when the tie points crowd the lower fifth of the frame (a low horizon under sky)', () => {
    const h = rotationHomography(camera, { yawDeg: 0, pitchDeg: 0, rollDeg: 0 }, camera, { yawDeg: -0.1, pitchDeg: 0.05, rollDeg: 0 });
    const truth = cornerShift(h);
    const s = bracketShift(tiePoints(h, { y0: 0.8 * H, y1: H - 50 }, 0.3, 2), W, H, f)!;
    expect(Math.abs(s - truth)).toBeLessThan(1);
  });

  it('is zero for a steady bracket and null without enough points', () => {
    const id = Float64Array.of(1, 0, 0, 0, 1, 0, 0, 0, 1);
    expect(bracketShift(tiePoints(id, { y0: 50, y1: H - 50 }, 0, 3), W, H, f)).toBeCloseTo(0, 6);
    expect(bracketShift([1, 2, 1, 2], W, H, f)).toBeNull();
  });
});
