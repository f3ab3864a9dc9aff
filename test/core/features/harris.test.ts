// Harris corners: against OpenCV's cornerHarris on a real photograph, and the method's known
// invariances as property tests (Harris & Stephens 1988; the covariance with translation and
// rotation, invariance to an intensity shift and lack of scale covariance are standard results of
// the method: common practice).
import { beforeAll, describe, expect, it } from 'vitest';
import { defaultCandidateParams, findCandidates } from '../../../src/core/features/corners.js';
import type { FeatureParams } from '../../../src/core/features/features.js';
import { detectAndDescribe } from '../../../src/core/features/features.js';
import { harrisResponse } from '../../../src/core/features/harris.js';
import type { GrayImage } from '../../../src/core/image/image.js';
import { toFloatImage } from '../../../src/core/image/image.js';
import type { Keypoints } from '../../../src/core/features/keypoints.js';
import { createScratchPool } from '../../../src/core/image/scratch.js';
import { externalFixture, loadGray } from '../../helpers/images.js';
import { loadOpenCV } from '../../helpers/opencv.js';

let photo: GrayImage;
beforeAll(async () => {
  photo = await loadGray(externalFixture('leuvenA.jpg'));
});

function ourResponse(img: GrayImage): Float32Array {
  const out = new Float32Array(img.width * img.height);
  harrisResponse(toFloatImage(img), out, createScratchPool(), { k: 0.04, windowRadius: 2 });
  return out;
}

describe('Harris response against OpenCV cornerHarris (OpenCV.js 4.5.2, blockSize 5, ksize 3, k 0.04)', () => {
  it('puts the strongest corners where OpenCV does, with a proportional response', async () => {
    const { cv } = await loadOpenCV();
    const src = cv.matFromArray(photo.height, photo.width, cv.CV_32FC1, Array.from(photo.data));
    const dst = new cv.Mat();
    cv.cornerHarris(src, dst, 5, 3, 0.04, cv.BORDER_DEFAULT);
    const theirs = new Float32Array(dst.data32F);
    src.delete();
    dst.delete();
    const ours = ourResponse(photo);
    const margin = 10;
    const strongest = (r: Float32Array, n: number): { x: Float32Array; y: Float32Array; count: number } => {
      const c = findCandidates(r, photo.width, photo.height, { ...defaultCandidateParams, margin }, createScratchPool(), n);
      return c;
    };
    const cvTop = strongest(theirs, 200);
    const ourTop = strongest(ours, 300);
    expect(cvTop.count).toBe(200);
    let agreed = 0;
    for (let i = 0; i < cvTop.count; i++) {
      for (let j = 0; j < ourTop.count; j++) {
        if (Math.hypot(cvTop.x[i] - ourTop.x[j], cvTop.y[i] - ourTop.y[j]) <= 1) {
          agreed++;
          break;
        }
      }
    }
    expect(agreed / cvTop.count).toBeGreaterThanOrEqual(0.95);
    // Same formula, same derivative and window: the maps differ by one scale factor (OpenCV
    // normalises the derivatives) away from the borders.
    let sxy = 0, sxx = 0, syy = 0;
    for (let y = margin; y < photo.height - margin; y++)
      for (let x = margin; x < photo.width - margin; x++) {
        const o = y * photo.width + x;
        sxy += ours[o] * theirs[o];
        sxx += ours[o] * ours[o];
        syy += theirs[o] * theirs[o];
      }
    expect(sxy / Math.sqrt(sxx * syy)).toBeGreaterThan(0.999);
  });
});

/** Nearest keypoint of `ks` to (x, y), as a distance. */
function nearest(ks: Keypoints, x: number, y: number): number {
  let best = Infinity;
  for (let i = 0; i < ks.count; i++) best = Math.min(best, Math.hypot(ks.x[i] - x, ks.y[i] - y));
  return best;
}

/** Fraction of `moved` keypoints (inside `inside`) that have a keypoint of `orig` where `map` puts them. */
function repeatability(orig: Keypoints, moved: Keypoints, map: (x: number, y: number) => [number, number], inside: (x: number, y: number) => boolean, tol: number): number {
  let n = 0, hit = 0;
  for (let i = 0; i < moved.count; i++) {
    if (!inside(moved.x[i], moved.y[i])) continue;
    n++;
    const [x, y] = map(moved.x[i], moved.y[i]);
    if (nearest(orig, x, y) <= tol) hit++;
  }
  expect(n).toBeGreaterThan(100);
  return hit / n;
}

// One pyramid level, so the detector itself is tested, not the resampling between levels.
// Keypoint budget above the candidate count, so adaptive suppression (which looks at the whole frame)
// keeps every candidate.
const singleLevel = { pyramidLevels: 1, maxKeypoints: 100_000 };

describe('Harris keypoints: invariances of the method as property tests', () => {
  /** Share of the keypoints of the photo cropped by (dx, dy) found again at the shifted place. */
  function shiftRepeatability(dx: number, dy: number, params: Partial<FeatureParams>, margin: number): number {
    const w = photo.width - dx, h = photo.height - dy;
    const shifted = new Uint8Array(w * h);
    for (let y = 0; y < h; y++) for (let x = 0; x < w; x++) shifted[y * w + x] = photo.data[(y + dy) * photo.width + x + dx];
    const orig = detectAndDescribe(photo, params).keypoints;
    const moved = detectAndDescribe({ width: w, height: h, data: shifted }, params).keypoints;
    const inside = (x: number, y: number): boolean => x > margin && y > margin && x < w - margin && y < h - margin;
    return repeatability(orig, moved, (x, y) => [x + dx, y + dy], inside, 0.01);
  }

  it('move with a translation of the image', () => {
    expect(shiftRepeatability(37, 21, singleLevel, 60)).toBeGreaterThan(0.95);
  });

  it('found on the halved image, are reported in the image\'s own pixels', () => {
    // An even shift is a whole pixel of the halved image, so corners found there move with it.
    expect(shiftRepeatability(38, 22, { ...singleLevel, halvings: 1 }, 90)).toBeGreaterThan(0.95);
  });

  it('found on the halved image, are centred where they are at full size (no half-pixel offset)', () => {
    // Bright 24 px squares on grey: by symmetry the mean of each square's four corners is its
    // centre, at any scale, so an offset in the mapping back to full size shows directly.
    const W = 480, H = 360;
    const data = new Uint8Array(W * H).fill(60);
    const centres: [number, number][] = [];
    for (let cy = 70; cy < H - 60; cy += 110)
      for (let cx = 70; cx < W - 60; cx += 110) {
        centres.push([cx, cy]);
        for (let y = cy - 12; y < cy + 12; y++) for (let x = cx - 12; x < cx + 12; x++) data[y * W + x] = 200;
      }
    for (const halvings of [0, 1]) {
      const k = detectAndDescribe({ width: W, height: H, data }, { ...singleLevel, halvings }).keypoints;
      for (const [cx, cy] of centres) {
        // Pixel centres: the square covers cx - 12 .. cx + 11, so its centre is at cx - 0.5.
        let sx = 0, sy = 0, n = 0;
        for (let i = 0; i < k.count; i++)
          if (Math.abs(k.x[i] - cx) < 20 && Math.abs(k.y[i] - cy) < 20) {
            sx += k.x[i];
            sy += k.y[i];
            n++;
          }
        expect(n, `corners of the square at ${cx},${cy}, ${halvings} halvings`).toBe(4);
        expect(Math.abs(sx / n - (cx - 0.5)), `halvings ${halvings}`).toBeLessThan(0.05);
        expect(Math.abs(sy / n - (cy - 0.5)), `halvings ${halvings}`).toBeLessThan(0.05);
      }
    }
  });

  it('move with a 90-degree rotation of the image', () => {
    const { width: W, height: H } = photo;
    // Rotated a quarter turn clockwise: rotated (x', y') shows original (y', H - 1 - x').
    const rot = new Uint8Array(W * H);
    for (let y = 0; y < W; y++) for (let x = 0; x < H; x++) rot[y * H + x] = photo.data[(H - 1 - x) * W + y];
    const orig = detectAndDescribe(photo, singleLevel).keypoints;
    const turned = detectAndDescribe({ width: H, height: W, data: rot }, singleLevel).keypoints;
    const inside = (x: number, y: number): boolean => x > 60 && y > 60 && x < H - 60 && y < W - 60;
    expect(repeatability(orig, turned, (x, y) => [y, H - 1 - x], inside, 0.01)).toBeGreaterThan(0.95);
  });

  it('do not change, nor do their descriptors, under an additive intensity shift', () => {
    const dim = photo.data.map((v) => Math.round((v * 200) / 255));
    const lifted = dim.map((v) => v + 40);
    // On one level the arithmetic is exact: identical keypoints and descriptors.
    const f1 = detectAndDescribe({ ...photo, data: dim }, { pyramidLevels: 1 });
    const f2 = detectAndDescribe({ ...photo, data: lifted }, { pyramidLevels: 1 });
    expect(f1.keypoints.count).toBeGreaterThan(500);
    expect(f2.keypoints.count).toBe(f1.keypoints.count);
    expect(Array.from(f2.keypoints.x)).toEqual(Array.from(f1.keypoints.x));
    expect(Array.from(f2.keypoints.y)).toEqual(Array.from(f1.keypoints.y));
    expect(Array.from(f2.descriptors)).toEqual(Array.from(f1.descriptors));
    // On the pyramid, resampled levels round differently in float32: the same up to rounding.
    const p1 = detectAndDescribe({ ...photo, data: dim });
    const p2 = detectAndDescribe({ ...photo, data: lifted });
    let same = 0;
    for (let i = 0; i < p1.keypoints.count; i++) if (nearest(p2.keypoints, p1.keypoints.x[i], p1.keypoints.y[i]) < 0.01) same++;
    expect(same / p1.keypoints.count).toBeGreaterThan(0.98);
  });

  it('are not covariant with scale: halving the image finds other corners', () => {
    const { width: W, height: H } = photo;
    const w = W >> 1, h = H >> 1;
    const half = new Uint8Array(w * h);
    for (let y = 0; y < h; y++)
      for (let x = 0; x < w; x++) {
        const o = 2 * y * W + 2 * x;
        half[y * w + x] = Math.round((photo.data[o] + photo.data[o + 1] + photo.data[o + W] + photo.data[o + W + 1]) / 4);
      }
    const orig = detectAndDescribe(photo, singleLevel).keypoints;
    const small = detectAndDescribe({ width: w, height: h, data: half }, singleLevel).keypoints;
    const inside = (x: number, y: number): boolean => x > 30 && y > 30 && x < w - 30 && y < h - 30;
    // Within 1.5 px of the full-size image (0.75 px at half size), far fewer corners repeat than
    // under a translation, which is why the detector runs on a pyramid.
    const rep = repeatability(orig, small, (x, y) => [2 * x + 0.5, 2 * y + 0.5], inside, 1.5);
    expect(rep).toBeLessThan(0.6);
  });
});
