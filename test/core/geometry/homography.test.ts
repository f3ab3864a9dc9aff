// Robust homography estimation: exact recovery by the normalised DLT (Hartley 1997), RANSAC
// against OpenCV's findHomography (OpenCV.js 4.5.2) on the same noisy data with outliers, the
// iteration count of Fischler & Bolles (1981), and the rejection of degenerate data.
import { describe, expect, it } from 'vitest';
import type { Correspondences } from '../../../src/core/geometry/homography.js';
import { fitHomographyDLT, fitHomographyMinimal, invert, multiply, normalise, project } from '../../../src/core/geometry/homography.js';
import { fitHomography, isPlausible, isSampleUsable } from '../../../src/core/geometry/homography-estimator.js';
import { createRandom } from '../../../src/core/numeric/random.js';
import { requiredIterations } from '../../../src/core/geometry/ransac.js';
import { meanCornerError } from '../../helpers/images.js';
import { loadOpenCV } from '../../helpers/opencv.js';

const W = 1200, H = 800;

/** A rotating-camera homography K R K^-1 (Hartley & Zisserman; Szeliski 2006) with focal f px. */
function rotationHomography(yawDeg: number, pitchDeg: number, rollDeg: number, f: number): Float64Array {
  const r = (d: number): number => (d * Math.PI) / 180;
  const [cy, sy, cp, sp, cr, sr] = [Math.cos(r(yawDeg)), Math.sin(r(yawDeg)), Math.cos(r(pitchDeg)), Math.sin(r(pitchDeg)), Math.cos(r(rollDeg)), Math.sin(r(rollDeg))];
  const ry = Float64Array.of(cy, 0, sy, 0, 1, 0, -sy, 0, cy);
  const rx = Float64Array.of(1, 0, 0, 0, cp, -sp, 0, sp, cp);
  const rz = Float64Array.of(cr, -sr, 0, sr, cr, 0, 0, 0, 1);
  const k = Float64Array.of(f, 0, (W - 1) / 2, 0, f, (H - 1) / 2, 0, 0, 1);
  return normalise(multiply(multiply(k, multiply(rz, multiply(rx, ry))), invert(k)!));
}

function correspondences(h: Float64Array, n: number, noise: number, outlierFraction: number, seed: number): Correspondences & { outlier: Uint8Array } {
  const rnd = createRandom(seed);
  const c = { count: 0, ax: new Float64Array(n), ay: new Float64Array(n), bx: new Float64Array(n), by: new Float64Array(n), outlier: new Uint8Array(n) };
  while (c.count < n) {
    const x = rnd.next() * (W - 1), y = rnd.next() * (H - 1);
    const [u, v] = project(h, x, y);
    if (!(u >= 0 && v >= 0 && u < W && v < H)) continue;
    const i = c.count++;
    c.ax[i] = x;
    c.ay[i] = y;
    if (rnd.next() < outlierFraction) {
      c.bx[i] = rnd.next() * (W - 1);
      c.by[i] = rnd.next() * (H - 1);
      c.outlier[i] = 1;
    } else {
      c.bx[i] = u + noise * rnd.normal();
      c.by[i] = v + noise * rnd.normal();
    }
  }
  return c;
}

describe('normalised DLT (Hartley 1997; Hartley & Zisserman alg. 4.2)', () => {
  it('recovers a homography exactly from noise-free correspondences, minimal or overdetermined', () => {
    const h = rotationHomography(25, -5, 8, 1000);
    const c = correspondences(h, 50, 0, 0, 3);
    const dlt = fitHomographyDLT(c, null, c.count)!;
    expect(meanCornerError(dlt, h, W, H)).toBeLessThan(1e-6);
    const min = fitHomographyMinimal(c, [0, 1, 2, 3])!;
    expect(meanCornerError(min, h, W, H)).toBeLessThan(1e-6);
  });
});

describe('RANSAC iteration count (Fischler & Bolles 1981; Hartley & Zisserman eq. 4.18)', () => {
  it('follows N = log(1 - p) / log(1 - w^s)', () => {
    // Hartley & Zisserman, table 4.3 (p = 0.99): s = 4, 50 % outliers -> 72 samples.
    expect(requiredIterations(0.99, 0.5, 4, 10_000)).toBe(72);
    // s = 4, 30 % outliers -> 17 samples.
    expect(requiredIterations(0.99, 0.7, 4, 10_000)).toBe(17);
    expect(requiredIterations(0.99, 0.01, 4, 500)).toBe(500);
    expect(requiredIterations(0.99, 1, 4, 500)).toBe(0);
  });
});

describe('robust homography against OpenCV findHomography (RANSAC, threshold 3 px)', () => {
  it('is as accurate as OpenCV on the same noisy correspondences with 40 % outliers', async () => {
    const { cv } = await loadOpenCV();
    let ours = 0, theirs = 0;
    const cases = 10;
    for (let k = 0; k < cases; k++) {
      const h = rotationHomography(-30 + 6 * k, 4 - k, -10 + 2 * k, 900 + 40 * k);
      const c = correspondences(h, 300, 0.7, 0.4, 100 + k);
      const fit = fitHomography(c, { ransac: { threshold: 3 } });
      expect(fit).not.toBeNull();
      const e = meanCornerError(fit!.homography, h, W, H);
      const src = cv.matFromArray(c.count, 1, cv.CV_32FC2, Array.from({ length: 2 * c.count }, (_, i) => (i % 2 ? c.ay : c.ax)[i >> 1]));
      const dst = cv.matFromArray(c.count, 1, cv.CV_32FC2, Array.from({ length: 2 * c.count }, (_, i) => (i % 2 ? c.by : c.bx)[i >> 1]));
      const mask = new cv.Mat();
      const hm = cv.findHomography(src, dst, cv.RANSAC, 3, mask);
      const ref = Float64Array.from(hm.data64F);
      [src, dst, mask, hm].forEach((m) => m.delete());
      const eRef = meanCornerError(ref, h, W, H);
      ours += e;
      theirs += eRef;
      // Per case, no worse than OpenCV beyond a little noise (corners far outside b extrapolate).
      expect(e).toBeLessThan(1.5 * eRef + 0.3);
      // Inliers found are the true inliers, nearly all of them.
      let trueInliers = 0, kept = 0, wrong = 0;
      for (let i = 0; i < c.count; i++) {
        if (!c.outlier[i]) trueInliers++;
        if (fit!.inliers[i]) {
          kept++;
          if (c.outlier[i]) wrong++;
        }
      }
      expect(kept).toBeGreaterThan(0.95 * trueInliers);
      expect(wrong).toBeLessThanOrEqual(3);
    }
    expect(ours / cases).toBeLessThan(1);
    expect(ours / cases).toBeLessThanOrEqual((theirs / cases) * 1.1 + 0.05);
  });

  it('repeats exactly for a seed', () => {
    const h = rotationHomography(20, 0, 3, 1000);
    const c = correspondences(h, 200, 1, 0.5, 7);
    const a = fitHomography(c, { ransac: { seed: 42 } })!;
    const b = fitHomography(c, { ransac: { seed: 42 } })!;
    expect(Array.from(a.homography)).toEqual(Array.from(b.homography));
    expect(a.iterations).toBe(b.iterations);
  });
});

describe('degenerate and implausible data give no model', () => {
  it('rejects samples with three collinear points or a mirrored triangle', () => {
    const line = { count: 4, ax: Float64Array.of(0, 10, 20, 5), ay: Float64Array.of(0, 10, 20, 40), bx: Float64Array.of(0, 10, 20, 5), by: Float64Array.of(0, 10, 20, 40) };
    expect(isSampleUsable(line, [0, 1, 2, 3])).toBe(false);
    const mirror = { count: 4, ax: Float64Array.of(0, 100, 100, 0), ay: Float64Array.of(0, 0, 100, 100), bx: Float64Array.of(100, 0, 0, 100), by: Float64Array.of(0, 0, 100, 100) };
    expect(isSampleUsable(mirror, [0, 1, 2, 3])).toBe(false);
    const good = { ...mirror, bx: Float64Array.of(5, 105, 105, 5) };
    expect(isSampleUsable(good, [0, 1, 2, 3])).toBe(true);
  });

  it('rejects mirror images and extreme scale', () => {
    expect(isPlausible(Float64Array.of(-1, 0, 1000, 0, 1, 0, 0, 0, 1), 500, 400)).toBe(false);
    expect(isPlausible(Float64Array.of(8, 0, 0, 0, 8, 0, 0, 0, 1), 500, 400)).toBe(false);
    expect(isPlausible(Float64Array.of(1.2, 0.1, 30, -0.1, 1.2, 5, 0, 0, 1), 500, 400)).toBe(true);
  });

  it('finds no model in pure noise', () => {
    const rnd = createRandom(5);
    const n = 150;
    const c = { count: n, ax: new Float64Array(n), ay: new Float64Array(n), bx: new Float64Array(n), by: new Float64Array(n) };
    for (let i = 0; i < n; i++) {
      c.ax[i] = rnd.next() * W;
      c.ay[i] = rnd.next() * H;
      c.bx[i] = rnd.next() * W;
      c.by[i] = rnd.next() * H;
    }
    const fit = fitHomography(c, { ransac: { threshold: 3 } });
    // Chance consensus in 150 random pairs is a handful of points at most.
    expect(fit === null || fit.inlierCount < 12).toBe(true);
  });
});
