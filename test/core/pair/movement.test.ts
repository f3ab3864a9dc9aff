// Movement inside the aligned overlap: on a real photograph (leuvenA, test/fixtures/external/
// SOURCES.md) with a figure pasted into one copy, and on a rendered sequence with a planted figure
// that stands in one station's frames only (the demo generator's visitor): flagged there, and
// nowhere else. A pair that does not line up as a whole (leuven, two camera positions) is parallax;
// a plane under strong perspective (graf), a turning camera seen through radial lens distortion, and
// a neighbour of a motion-blurred frame are neither.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import type { GrayImage } from '../../../src/core/image/image.js';
import { detectAndDescribe } from '../../../src/core/features/features.js';
import { commonBand } from '../../../src/core/pair/common-band.js';
import { fieldAt, fitSmoothField } from '../../../src/core/pair/displacement-field.js';
import { findMovement, parallaxMisfit } from '../../../src/core/pair/movement.js';
import { invert, project } from '../../../src/core/geometry/homography.js';
import { createRandom } from '../../../src/core/numeric/random.js';
import { sharpness } from '../../../src/core/pair/sharpness.js';
import type { FrameAnalysis } from '../../../src/core/pair/pair-analysis.js';
import { checkFeatureParams } from '../../../src/core/pair/pair-analysis.js';
import { analysePair } from '../../../src/main/frame-analysis.js';
import { estimatePairGeometry } from '../../../src/core/pair/pair-geometry.js';
import { defaultBudget } from '../../../src/core/sequence/report.js';
import { judge } from '../../../src/core/sequence/verdicts.js';
import { createAnalysisPool } from '../../../src/main/analysis-pool.js';
import { runCheck } from '../../../src/main/check.js';
import { tempDir } from '../../helpers/cli.js';
import { externalFixture, jpegRoundTrip, loadGray } from '../../helpers/images.js';
import { scenarios, writeSequence } from '../../helpers/photo-sequences.js';
import { cachedDemoShoot } from '../../helpers/render-cache.js';

const identity = [1, 0, 0, 0, 1, 0, 0, 0, 1];
let photo: GrayImage;
beforeAll(async () => {
  photo = await loadGray(externalFixture('leuvenA.jpg'));
});

/** The photo with its brightness scaled (an exposure change) and a striped figure pasted at (x, y). */
function withFigure(gain: number, figure: { x: number; y: number; w: number; h: number } | null): GrayImage {
  const data = photo.data.map((v) => Math.min(255, Math.round(v * gain)));
  if (figure)
    for (let y = figure.y; y < figure.y + figure.h; y++)
      for (let x = figure.x; x < figure.x + figure.w; x++) data[y * photo.width + x] = (y >> 3) % 2 ? 30 : 180;
  return { ...photo, data };
}

describe('movement between two aligned frames', () => {
  it('finds nothing between a photograph and the same view one stop darker', () => {
    const m = findMovement(photo, withFigure(0.5, null), identity);
    expect(m.blocks).toBeGreaterThan(200);
    expect(m.regions).toEqual([]);
  });

  it('finds a figure that is in one frame only, where it is', () => {
    const fig = { x: 300, y: 200, w: 60, h: 110 };
    const m = findMovement(photo, withFigure(0.8, fig), identity);
    expect(m.regions).toHaveLength(1);
    const r = m.regions[0];
    expect(r.x).toBeLessThanOrEqual(fig.x);
    expect(r.y).toBeLessThanOrEqual(fig.y);
    expect(r.x + r.width).toBeGreaterThanOrEqual(fig.x + fig.w - 16);
    expect(r.y + r.height).toBeGreaterThanOrEqual(fig.y + fig.h - 16);
    expect(r.width).toBeLessThan(fig.w + 48);
  });
});

describe('frames that do not line up as a whole', () => {
  it('are parallax, not movement: leuvenA and leuvenB, photographed from two positions', async () => {
    const b = await loadGray(externalFixture('leuvenB.jpg'));
    const g = estimatePairGeometry(detectAndDescribe(photo), detectAndDescribe(b));
    expect(g.homography).not.toBeNull();
    const m = findMovement(photo, b, g.homography!);
    console.log(`leuven: ${m.differing} of ${m.blocks} blocks do not line up (${(100 * m.misfit).toFixed(0)} %)`);
    expect(m.misfit).toBeGreaterThan(parallaxMisfit);
    expect(m.parallax).toBe(true);
    expect(m.regions).toEqual([]);
    expect(findMovement(photo, withFigure(0.5, null), identity).misfit).toBeLessThan(0.02);
  });
});

describe('a rendered sequence with a figure in one overlap', () => {
  it('flags movement on that pair only', async () => {
    const pool = createAnalysisPool(0);
    const demo = await cachedDemoShoot(join(tempDir(), 'visitor'), { clean: true, width: 1200, height: 800, stations: 6, seed: 5, visitor: true });
    const planted = demo.truth.problems.find((p) => p.code === 'movement')!;
    const report = judge((await runCheck(demo.folder, { pool })).analysis, defaultBudget);
    const flagged = report.pairs.filter((p) => p.reasons.includes('movement')).map((p) => [p.a, p.b]);
    expect(flagged).toEqual([planted.frames]);
    const pair = report.pairs.find((p) => p.a === planted.frames[0] && p.b === planted.frames[1])!;
    expect(pair.verdict).toBe('weak');
    expect(pair.advice.join(' ')).toMatch(/something moved between/);
    // Nothing else is flagged on the clean set.
    expect(report.pairs.filter((p) => p.reasons.length && p !== pair)).toEqual([]);
    expect(report.frames.filter((f) => f.flags.length)).toEqual([]);
  }, 240_000);
});

describe('a rendered sequence with near posts, the camera turned off its pivot', () => {
  // Ten striped posts 3 m away among a distant scene; the lens's entrance pupil 10 cm in front of
  // the pivot moves the camera centre about 5 cm between stations 30 degrees apart, which shifts
  // the posts about a degree against the distant scene: parallax, where posts are in the overlap.
  const pool = createAnalysisPool(0);
  const options = { clean: true, width: 1200, height: 800, stations: 12, seed: 5, posts: true } as const;

  it('flags parallax on the pairs that see posts, and nothing else but one known misdiagnosis', async () => {
    const demo = await cachedDemoShoot(join(tempDir(), 'pivot-off'), { ...options, pivotOffsetM: 0.1 });
    const report = judge((await runCheck(demo.folder, { pool })).analysis, defaultBudget);
    const between = report.pairs.filter((p) => p.kind === 'neighbour' || p.kind === 'closure');
    const parallax = between.filter((p) => p.reasons.includes('parallax'));
    console.log(`pivot 10 cm off: parallax on ${parallax.length} of ${between.length} pairs`);
    expect(parallax.length).toBeGreaterThanOrEqual(between.length / 2);
    // Known misdiagnosis, kept visible: on the closure pair a post stands at the frame's right edge
    // and only 5 of its blocks are found shifted together (-24 to -30 px; 6 make parallax), so what
    // differs there reads as movement. One pair at most; nothing but parallax and that.
    const others = report.pairs.filter((p) => p.reasons.some((r) => r !== 'parallax'));
    expect(others.length).toBeLessThanOrEqual(1);
    expect(others.flatMap((p) => p.reasons).filter((r) => r !== 'parallax' && r !== 'movement')).toEqual([]);
  }, 240_000);

  it('still flags parallax through a barrel lens (k1 = -0.08), once the lens is taken out', async () => {
    // The lens is refined over the sequence and the flagged pairs are judged again on the frames
    // as a pinhole camera would have seen them: that must take out the lens, not the parallax.
    const demo = await cachedDemoShoot(join(tempDir(), 'pivot-off-barrel'), { ...options, pivotOffsetM: 0.1, distortion: { k1: -0.08, k2: 0 } });
    const report = judge((await runCheck(demo.folder, { pool })).analysis, defaultBudget);
    const between = report.pairs.filter((p) => p.kind === 'neighbour' || p.kind === 'closure');
    const parallax = between.filter((p) => p.reasons.includes('parallax'));
    console.log(`pivot 10 cm off, barrel lens: parallax on ${parallax.length} of ${between.length} pairs, k1 ${report.geometry?.distortion?.k1.toFixed(3)}`);
    expect(parallax.length).toBeGreaterThanOrEqual(between.length / 2);
  }, 240_000);

  it('flags nothing when the camera turns about its centre', async () => {
    const demo = await cachedDemoShoot(join(tempDir(), 'pivot-on'), { ...options, pivotOffsetM: 0 });
    const report = judge((await runCheck(demo.folder, { pool })).analysis, defaultBudget);
    expect(report.pairs.filter((p) => p.reasons.length).map((p) => `${p.a}->${p.b}: ${p.reasons}`)).toEqual([]);
    expect(report.verdict).toBe('ok');
  }, 240_000);
});

/** Reads the 3x3 matrix from an OpenCV storage XML file (H1to3p.xml). */
function readOpenCvMatrix(path: string): number[] {
  return /<data>([^<]*)<\/data>/.exec(readFileSync(path, 'utf8'))![1].trim().split(/\s+/).map(Number);
}

const frameOf = (image: GrayImage): FrameAnalysis => ({ fullWidth: image.width, fullHeight: image.height, features: detectAndDescribe(image, checkFeatureParams), image, sharpness: sharpness(image), fingerprint: '' });

describe('a planar wall under strong perspective: graf1 -> graf3 (Mikolajczyk et al., IJCV 2005)', () => {
  // The published homography H1to3p holds for the painted wall. Below its ledge (graf1 rows from
  // about 500) the lower wall sits on another plane and lines up about 6 to 9 px off under it, and a
  // parked car stands in graf1's lower right only: the wall above the ledge (rows 0 to 459) is
  // the plane the source's note speaks of, and there nothing may be flagged.
  let g1: GrayImage, g3: GrayImage, wall: GrayImage;
  const published = readOpenCvMatrix(externalFixture('H1to3p.xml'));
  beforeAll(async () => {
    g1 = await loadGray(externalFixture('graf1.png'));
    g3 = await loadGray(externalFixture('graf3.png'));
    wall = { width: g1.width, height: 460, data: g1.data.subarray(0, g1.width * 460) };
  });

  it('has neither parallax nor movement on the wall with the published homography', () => {
    const m = findMovement(wall, g3, published);
    expect(m.blocks).toBeGreaterThan(500);
    expect(m.parallax).toBe(false);
    expect(m.regions).toEqual([]);
    expect(m.misfit).toBeLessThan(0.02);
  });

  it("has neither with the check's own homography, and what it finds on the whole frame lies below the ledge", () => {
    const pair = analysePair(frameOf(g1), frameOf(g3));
    expect(pair.homography).not.toBeNull();
    const m = findMovement(wall, g3, pair.homography!);
    expect(m.blocks).toBeGreaterThan(500);
    expect(m.parallax).toBe(false);
    expect(m.regions).toEqual([]);
    const whole = findMovement(g1, g3, published);
    for (const r of [...whole.regions, ...(whole.displacedRegion ? [whole.displacedRegion] : [])]) expect(r.y + r.height).toBeGreaterThan(470);
    if (whole.displacedRegion) expect(whole.displacedRegion.y).toBeGreaterThanOrEqual(400);
  });
});

/** Undistorted radius for a distorted one, Brown's radial model r_d = r_u (1 + k1 r_u^2 + k2 r_u^4), by Newton steps. */
function undistortRadius(rd: number, k1: number, k2: number): number {
  let r = rd;
  for (let i = 0; i < 5; i++) {
    const r2 = r * r;
    r -= (r * (1 + k1 * r2 + k2 * r2 * r2) - rd) / (1 + 3 * k1 * r2 + 5 * k2 * r2 * r2);
  }
  return r;
}

/**
 * A frame seen by a camera turned by `yawDeg` about its centre (focal f px, principal point at the
 * frame centre, Brown radial distortion k1, k2 on the radius normalised by the focal length) that
 * looks at `src` as a camera at yaw 0 with focal `fs` sees it: every pair of such frames is related
 * by a rotation homography, up to the lens's distortion. Bilinear from the photograph.
 */
function renderTurned(src: GrayImage, fs: number, width: number, height: number, f: number, yawDeg: number, k1: number, k2: number): Float32Array {
  const out = new Float32Array(width * height);
  const c = Math.cos((yawDeg * Math.PI) / 180), s = Math.sin((yawDeg * Math.PI) / 180);
  const cx = (width - 1) / 2, cy = (height - 1) / 2, scx = (src.width - 1) / 2, scy = (src.height - 1) / 2, sw = src.width;
  for (let y = 0; y < height; y++)
    for (let x = 0; x < width; x++) {
      const xd = (x - cx) / f, yd = (y - cy) / f;
      const rd = Math.hypot(xd, yd);
      const k = rd > 0 ? undistortRadius(rd, k1, k2) / rd : 1;
      const u = xd * k, v = yd * k;
      const dx = c * u + s, dz = -s * u + c;
      const px = (fs * dx) / dz + scx, py = (fs * v) / dz + scy;
      const x0 = Math.max(0, Math.min(sw - 2, Math.floor(px))), y0 = Math.max(0, Math.min(src.height - 2, Math.floor(py)));
      const tx = Math.max(0, Math.min(1, px - x0)), ty = Math.max(0, Math.min(1, py - y0)), o = y0 * sw + x0;
      const top = src.data[o] + tx * (src.data[o + 1] - src.data[o]);
      const bottom = src.data[o + sw] + tx * (src.data[o + sw + 1] - src.data[o + sw]);
      out[y * width + x] = top + ty * (bottom - top);
    }
  return out;
}

/** Motion blur: the mean along a line of `length` px at `angleDeg`, bilinear taps. */
function lineBlur(img: Float32Array, w: number, h: number, length: number, angleDeg: number): Float32Array {
  const out = new Float32Array(w * h);
  const c = Math.cos((angleDeg * Math.PI) / 180), s = Math.sin((angleDeg * Math.PI) / 180);
  for (let y = 0; y < h; y++)
    for (let x = 0; x < w; x++) {
      let acc = 0;
      for (let t = 0; t < length; t++) {
        const d = t - (length - 1) / 2;
        const px = Math.max(0, Math.min(w - 1.001, x + d * c)), py = Math.max(0, Math.min(h - 1.001, y + d * s));
        const x0 = Math.floor(px), y0 = Math.floor(py), tx = px - x0, ty = py - y0, o = y0 * w + x0;
        const top = img[o] + tx * (img[o + 1] - img[o]);
        acc += top + ty * (img[o + w] + tx * (img[o + w + 1] - img[o + w]) - top);
      }
      out[y * w + x] = acc / length;
    }
  return out;
}

/** 8-bit with seeded Gaussian noise (sd 1.5 levels), then a JPEG q88 round trip: a camera's frame. */
async function cameraFrame(img: Float32Array, w: number, h: number, seed: number): Promise<GrayImage> {
  const rnd = createRandom(seed);
  const data = new Uint8Array(w * h);
  for (let i = 0; i < data.length; i++) data[i] = Math.max(0, Math.min(255, Math.round(img[i] + 1.5 * rnd.normal())));
  return jpegRoundTrip({ width: w, height: h, data }, 88);
}

describe('a turning camera through an ordinary lens: rotation homography plus radial distortion', () => {
  // leuvenA (SOURCES.md) as the scene; frames 700 x 467 with f = 490 px (about a 25 mm lens on
  // full frame), turned 30 degrees apart: about 55 % overlap. The distortion values span the
  // range issue 15 names for ordinary uncorrected lenses, k1 = -0.15 (barrel) to +0.05
  // (pincushion). The homography cannot absorb it: the smooth field must.
  const W = 700, H = 467, f = 490;
  const lenses = [
    { k1: -0.15, k2: 0.01, blur: 15, angle: 0 },
    { k1: -0.08, k2: 0.01, blur: 13, angle: 10 },
    { k1: 0.05, k2: 0, blur: 9, angle: 75 },
  ];
  const frames = (k1: number, k2: number, blur: number, angle: number, plant?: (b: Float32Array) => void) => {
    const fs = photo.width / 2;
    const a = renderTurned(photo, fs, W, H, f, -15, k1, k2);
    let b = renderTurned(photo, fs, W, H, f, 15, k1, k2);
    plant?.(b);
    if (blur) b = lineBlur(b, W, H, blur, angle);
    return Promise.all([cameraFrame(a, W, H, 1), cameraFrame(b, W, H, 2)]);
  };

  for (const { k1, k2, blur, angle } of lenses) {
    it(`flags nothing at k1 = ${k1}, sharp and with one side smeared ${blur} px`, async () => {
      const fs = photo.width / 2;
      const a = frameOf(await cameraFrame(renderTurned(photo, fs, W, H, f, -15, k1, k2), W, H, 1));
      const b = renderTurned(photo, fs, W, H, f, 15, k1, k2);
      for (const smear of [0, blur]) {
        const pair = analysePair(a, frameOf(await cameraFrame(smear ? lineBlur(b, W, H, smear, angle) : b, W, H, 2)));
        expect(pair.homography, `k1 ${k1} smear ${smear}: ${pair.noModel}`).not.toBeNull();
        expect({ k1, smear, parallax: pair.parallax, moved: pair.moved }).toEqual({ k1, smear, parallax: false, moved: [] });
      }
    });
  }

  it('still finds something that moved in the overlap when the other side is smeared', async () => {
    // A 64 x 112 px patch of another part of the photograph stands in b's overlap (a person who
    // walked in), then b is smeared 13 px: the comparison in the band both keep must still see it.
    const px = 150, py = 200, pw = 64, ph = 112;
    const [a, b] = await frames(-0.08, 0.01, 13, 10, (img) => {
      for (let y = 0; y < ph; y++) for (let x = 0; x < pw; x++) img[(py + y) * W + px + x] = photo.data[(40 + y) * photo.width + 600 + x];
    });
    const pair = analysePair(frameOf(a), frameOf(b));
    expect(pair.parallax).toBe(false);
    expect(pair.moved).toHaveLength(1);
    const back = invert(pair.homography!)!;
    // The patch's footprint in a (its corners mapped back): the region found overlaps it, and lies
    // within a block of it (its lower part is smooth, and flat blocks are not compared).
    const corners = [[px, py], [px + pw, py], [px, py + ph], [px + pw, py + ph]].map(([x, y]) => project(back, x, y));
    const x0 = Math.min(...corners.map((c) => c[0])), x1 = Math.max(...corners.map((c) => c[0]));
    const y0 = Math.min(...corners.map((c) => c[1])), y1 = Math.max(...corners.map((c) => c[1]));
    const r = pair.moved![0];
    expect(Math.min(x1, r.x + r.width) - Math.max(x0, r.x)).toBeGreaterThan(16);
    expect(Math.min(y1, r.y + r.height) - Math.max(y0, r.y)).toBeGreaterThan(16);
    expect(r.x).toBeGreaterThan(x0 - 16);
    expect(r.x + r.width).toBeLessThan(x1 + 16);
    expect(r.y).toBeGreaterThan(y0 - 16);
    expect(r.y + r.height).toBeLessThan(y1 + 16);
  });
});

describe('the pieces', () => {
  it('fits a smooth field through a minority of points that break from it', () => {
    // A known cubic field (exact truth by construction) at 200 points, 20 % of them moved 5 to 15 px.
    const rnd = createRandom(3);
    const n = 200, x = new Float64Array(n), y = new Float64Array(n), dx = new Float64Array(n), dy = new Float64Array(n);
    const truth = (px: number, py: number): [number, number] => {
      const u = px / 700 - 0.5, v = py / 460 - 0.5;
      return [2 + 3 * u - 4 * u * u * u + u * v, -1 + 2 * v * v + 5 * u * u * v];
    };
    for (let i = 0; i < n; i++) {
      x[i] = 700 * rnd.next();
      y[i] = 460 * rnd.next();
      [dx[i], dy[i]] = truth(x[i], y[i]);
      dx[i] += 0.1 * rnd.normal();
      if (i % 5 === 0) dy[i] += 5 + 10 * rnd.next();
    }
    const field = fitSmoothField(x, y, dx, dy, n);
    const at = new Float64Array(2);
    for (const [px, py] of [[100, 100], [350, 230], [600, 400]]) {
      fieldAt(field, px, py, at);
      const [tx, ty] = truth(px, py);
      expect(Math.hypot(at[0] - tx, at[1] - ty)).toBeLessThan(0.1);
    }
  });

  it('brings a smeared copy to one sharpness, and leaves a darker copy as it is', () => {
    const w = photo.width, h = photo.height;
    const smeared = lineBlur(Float32Array.from(photo.data), w, h, 13, 0);
    const blurred = { width: w, height: h, data: Uint8Array.from(smeared, (v) => Math.round(v)) };
    expect(commonBand(photo, blurred, identity).sigma).toBeGreaterThan(0);
    expect(commonBand(photo, withFigure(0.5, null), identity).sigma).toBe(0);
  });
});

describe('a flat block beside a hard edge: IMG_0009 and IMG_0015 of the photo-wall corpus fault-two-row-missing', () => {
  // Two frames of the upper row (pitch +20 degrees, 45 degrees apart, the camera turning about its
  // centre: no movement by construction) rendered from real photographs (test/helpers/photo-
  // sequences.ts; sources in test/fixtures/external/SOURCES.md). A dark roof line meets a bright
  // wall at eye level, a hard horizontal edge on one image row in both frames. The smooth field
  // puts the flat dark blocks just above it a pixel low in b, where they take in a row of the
  // bright side: that was reported as something that moved (a strip of 11 blocks).
  it('is not movement', async () => {
    const s = scenarios().find((x) => x.name === 'fault-two-row-missing')!;
    const written = await writeSequence(join(tempDir(), 'edge'), { ...s.spec, frames: [s.spec.frames[8], s.spec.frames[14]], names: ['a.jpg', 'b.jpg'] });
    const [a, b] = await Promise.all(written.frames.map((f) => loadGray(join(written.folder, f.file))));
    const r = analysePair(frameOf(a), frameOf(b));
    expect(r.homography).not.toBeNull();
    expect(r.moved).toEqual([]);
    expect(r.parallax).toBe(false);
  }, 60_000);
});
