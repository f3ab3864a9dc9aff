// The pair detail's placed view (src/renderer/pair-canvas.ts): both frames of a pair in one view
// through the pair's homography, with the overlap outlined. Checked on pairs of a rotating camera
// whose truth is known by construction, H = K R K^-1 (Hartley & Zisserman, "Multiple View
// Geometry", 2nd ed., section 8.4; Szeliski, "Image alignment and stitching: a tutorial", 2006).
import { describe, expect, it } from 'vitest';
import { overlapRegions } from '../../src/core/geometry/overlap.js';
import { polygonArea } from '../../src/core/numeric/polygon.js';
import { affineOf, placedView } from '../../src/renderer/pair-canvas.js';

const W = 2400, H = 1600, f = 2000;
const cx = (W - 1) / 2, cy = (H - 1) / 2;
const a = { file: 'a.jpg', width: W, height: H };
const b = { file: 'b.jpg', width: W, height: H };

const mul = (A: readonly number[], B: readonly number[]): number[] =>
  Array.from({ length: 9 }, (_, k) => A[3 * Math.floor(k / 3)] * B[k % 3] + A[3 * Math.floor(k / 3) + 1] * B[3 + (k % 3)] + A[3 * Math.floor(k / 3) + 2] * B[6 + (k % 3)]);

/** a -> b for a camera turned right by yawDeg about its centre: b sees a ray of yaw phi at phi - yaw. */
function turned(yawDeg: number): number[] {
  const t = (yawDeg * Math.PI) / 180, c = Math.cos(t), s = Math.sin(t);
  const K = [f, 0, cx, 0, f, cy, 0, 0, 1], Ki = [1 / f, 0, -cx / f, 0, 1 / f, -cy / f, 0, 0, 1];
  return mul(mul(K, [c, 0, -s, 0, 1, 0, s, 0, c]), Ki);
}

/** The frames' horizontal field of view: a turn of 94 % of it leaves about 6 % overlap. */
const fovDeg = (2 * Math.atan(W / 2 / f) * 180) / Math.PI;

const xs = (p: readonly number[]): number[] => p.filter((_, k) => k % 2 === 0);

describe('the placed view of a pair', () => {
  it('outlines an overlap whose share of a equals the overlap the report gives, for a 6 % and a 40 % pair', () => {
    for (const yaw of [0.94 * fovDeg, 0.6 * fovDeg]) {
      const h = turned(yaw);
      const reported = overlapRegions(h, W, H, W, H).overlap;
      for (const focal of [f, null]) {
        const v = placedView(a, b, h, focal)!;
        // a and b are the same size and the turn is symmetric: both shares are the report's overlap.
        expect(v.overlapShare).toBeCloseTo(reported, 6);
        expect(polygonArea(v.overlapInA) / (W * H)).toBeCloseTo(reported, 6);
      }
    }
    expect(overlapRegions(turned(0.94 * fovDeg), W, H, W, H).overlap).toBeGreaterThan(0.04);
    expect(overlapRegions(turned(0.94 * fovDeg), W, H, W, H).overlap).toBeLessThan(0.08);
  });

  it('draws a 6 % overlap as a thin sliver where the frames meet, and b where the turn puts it', () => {
    const yaw = 0.94 * fovDeg;
    const v = placedView(a, b, turned(yaw), f)!;
    expect(v.surface).toBe('sphere');
    const [bx, , bw] = v.box;
    const ov = xs(v.overlap), ea = xs(v.outlineA), eb = xs(v.outlineB);
    const sliver = (Math.max(...ov) - Math.min(...ov)) / bw;
    // Two frames side by side span about twice a's width; the overlap a few per cent of it.
    expect(sliver).toBeGreaterThan(0.01);
    expect(sliver).toBeLessThan(0.06);
    // The sliver lies at a's right edge and b's left edge.
    expect(Math.max(...ov)).toBeCloseTo(Math.max(...ea), 0);
    expect(Math.min(...ov)).toBeCloseTo(Math.min(...eb), 0);
    expect(Math.min(...eb)).toBeGreaterThan(bx + 0.4 * bw);
    // On the sphere seen from a's axis, b's centre sits at yaw = the turn, times the focal length.
    // The mesh corner at the middle of b, (W - 1) / 2, (H - 1) / 2, is b's principal point.
    const centre = v.piecesB.find((p) => p.source[0] === cx && p.source[1] === cy)!;
    const [m0, m1, m2, m3, m4, m5] = centre.matrix;
    const [sx, sy] = [centre.source[0], centre.source[1]];
    expect(m0 * sx + m2 * sy + m4).toBeCloseTo(cx + (f * yaw * Math.PI) / 180, 6);
    expect(m1 * sx + m3 * sy + m5).toBeCloseTo(cy, 6);
  });

  it('carries b\'s picture by affine pieces that stay within a pixel of the exact map', () => {
    const yaw = 0.6 * fovDeg;
    const h = turned(yaw);
    const v = placedView(a, b, h, f)!;
    expect(v.piecesB.length).toBe(2 * 8 * 8);
    // The exact map of a point of b: its ray in a's camera (R^T K^-1 p), as yaw and pitch times f.
    const t = (yaw * Math.PI) / 180, c = Math.cos(t), s = Math.sin(t);
    const exact = (x: number, y: number): [number, number] => {
      const rx = (x - cx) / f, ry = (y - cy) / f, rz = 1;
      const dx = c * rx + s * rz, dy = ry, dz = -s * rx + c * rz;
      return [cx + f * Math.atan2(dx, dz), cy + f * Math.atan2(dy, Math.hypot(dx, dz))];
    };
    let worst = 0;
    for (const p of v.piecesB) {
      const gx = (p.source[0] + p.source[2] + p.source[4]) / 3, gy = (p.source[1] + p.source[3] + p.source[5]) / 3;
      const [m0, m1, m2, m3, m4, m5] = p.matrix;
      const [ex, ey] = exact(gx, gy);
      worst = Math.max(worst, Math.hypot(m0 * gx + m2 * gy + m4 - ex, m1 * gx + m3 * gy + m5 - ey));
    }
    // In view units (a's px); the detail shows a at about a quarter of that, so under a screen pixel.
    expect(worst).toBeLessThan(4);
  });

  it('solves the affine map of three points exactly', () => {
    const m = affineOf([0, 0, 10, 0, 0, 10], [5, 7, 25, 9, 3, 27])!;
    expect(m).toEqual([2, 0.2, -0.2, 2, 5, 7].map((x) => expect.closeTo(x, 12)));
    expect(affineOf([0, 0, 1, 1, 2, 2], [0, 0, 1, 1, 2, 2])).toBeNull();
  });
});
