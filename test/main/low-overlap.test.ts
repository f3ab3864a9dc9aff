// Narrow overlaps between neighbours, and guided matching where the turn between two frames is
// known. Pairs are rendered from real photographs (leuvenA.jpg, graf1.png; test/fixtures/external/
// SOURCES.md) as two views of a camera turning about its centre, so the true homography is exact by
// construction: H = K R_b R_a^T K^-1 (Hartley & Zisserman, sec. 8.4.2). Seeded sensor noise,
// vignetting and a JPEG q80 round trip through sharp are applied to each view.
import { beforeAll, describe, expect, it } from 'vitest';
import { cvDetect, cvFree, cvHomography, cvMatch } from '../../bench/opencv-pipeline.js';
import { detectAndDescribe } from '../../src/core/features/features.js';
import { estimateGuidedPairGeometry, guidedMatches, predictedRegions, predictPairHomography } from '../../src/core/pair/guided-match.js';
import { project } from '../../src/core/geometry/homography.js';
import type { GrayImage } from '../../src/core/image/image.js';
import { imageFingerprint } from '../../src/core/image/image.js';
import { overlapRegions } from '../../src/core/geometry/overlap.js';
import { insideConvex } from '../../src/core/numeric/polygon.js';
import { createRandom } from '../../src/core/numeric/random.js';
import type { Analysis, PairMeasure } from '../../src/core/sequence/report.js';
import { defaultBudget } from '../../src/core/sequence/report.js';
import type { RotationLink } from '../../src/core/geometry/rotations.js';
import { sharpness } from '../../src/core/pair/sharpness.js';
import { judge } from '../../src/core/sequence/verdicts.js';
import type { FrameAnalysis } from '../../src/core/pair/pair-analysis.js';
import { checkFeatureParams } from '../../src/core/pair/pair-analysis.js';
import { analysePair } from '../../src/main/frame-analysis.js';
import { externalFixture, loadGray } from '../helpers/images.js';
import type { OpenCV } from '../helpers/opencv.js';
import { loadOpenCV } from '../helpers/opencv.js';
import type { ViewCamera } from '../helpers/rotating-views.js';
import { cameraView, exactHomography, rotationOf, yawForOverlap } from '../helpers/rotating-views.js';

// 1200 x 800 views with a 45-degree lens: an 8 % overlap is a strip of about 96 px, narrower than
// the same overlap at the check's default analysis size of 1500 px.
const cam: ViewCamera = { width: 1200, height: 800, focal: 600 / Math.tan((22.5 * Math.PI) / 180) };
const degradation = { vignetting: 0.35, noise: 4, jpegQuality: 80 };

/** Largest distance between where h and the truth put the corners and centre of the true overlap, px of b. */
function overlapError(h: ArrayLike<number>, truth: ArrayLike<number>): number {
  const poly = overlapRegions(truth, cam.width, cam.height, cam.width, cam.height).inA;
  const pts: [number, number][] = [];
  let cx = 0, cy = 0;
  for (let k = 0; k < poly.length; k += 2) {
    pts.push([poly[k], poly[k + 1]]);
    cx += (2 * poly[k]) / poly.length;
    cy += (2 * poly[k + 1]) / poly.length;
  }
  pts.push([cx, cy]);
  let worst = 0;
  for (const [x, y] of pts) {
    const [u, v] = project(h, x, y);
    const [tu, tv] = project(truth, x, y);
    worst = Math.max(worst, Math.hypot(u - tu, v - tv));
  }
  return worst;
}

const frameOf = (image: GrayImage): FrameAnalysis => ({
  fullWidth: image.width, fullHeight: image.height, features: detectAndDescribe(image, checkFeatureParams), image, sharpness: sharpness(image), fingerprint: imageFingerprint(image),
});

interface RenderedPair {
  readonly name: string;
  readonly overlap: number;
  readonly stepDeg: number;
  readonly a: GrayImage;
  readonly b: GrayImage;
  readonly truth: Float64Array;
}

const sources = ['leuvenA.jpg', 'graf1.png'];
const overlaps = [0.08, 0.12];
const pairs = new Map<string, RenderedPair>();
const key = (name: string, overlap: number): string => `${name} ${overlap}`;

beforeAll(async () => {
  let seed = 20261203;
  for (const name of sources) {
    const src = await loadGray(externalFixture(name));
    for (const overlap of overlaps) {
      const stepDeg = yawForOverlap(cam, overlap);
      // The photograph as the image plane of a source camera wide enough to hold both views.
      const reach = stepDeg / 2 + 22.5 + 2;
      const sourceFocal = src.width / 2 / Math.tan((reach * Math.PI) / 180);
      const ra = rotationOf(-stepDeg / 2), rb = rotationOf(stepDeg / 2);
      const rnd = createRandom(seed++);
      const a = await cameraView(src, sourceFocal, cam, ra, rnd, degradation);
      const b = await cameraView(src, sourceFocal, cam, rb, rnd, degradation);
      pairs.set(key(name, overlap), { name, overlap, stepDeg, a, b, truth: exactHomography(cam, ra, rb) });
    }
  }
});

describe('neighbour pairs of 8 and 12 % overlap, noisy, vignetted, JPEG q80 (exact homography by construction)', () => {
  let cv: OpenCV;
  beforeAll(async () => {
    ({ cv } = await loadOpenCV());
  });

  const cases = sources.flatMap((name) => overlaps.map((overlap) => ({ name, overlap })));
  it.each(cases)('registers $name at $overlap overlap within 3 px over the overlap, beside OpenCV.js ORB', ({ name, overlap }) => {
    const p = pairs.get(key(name, overlap))!;
    // The pair analysis the check runs (its own features, then its retries).
    const r = analysePair(frameOf(p.a), frameOf(p.b), { retryAtFullSize: true, overlapBlocks: false });
    // Reference: OpenCV.js 4.5.2 (test/helpers/opencv.ts), ORB with 2000 features, brute-force
    // Hamming with Lowe's ratio test 0.8, findHomography RANSAC 3 px (bench/opencv-pipeline.ts).
    const fa = cvDetect(cv, p.a), fb = cvDetect(cv, p.b);
    const ref = cvHomography(cv, cvMatch(cv, fa, fb));
    cvFree(fa);
    cvFree(fb);
    const refError = ref.h ? overlapError(ref.h, p.truth) : null;
    const ours = r.homography ? overlapError(r.homography, p.truth) : null;
    console.log(`${name} ${overlap * 100} %: ours ${ours === null ? `no model (${r.noModel})` : `${ours.toFixed(2)} px, ${r.inliers} inliers`}; OpenCV.js ORB ${refError === null ? 'no model' : `${refError.toFixed(2)} px, ${ref.inliers} inliers`}`);
    expect(r.homography, `no model: ${r.noModel}`).not.toBeNull();
    expect(ours!).toBeLessThan(3);
    expect(Math.abs(r.overlap! - overlap)).toBeLessThan(0.01);
    // Where the reference registers the pair too, the two agree within the tolerance.
    if (refError !== null && refError < 3) expect(overlapError(r.homography!, ref.h!)).toBeLessThan(5);
  });

  it('finds no model between two unrelated photographs, plain or guided', () => {
    const a = pairs.get(key('leuvenA.jpg', 0.08))!.a, b = pairs.get(key('graf1.png', 0.08))!.b;
    const plain = analysePair(frameOf(a), frameOf(b), { retryAtFullSize: true, overlapBlocks: false });
    expect(plain.homography).toBeNull();
    expect(plain.noModel).not.toBeNull();
    // Told where an overlap of 8 % would be, it still finds none.
    const guided = analysePair(frameOf(a), frameOf(b), { retryAtFullSize: false, overlapBlocks: false, predicted: Array.from(pairs.get(key('graf1.png', 0.08))!.truth) });
    expect(guided.homography).toBeNull();
  });
});

describe('guided matching', () => {
  /** Features where the prediction puts the overlap, at full size, as the check's guided retry detects them. */
  const guidedFeatures = (img: GrayImage, region: number[]): ReturnType<typeof detectAndDescribe> =>
    detectAndDescribe(img, { ...checkFeatureParams, halvings: 0, maxKeypoints: 3000, region });

  it('registers an 8 % pair from a prediction a few degrees off (yaw 3, pitch 1.5, roll 0.5)', () => {
    for (const name of sources) {
      const p = pairs.get(key(name, 0.08))!;
      const predicted = exactHomography(cam, rotationOf(-p.stepDeg / 2), rotationOf(p.stepDeg / 2 + 3, 1.5, 0.5));
      expect(overlapError(predicted, p.truth)).toBeGreaterThan(50);
      const regions = predictedRegions(predicted, cam, cam, 0.1 * cam.width);
      const fa = guidedFeatures(p.a, regions.inA), fb = guidedFeatures(p.b, regions.inB);
      const g = estimateGuidedPairGeometry(fa, fb, predicted);
      expect(g.homography, `${name}: no model (${g.noModel})`).not.toBeNull();
      expect(overlapError(g.homography!, p.truth)).toBeLessThan(3);
      // The common shift found brings the prediction onto the truth in the overlap (about 3 degrees of yaw at f = 1449 px is 76 px).
      const { shift } = guidedMatches(fa, fb, predicted);
      const mid = overlapRegions(p.truth, cam.width, cam.height, cam.width, cam.height).inA;
      const [x, y] = [mid[0], (mid[1] + mid[mid.length - 1]) / 2];
      const [u, v] = project(predicted, x, y), [tu, tv] = project(p.truth, x, y);
      expect(Math.hypot(u + shift[0] - tu, v + shift[1] - tv)).toBeLessThan(15);
    }
  });

  it('gives no model rather than a wrong one when the prediction is far off (25 degrees)', () => {
    for (const name of sources) {
      const p = pairs.get(key(name, 0.08))!;
      const predicted = exactHomography(cam, rotationOf(-p.stepDeg / 2), rotationOf(p.stepDeg / 2 - 25));
      const regions = predictedRegions(predicted, cam, cam, 0.1 * cam.width);
      const g = estimateGuidedPairGeometry(guidedFeatures(p.a, regions.inA), guidedFeatures(p.b, regions.inB), predicted);
      if (g.homography) expect(overlapError(g.homography, p.truth)).toBeLessThan(3);
    }
  });

  it('rejects a prediction that is not a homography', () => {
    const f = detectAndDescribe(pairs.get(key('leuvenA.jpg', 0.08))!.a, checkFeatureParams);
    expect(() => guidedMatches(f, f, [1, 0, 0, 0, 1, 0])).toThrow('Expected 9 finite numbers for predicted but received 6 values');
  });
});

describe('detection restricted to a part of the frame', () => {
  it('keeps the border band or the region and gives them the whole keypoint budget', () => {
    const img = pairs.get(key('graf1.png', 0.12))!.a;
    const band = detectAndDescribe(img, { ...checkFeatureParams, halvings: 0, borderBand: 0.15, maxKeypoints: 800 });
    const region = [100, 100, 500, 120, 480, 600, 90, 560];
    const inside = detectAndDescribe(img, { ...checkFeatureParams, halvings: 0, region, maxKeypoints: 800 });
    for (const f of [band, inside]) expect(f.keypoints.count).toBe(800);
    for (let i = 0; i < band.keypoints.count; i++) {
      const x = band.keypoints.x[i], y = band.keypoints.y[i];
      const inBand = x < 0.15 * img.width + 1 || x > 0.85 * img.width - 2 || y < 0.15 * img.height + 1 || y > 0.85 * img.height - 2;
      expect(inBand, `${x}, ${y}`).toBe(true);
    }
    for (let i = 0; i < inside.keypoints.count; i++) expect(insideConvex(region, inside.keypoints.x[i], inside.keypoints.y[i])).toBe(true);
  });
});

describe('the homography predicted from the turn', () => {
  const size = { width: 1200, height: 800 };
  const f = 1000;
  const fcam: ViewCamera = { ...size, focal: f };
  const rotations = Array.from({ length: 8 }, (_, k) => rotationOf(45 * k, 2 * Math.sin(k), Math.cos(k)));
  /** A link with tie points spread over the true overlap, exact under the true homography. */
  const link = (i: number, j: number): RotationLink => {
    const h = exactHomography(fcam, rotations[i], rotations[j]);
    const points: number[] = [];
    for (let y = 20; y < size.height; y += 60)
      for (let x = 20; x < size.width; x += 60) {
        const [u, v, w] = project(h, x, y);
        if (w > 0 && u >= 0 && v >= 0 && u < size.width && v < size.height) points.push(x, y, u, v);
      }
    return { i, j, homography: h, points };
  };
  const sizes = rotations.map(() => size);

  it('equals K R_j R_i^T K^-1 across a pair left out, reached the other way round a full turn', () => {
    const links = [0, 1, 2, 4, 5, 6].map((k) => link(k, k + 1)).concat([link(7, 0)]);
    const h = predictPairHomography(links, f, sizes, 3, 4)!;
    expect(h).not.toBeNull();
    const truth = exactHomography(fcam, rotations[3], rotations[4]);
    for (const [x, y] of [[0, 0], [1199, 0], [1199, 799], [0, 799], [600, 400]]) {
      const [u, v] = project(h, x, y), [tu, tv] = project(truth, x, y);
      expect(Math.hypot(u - tu, v - tv)).toBeLessThan(0.05);
    }
  });

  it('is null when no chain of matched pairs joins the two stations, and checks its arguments', () => {
    const links = [0, 1, 2, 4, 5, 6].map((k) => link(k, k + 1));
    expect(predictPairHomography(links, f, sizes, 3, 4)).toBeNull();
    expect(() => predictPairHomography(links, 0, sizes, 3, 4)).toThrow('Expected a positive focal length for focalPx but received 0');
    expect(() => predictPairHomography(links, f, sizes, 3, 8)).toThrow('Expected a station index below 8 for j but received 8');
  });
});

describe('advice for a pair without a model', () => {
  const pair = (extra: Partial<PairMeasure>): PairMeasure => ({
    a: 'A.JPG', b: 'B.JPG', kind: 'neighbour', matches: 40, inliers: 0, matchesInOverlap: 0, overlap: null, homography: null, evDiff: null, rmsError: null, shiftPx: null, ...extra,
  });
  const judged = (p: PairMeasure): string[] => {
    const analysis: Analysis = { folder: '/x', frames: [], stations: [], pairs: [p], skipped: [], sweepDeg: null, geometry: null };
    return [...judge(analysis, defaultBudget).pairs[0].advice];
  };

  it('gives the overlap predicted from the turn instead of none', () => {
    const advice = judged(pair({ predictedOverlap: 0.081 }));
    expect(advice).toHaveLength(1);
    expect(advice[0]).toContain('overlap about 8 %, predicted from the turn between them');
    expect(judged(pair({}))[0]).not.toContain('predicted');
  });
});
