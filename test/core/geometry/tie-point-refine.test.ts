// Refining tie points by appearance (zero-mean normalised cross-correlation): on a real photograph
// warped by a known homography with OpenCV's warpPerspective (an outside implementation of the
// warp), the refined points must land where the known homography puts them, starting from a guess
// that is more than a pixel off.
import { beforeAll, describe, expect, it } from 'vitest';
import { detectAndDescribe } from '../../../src/core/features/features.js';
import { project } from '../../../src/core/geometry/homography.js';
import type { GrayImage } from '../../../src/core/image/image.js';
import { refineTiePoints } from '../../../src/core/geometry/tie-point-refine.js';
import { externalFixture, loadGray } from '../../helpers/images.js';
import { loadOpenCV } from '../../helpers/opencv.js';

const truth = [0.995, -0.04, 14.3, 0.035, 1.002, -9.6, 1.2e-5, -0.8e-5, 1];
// The guess: the truth moved by (1.3, -0.9) px, about what a model from coarse keypoints is off by.
const guess = truth.map((v, i) => v + (i === 2 ? 1.3 * truth[8] : i === 5 ? -0.9 * truth[8] : 0));

let a: GrayImage;
let b: GrayImage;
beforeAll(async () => {
  a = await loadGray(externalFixture('leuvenA.jpg'));
  const { cv } = await loadOpenCV();
  const src = cv.matFromArray(a.height, a.width, cv.CV_8UC1, Array.from(a.data));
  const dst = new cv.Mat();
  const m = cv.matFromArray(3, 3, cv.CV_64FC1, truth);
  cv.warpPerspective(src, dst, m, new cv.Size(a.width, a.height), cv.INTER_LINEAR, cv.BORDER_CONSTANT, new cv.Scalar(0));
  b = { width: a.width, height: a.height, data: Uint8Array.from(dst.data) };
  src.delete();
  dst.delete();
  m.delete();
});

describe('refining tie points on a known warp (leuvenA, warped by OpenCV)', () => {
  it('brings corners from a guess 1.6 px off to within a tenth of a pixel of the truth', () => {
    const k = detectAndDescribe(a, { maxKeypoints: 300 }).keypoints;
    const ax = Float64Array.from({ length: k.count }, (_, i) => k.x[i]);
    const ay = Float64Array.from({ length: k.count }, (_, i) => k.y[i]);
    const r = refineTiePoints(a, b, guess, ax, ay);
    const errors: number[] = [];
    for (let i = 0; i < k.count; i++) {
      if (r.score[i] <= 0) continue;
      const [tx, ty] = project(truth, ax[i], ay[i]);
      errors.push(Math.hypot(r.bx[i] - tx, r.by[i] - ty));
    }
    errors.sort((p, q) => p - q);
    const median = errors[errors.length >> 1];
    console.log(`refined ${errors.length} of ${k.count} points; median error ${median.toFixed(3)} px, 90th percentile ${errors[Math.floor(0.9 * errors.length)].toFixed(3)} px`);
    expect(errors.length).toBeGreaterThan(0.6 * k.count);
    expect(median).toBeLessThan(0.1);
    expect(errors[Math.floor(0.9 * errors.length)]).toBeLessThan(0.3);
  });

  it('gives up on points whose search window leaves the frame', () => {
    const r = refineTiePoints(a, b, truth, Float64Array.of(3, a.width / 2), Float64Array.of(a.height / 2, 2));
    expect(Array.from(r.score)).toEqual([-1, -1]);
  });
});
