// The bundle adjustment with a lens term, on synthetic tie points whose truth is exact: rays of a
// camera turning about its centre (known rotations), projected through a known focal length and
// Brown's radial model x_d = x_u (1 + k1 r^2 + k2 r^4) on the focal-normalised radius (D. C. Brown,
// "Decentering distortion of lenses", 1966, (memory)) to pixels, with small noise. The method is
// Brown & Lowe's bundle adjustment (IJCV 2007) with the lens added. Tolerances from the task: the
// focal length within 0.5 %, k1 within 0.01, rotations within 0.05 degrees, from an EXIF focal
// length 3 % off.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import type { Pose } from '../../../src/core/demo/camera.js';
import { worldToCamera } from '../../../src/core/demo/camera.js';
import type { Correspondences } from '../../../src/core/geometry/homography.js';
import { fitHomographyDLT } from '../../../src/core/geometry/homography.js';
import type { RadialDistortion } from '../../../src/core/geometry/lens.js';
import { distortionFactor, lensMisfitLimitPx, monotonicUpTo, undistortRadius } from '../../../src/core/geometry/lens.js';
import { bundleAdjust, linkRotation } from '../../../src/core/geometry/lens-bundle.js';
import { coverageMap } from '../../../src/core/sequence/coverage-map.js';
import { createRandom } from '../../../src/core/numeric/random.js';
import type { Analysis, FrameSettings } from '../../../src/core/sequence/report.js';
import { defaultBudget } from '../../../src/core/sequence/report.js';
import type { FrameSize, RotationLink } from '../../../src/core/geometry/rotations.js';
import { chainRotations, relativeRotation, rotationAngleOf, rotationOfVector } from '../../../src/core/geometry/rotations.js';
import { multiply, transpose } from '../../../src/core/numeric/matrix3.js';
import { sequenceGeometry, solveSequence } from '../../../src/core/sequence/sequence-geometry.js';
import { judge } from '../../../src/core/sequence/verdicts.js';

const W = 3000, H = 2000;
const size: FrameSize = { width: W, height: H };
/** 35 mm on a 36 mm wide sensor. */
const fTrue = (35 / 36) * W;

function turn(stations: number, seed: number): Pose[] {
  const rnd = createRandom(seed);
  return Array.from({ length: stations }, (_, k) => ({ yawDeg: 20 + (360 / stations) * k + 2 * (rnd.next() - 0.5), pitchDeg: 1.5 * (rnd.next() - 0.5), rollDeg: 1.5 * (rnd.next() - 0.5) }));
}

/** Station rotations as the sequence sees them: R_s = C_s C_0^T (station 0's camera is the world). */
const truthRotations = (poses: Pose[]): Float64Array[] => poses.map((p) => multiply(worldToCamera(p), transpose(worldToCamera(poses[0]))));

/**
 * Tie points between stations i and j: a grid of directions seen by i, projected through the lens
 * into both frames (focal lengths fi and fj), kept where both see them, with Gaussian noise of sd
 * `noise` px on both sides; the link's homography fitted to them by DLT, as the pipeline has it.
 */
function link(rots: Float64Array[], i: number, j: number, d: RadialDistortion, noise: number, seed: number, fi = fTrue, fj = fTrue): RotationLink | null {
  const rnd = createRandom(seed);
  const rel = multiply(rots[j], transpose(rots[i]));
  const pts: number[] = [];
  const project = (x: number, y: number, z: number, f: number): [number, number] | null => {
    if (z <= 0) return null;
    const u = x / z, v = y / z, g = distortionFactor(u * u + v * v, d.k1, d.k2);
    const px = f * u * g + (W - 1) / 2, py = f * v * g + (H - 1) / 2;
    return px >= 0 && py >= 0 && px <= W - 1 && py <= H - 1 ? [px, py] : null;
  };
  for (let y = 15; y < H; y += 70)
    for (let x = 15; x < W; x += 70) {
      // The ideal direction of distorted pixel (x, y) of i.
      const xd = (x - (W - 1) / 2) / fi, yd = (y - (H - 1) / 2) / fi, rd = Math.hypot(xd, yd);
      const s = rd > 0 ? undistortRadius(rd, d.k1, d.k2) / rd : 1;
      const u = xd * s, v = yd * s;
      const b = project(rel[0] * u + rel[1] * v + rel[2], rel[3] * u + rel[4] * v + rel[5], rel[6] * u + rel[7] * v + rel[8], fj);
      if (!b) continue;
      pts.push(x + noise * rnd.normal(), y + noise * rnd.normal(), b[0] + noise * rnd.normal(), b[1] + noise * rnd.normal());
    }
  const n = pts.length / 4;
  if (n < 8) return null;
  const c: Correspondences = {
    count: n,
    ax: Float64Array.from({ length: n }, (_, k) => pts[4 * k]),
    ay: Float64Array.from({ length: n }, (_, k) => pts[4 * k + 1]),
    bx: Float64Array.from({ length: n }, (_, k) => pts[4 * k + 2]),
    by: Float64Array.from({ length: n }, (_, k) => pts[4 * k + 3]),
  };
  return { i, j, homography: fitHomographyDLT(c, null, n)!, points: Float64Array.from(pts) };
}

function neighbours(rots: Float64Array[], d: RadialDistortion, noise: number, focal: (s: number) => number = () => fTrue): RotationLink[] {
  return rots.slice(1).map((_, k) => link(rots, k, k + 1, d, noise, 100 + k, focal(k), focal(k + 1))!);
}

const angleBetween = (a: Float64Array, b: Float64Array): number => rotationAngleOf(multiply(a, transpose(b)));

describe("Brown's radial model", () => {
  it('undistorts what it distorts, and refuses a lens that folds back', () => {
    for (const [k1, k2] of [[-0.15, 0], [-0.08, 0.01], [0.05, 0], [-0.3, 0.1]]) {
      for (const ru of [0, 0.1, 0.35, 0.62]) {
        const rd = ru * distortionFactor(ru * ru, k1, k2);
        expect(Math.abs(undistortRadius(rd, k1, k2) - ru), `k1 ${k1} k2 ${k2} r ${ru}`).toBeLessThan(1e-12);
      }
    }
    // 1 + 3 k1 r^2 = 0 at r = 1 for k1 = -1/3: the radius stops growing there.
    expect(monotonicUpTo(0.9, -1 / 3, 0)).toBe(true);
    expect(monotonicUpTo(1.2, -1 / 3, 0)).toBe(false);
    expect(undistortRadius(0.9, -1 / 3, 0)).toBeNaN();
  });
});

describe('the bundle adjustment with a lens term', () => {
  const poses = turn(12, 5);
  const rots = truthRotations(poses);
  const sizes = poses.map(() => size);
  const exifOff = 1.03 * fTrue;

  for (const d of [{ k1: -0.15, k2: 0 }, { k1: -0.08, k2: 0.01 }, { k1: 0.05, k2: 0 }, { k1: 0, k2: 0 }]) {
    it(`recovers f, k1 and the rotations of a full turn through k1 = ${d.k1}, k2 = ${d.k2} from an EXIF focal length 3 % off`, () => {
      const links = neighbours(rots, d, 0.3);
      const solved = solveSequence({ sizes, exifFocalPx: exifOff, links, closure: link(rots, 11, 0, d, 0.3, 999) })!;
      const fit = solved.fit;
      expect(solved.closes).toBe(true);
      expect(Math.abs(fit.focalPx / fTrue - 1), 'focal length').toBeLessThan(0.005);
      expect(Math.abs(fit.distortion.k1 - d.k1), 'k1').toBeLessThan(0.01);
      for (let s = 1; s < 12; s++) expect(angleBetween(fit.rotations[s]!, rots[s]), `rotation of station ${s}`).toBeLessThan(0.05);
      expect(fit.rmsPx).toBeLessThan(1);
    });
  }

  it('recovers f and k1 from an open sweep too, where only the neighbours tie the stations', () => {
    const d = { k1: -0.15, k2: 0 };
    const links = neighbours(rots, d, 0.3);
    const fit = bundleAdjust(chainRotations(12, links, exifOff, sizes), links, exifOff, sizes, { refineFocal: true, focalPrior: { focalPx: exifOff, relativeSd: 0.05 }, distortionTerms: 1 });
    expect(Math.abs(fit.focalPx / fTrue - 1), 'focal length').toBeLessThan(0.005);
    expect(Math.abs(fit.distortion.k1 - d.k1), 'k1').toBeLessThan(0.01);
    // Without the closure an error in f turns every step a little, and the steps add up over 330
    // degrees: the far end is held to 0.1 degrees here, not 0.05.
    for (let s = 1; s < 12; s++) expect(angleBetween(fit.rotations[s]!, rots[s]), `rotation of station ${s}`).toBeLessThan(0.1);
  });

  it('closes the turn under the refined lens, where the pinhole chain misses it by degrees', () => {
    const d = { k1: -0.08, k2: 0.01 };
    const links = neighbours(rots, d, 0.3);
    const closure = link(rots, 11, 0, d, 0.3, 999)!;
    const g = sequenceGeometry({ sizes, exifFocalPx: exifOff, exifFocal35mm: 36, links, closure })!;
    expect(g.closure!.closes).toBe(true);
    expect(g.closure!.misclosureDeg!).toBeLessThan(0.5);
    expect(Math.abs(g.focalPx / fTrue - 1)).toBeLessThan(0.005);
    expect(g.exifFocalPx).toBe(exifOff);
    expect(g.exifFocal35mm).toBe(36);
    expect(Math.abs(g.focal35mm! - 35)).toBeLessThan(0.2);
    expect(Math.abs(g.distortion!.k1 - d.k1)).toBeLessThan(0.01);
    expect(g.typicalRmsPx!).toBeLessThan(lensMisfitLimitPx(W));
    expect(g.linkFits).toHaveLength(12);
    // The pinhole chain from the EXIF focal length, as before: the closure pair disagrees with it by far more.
    const chained = chainRotations(12, links, exifOff, sizes);
    const measured = linkRotation(closure, sizes, exifOff, { k1: 0, k2: 0 })!;
    const pinholeMiss = angleBetween(measured, multiply(chained[0]!, transpose(chained[11]!)));
    console.log(`k1 -0.08, k2 0.01, EXIF 3 % off: misclosure ${g.closure!.misclosureDeg!.toFixed(3)} deg refined, ${pinholeMiss.toFixed(1)} deg pinhole chain; f ${g.focalPx.toFixed(1)} px (truth ${fTrue.toFixed(1)}), k1 ${g.distortion!.k1.toFixed(4)}, rms ${g.rmsPx.toFixed(2)} px`);
    expect(pinholeMiss).toBeGreaterThan(2);
  });

  it('fits two rows tied together in loops through strong barrel distortion', () => {
    // Two rows of 12 at pitch -12 and +8, each row closed on itself and every station tied to the
    // one above: a pinhole chain through k1 = -0.15 misses round these loops by tens of degrees.
    const rnd = createRandom(8);
    const twoRows: Pose[] = [];
    for (const pitch of [-12, 8]) for (let k = 0; k < 12; k++) twoRows.push({ yawDeg: 10 + 30 * k + (rnd.next() - 0.5), pitchDeg: pitch + 0.5 * (rnd.next() - 0.5), rollDeg: 0.5 * (rnd.next() - 0.5) });
    const r = truthRotations(twoRows);
    const d = { k1: -0.15, k2: 0 };
    const links: RotationLink[] = [];
    for (let row = 0; row < 2; row++) for (let k = 0; k < 12; k++) links.push(link(r, 12 * row + k, 12 * row + ((k + 1) % 12), d, 0.3, 7 * k + row)!);
    for (let k = 0; k < 12; k++) links.push(link(r, k, 12 + k, d, 0.3, 300 + k)!);
    const solved = solveSequence({ sizes: twoRows.map(() => size), exifFocalPx: exifOff, links })!;
    expect(Math.abs(solved.fit.focalPx / fTrue - 1)).toBeLessThan(0.005);
    expect(Math.abs(solved.fit.distortion.k1 - d.k1)).toBeLessThan(0.01);
    for (let s = 1; s < 24; s++) expect(angleBetween(solved.fit.rotations[s]!, r[s]), `rotation of station ${s}`).toBeLessThan(0.05);
  });

  it('still finds a closure pair that disagrees with the chain, whatever focal length would hide it', () => {
    // The closure pair's tie points as if station 0 stood 3 and 10 degrees further round: a wrong
    // match or a camera that moved. A focal length 0.8 or 2.7 % shorter would close the turn.
    const d = { k1: -0.08, k2: 0 };
    for (const bend of [3, 10]) {
      const moved = rots.map((r, s) => (s === 0 ? multiply(rotationOfVector(0, (bend * Math.PI) / 180, 0), r) : r));
      const g = sequenceGeometry({ sizes, exifFocalPx: exifOff, links: neighbours(rots, d, 0.3), closure: link(moved, 11, 0, d, 0.3, 999) })!;
      expect(g.closure!.closes, `${bend} degrees`).toBe(false);
      expect(Math.abs(g.closure!.misclosureDeg! - bend), `${bend} degrees`).toBeLessThan(0.5);
      expect(Math.abs(g.focalPx / fTrue - 1)).toBeLessThan(0.005);
    }
  });

  it('adds k2 when k1 alone leaves a poor fit, and not otherwise', () => {
    const strong = { k1: -0.2, k2: 0.12 };
    const g = sequenceGeometry({ sizes, exifFocalPx: fTrue, links: neighbours(rots, strong, 0.2) })!;
    expect(g.distortion!.terms).toBe(2);
    expect(Math.abs(g.distortion!.k1 - strong.k1)).toBeLessThan(0.03);
    expect(Math.abs(g.distortion!.k2 - strong.k2)).toBeLessThan(0.05);
    expect(g.typicalRmsPx!).toBeLessThan(0.5);
    const mild = sequenceGeometry({ sizes, exifFocalPx: fTrue, links: neighbours(rots, { k1: -0.05, k2: 0 }, 0.2) })!;
    expect(mild.distortion!.terms).toBe(1);
    expect(mild.distortion!.k2).toBe(0);
  });

  it('flags a sequence no single lens fits (the zoom changed half-way), and a good fit not at all', () => {
    const none = { k1: 0, k2: 0 };
    // Stations 6 to 10 shot with the zoom ring moved from 24 to 28 mm.
    const zoomed = (s: number): number => (s >= 6 ? (28 / 24) * fTrue : fTrue);
    const bad = sequenceGeometry({ sizes, exifFocalPx: fTrue, exifFocal35mm: 35, links: neighbours(rots.slice(0, 11), none, 0.3, zoomed) })!;
    const good = sequenceGeometry({ sizes, exifFocalPx: fTrue, exifFocal35mm: 35, links: neighbours(rots.slice(0, 11), { k1: -0.1, k2: 0 }, 0.3) })!;
    console.log(`zoom moved half-way: typical rms ${bad.typicalRmsPx!.toFixed(2)} px (limit ${lensMisfitLimitPx(W)} px); one lens with k1 -0.1: ${good.typicalRmsPx!.toFixed(2)} px`);
    expect(bad.typicalRmsPx!).toBeGreaterThan(lensMisfitLimitPx(W));
    const settings: FrameSettings = { exposureTime: 1 / 250, fNumber: 8, iso: 100, evBias: 0, focalLength: 35, focalLength35: 35, whiteBalance: '1', make: null, model: null };
    const analysis = (geometry: typeof bad): Analysis => {
      const names = Array.from({ length: 11 }, (_, k) => `F${k}.JPG`);
      return {
        folder: '/card',
        frames: names.map((file) => ({ file, width: W, height: H, captureTime: null, settings, sharpness: 2, keypoints: 1500 })),
        stations: names.map((file, index) => ({ index, frames: [file], reference: file, evOffsets: [0], groupedBy: 'single' })),
        pairs: names.slice(1).map((b, k) => ({ a: names[k], b, kind: 'neighbour', matches: 300, inliers: 200, matchesInOverlap: 250, overlap: 0.45, homography: [1, 0, 1500, 0, 1, 0, 0, 0, 1], evDiff: 0, rmsError: 0.5, shiftPx: null })),
        skipped: [],
        sweepDeg: geometry.horizontalDeg,
        geometry,
      };
    };
    const flagged = judge(analysis(bad), defaultBudget);
    const misfits = flagged.pairs.filter((p) => p.reasons.includes('lens-misfit'));
    expect(misfits.length).toBeGreaterThan(0);
    expect(misfits.every((p) => p.verdict === 'weak')).toBe(true);
    expect(misfits[0].advice.at(-1)).toMatch(/do not fit one lens/);
    expect(flagged.verdict).toBe('weak');
    const clean = judge(analysis(good), defaultBudget);
    expect(clean.pairs.flatMap((p) => p.reasons)).toEqual([]);
    expect(clean.verdict).toBe('ok');
  });
});

describe('a full turn at 28 mm through k1 = -0.15 (the photo-wall corpus geometry)', () => {
  // 1500 x 1000 px (3:2), 28 mm on a 36 mm wide sensor: the corners reach r = 0.77 on the
  // focal-normalised radius, where k1 = -0.15 pulls them in by 9 %.
  const w = 1500, h = 1000, f = (28 / 36) * w;
  const frame: FrameSize = { width: w, height: h };

  /**
   * Tie points as a matcher finds them on real photographs, not a full grid: each pair's in a band
   * half the frame high (where its overlap has texture), its own noise (a soft pair locates its
   * points worse), 1 % mismatched by up to 12 px; the homography fitted by DLT on the rest, as
   * RANSAC would keep them.
   */
  function wallLink(rots: Float64Array[], i: number, j: number, d: RadialDistortion, noise: number, seed: number): RotationLink {
    const rnd = createRandom(seed);
    const rel = multiply(rots[j], transpose(rots[i]));
    const pts: number[] = [];
    const kept: number[] = [];
    const top = 60 + rnd.next() * (h - 620);
    for (let y = top + 50 * rnd.next(); y < top + 500; y += 50)
      for (let x = 8 + 50 * rnd.next(); x < w; x += 50) {
        const xd = (x - (w - 1) / 2) / f, yd = (y - (h - 1) / 2) / f, rd = Math.hypot(xd, yd);
        const s = rd > 0 ? undistortRadius(rd, d.k1, d.k2) / rd : 1;
        const u = xd * s, v = yd * s;
        const X = rel[0] * u + rel[1] * v + rel[2], Y = rel[3] * u + rel[4] * v + rel[5], Z = rel[6] * u + rel[7] * v + rel[8];
        if (Z <= 0) continue;
        const a = X / Z, b = Y / Z, g = distortionFactor(a * a + b * b, d.k1, d.k2);
        const px = f * a * g + (w - 1) / 2, py = f * b * g + (h - 1) / 2;
        if (px < 0 || py < 0 || px > w - 1 || py > h - 1) continue;
        const wrong = rnd.next() < 0.01 ? 24 * (rnd.next() - 0.5) : 0;
        if (wrong === 0) kept.push(pts.length / 4);
        pts.push(x + noise * rnd.normal(), y + noise * rnd.normal(), px + wrong + noise * rnd.normal(), py + noise * rnd.normal());
      }
    const n = pts.length / 4;
    const c: Correspondences = {
      count: n,
      ax: Float64Array.from({ length: n }, (_, k) => pts[4 * k]),
      ay: Float64Array.from({ length: n }, (_, k) => pts[4 * k + 1]),
      bx: Float64Array.from({ length: n }, (_, k) => pts[4 * k + 2]),
      by: Float64Array.from({ length: n }, (_, k) => pts[4 * k + 3]),
    };
    return { i, j, homography: fitHomographyDLT(c, Int32Array.from(kept), kept.length)!, points: Float64Array.from(pts) };
  }

  it('chains, fits and closes it from an EXIF focal length 3 % off, though no pair\'s homography is near a rotation', () => {
    const poses = turn(12, 5);
    const rots = truthRotations(poses);
    const d = { k1: -0.15, k2: 0 };
    // Per-pair noise, px: most pairs sharp, two soft ones (common practice for tie points located at a few tenths of a pixel).
    const noise = [0.15, 0.1, 0.1, 0.15, 0.1, 0.3, 0.3, 0.6, 0.6, 0.2, 0.15, 0.15];
    const links = rots.slice(1).map((_, k) => wallLink(rots, k, k + 1, d, noise[k], 100 + k));
    const closure = wallLink(rots, 11, 0, d, noise[11], 999);
    const exif = 1.03 * f;
    // Over this wide a field no homography is close to a rotation: the chain cannot start from them.
    expect(links.filter((l) => relativeRotation(l.homography, exif, frame, frame) === null).length).toBeGreaterThan(0);
    const solved = solveSequence({ sizes: poses.map(() => frame), exifFocalPx: exif, links, closure })!;
    expect(solved.fit.rotations.every((r) => r !== null)).toBe(true);
    expect(solved.closes).toBe(true);
    expect(solved.misclosureDeg!).toBeLessThan(0.5);
    expect(Math.abs(solved.fit.focalPx / f - 1), 'focal length').toBeLessThan(0.005);
    expect(Math.abs(solved.fit.distortion.k1 - d.k1), 'k1').toBeLessThan(0.01);
    for (let s = 1; s < 12; s++) expect(angleBetween(solved.fit.rotations[s]!, rots[s]), `rotation of station ${s}`).toBeLessThan(0.1);
  });

  it('closes the corpus turn itself, where the neighbours alone leave the focal length a per cent loose', () => {
    // The links and closure pair runCheck gave sequenceGeometry on the corpus's lens-barrel-015
    // (test/helpers/photo-sequences.ts; the renderer's truth is f = 1166.7 px, k1 = -0.15). The
    // neighbours alone fit f = 1180 px (their rms 0.766 px, 0.782 px under the true lens), and the
    // closure pair's pull back to the truth was taken for a wrong closure: 4.07 degrees, no-closure.
    const fx = JSON.parse(readFileSync(new URL('../../fixtures/lens-barrel-015-links.json', import.meta.url), 'utf8')) as {
      truthFocalPx: number; sizes: FrameSize[]; exifFocalPx: number; links: RotationLink[]; closure: RotationLink;
    };
    const solved = solveSequence({ sizes: fx.sizes, exifFocalPx: fx.exifFocalPx, links: fx.links, closure: fx.closure })!;
    expect(solved.closes).toBe(true);
    expect(solved.misclosureDeg!).toBeLessThan(0.5);
    expect(Math.abs(solved.fit.focalPx / fx.truthFocalPx - 1), 'focal length').toBeLessThan(0.005);
    expect(Math.abs(solved.fit.distortion.k1 + 0.15), 'k1').toBeLessThan(0.01);
  });
});

describe('the coverage map through the refined lens', () => {
  it('outlines a frame where the distorting lens puts its corners, wider than a pinhole would', () => {
    const settings: FrameSettings = { exposureTime: null, fNumber: null, iso: null, evBias: null, focalLength: 35, focalLength35: 35, whiteBalance: null, make: null, model: null };
    const pose = { station: 0, yawDeg: 0, pitchDeg: 0, rollDeg: 0 };
    const source = (k1: number) => ({
      frames: [{ file: 'F.JPG', width: W, height: H, captureTime: null, settings, sharpness: 1, keypoints: 1000 }],
      stations: [{ index: 0, frames: ['F.JPG'], reference: 'F.JPG', evOffsets: [0], groupedBy: 'single' as const }],
      geometry: {
        focalPx: fTrue, focalFrom: 'exif' as const, poses: [pose], unplaced: [], horizontalDeg: 0, verticalDeg: 0, gaps: [], closure: null, rmsPx: 0,
        rows: [{ pitchDeg: 0, stations: [0] }], distortion: { k1, k2: 0, terms: 1 as const },
      },
    });
    const barrel = coverageMap(source(-0.15))!.footprints[0].outline;
    const pinhole = coverageMap(source(0))!.footprints[0].outline;
    // The top-left corner (outline point 0), carried forward through Brown's model, lands on the
    // frame's corner pixel (-0.5, -0.5).
    const [yaw, pitch] = barrel[0].map((a) => (a * Math.PI) / 180);
    const xu = Math.tan(yaw), yu = -Math.tan(pitch) / Math.cos(yaw);
    const g = distortionFactor(xu * xu + yu * yu, -0.15, 0);
    expect(Math.abs(fTrue * xu * g + (W - 1) / 2 + 0.5)).toBeLessThan(1e-6);
    expect(Math.abs(fTrue * yu * g + (H - 1) / 2 + 0.5)).toBeLessThan(1e-6);
    expect(Math.abs(barrel[0][0])).toBeGreaterThan(Math.abs(pinhole[0][0]) + 1);
  });
});
