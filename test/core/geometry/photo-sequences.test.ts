// The photo-wall sequence generator (test/helpers/photo-sequences.ts) checked against outside
// references: OpenCV's JavaScript build (through test/helpers/opencv.ts) for the homography of a
// rotation and for Brown's radial distortion model, exifr for the EXIF written. The photographs
// are real ones from Debian packages (test/fixtures/external/SOURCES.md).
import { readdir, readFile } from 'node:fs/promises';
import { join } from 'node:path';
import exifr from 'exifr';
import { describe, expect, it } from 'vitest';
import type { Pose } from '../../../src/core/demo/camera.js';
import { project } from '../../../src/core/geometry/homography.js';
import { rotationHomography } from '../../../src/core/demo/camera.js';
import { tempDir } from '../../helpers/cli.js';
import type { OpenCV } from '../../helpers/opencv.js';
import { loadOpenCV } from '../../helpers/opencv.js';
import type { SequenceSpec } from '../../helpers/photo-sequences.js';
import { camera, mixedScene, pixelMapper, prepareScene, renderLinear, scenarios, sweep, toSensor8bit, trueOverlap, writeSequence } from '../../helpers/photo-sequences.js';

const W = 960, H = 640;
const spec = (extra: Partial<SequenceSpec> = {}): SequenceSpec => ({ width: W, height: H, focalLengthMm: 28, seed: 5, scene: mixedScene, frames: sweep(2, 30), ...extra });
const pose = (yawDeg: number, pitchDeg = 0, rollDeg = 0): Pose => ({ yawDeg, pitchDeg, rollDeg });

/** A frame rendered without noise, as 8-bit grey for OpenCV. */
async function renderGray(cv: OpenCV, s: SequenceSpec, p: Pose): Promise<OpenCV> {
  const scene = await prepareScene(s.scene);
  const rgb = toSensor8bit(renderLinear(scene, s, { ...p, time: 0 }), undefined, 1);
  const mat = cv.matFromArray(H, W, cv.CV_8UC3, Array.from(rgb));
  const gray = new cv.Mat();
  cv.cvtColor(mat, gray, cv.COLOR_RGB2GRAY);
  mat.delete();
  return gray;
}

/** OpenCV's ORB + brute-force Hamming matching (cross-checked) + findHomography (RANSAC, 2 px): a to b. */
function openCvHomography(cv: OpenCV, a: OpenCV, b: OpenCV): { h: Float64Array; inliers: number; points: number[] } {
  const orb = new cv.ORB(4000);
  const ka = new cv.KeyPointVector(), kb = new cv.KeyPointVector(), da = new cv.Mat(), db = new cv.Mat(), none = new cv.Mat();
  orb.detectAndCompute(a, none, ka, da);
  orb.detectAndCompute(b, none, kb, db);
  const bf = new cv.BFMatcher(cv.NORM_HAMMING, true);
  const matches = new cv.DMatchVector();
  bf.match(da, db, matches);
  const src: number[] = [], dst: number[] = [];
  for (let i = 0; i < matches.size(); i++) {
    const m = matches.get(i);
    const p = ka.get(m.queryIdx).pt, q = kb.get(m.trainIdx).pt;
    src.push(p.x, p.y);
    dst.push(q.x, q.y);
  }
  const sm = cv.matFromArray(src.length / 2, 1, cv.CV_32FC2, src), dm = cv.matFromArray(dst.length / 2, 1, cv.CV_32FC2, dst);
  const mask = new cv.Mat();
  const hm = cv.findHomography(sm, dm, cv.RANSAC, 2, mask);
  const h = Float64Array.from(hm.data64F);
  // Inliers: the matches OpenCV's homography transfers within its RANSAC threshold.
  let inliers = 0;
  const points: number[] = [];
  for (let i = 0; i < src.length; i += 2) {
    const [u, v] = project(h, src[i], src[i + 1]);
    if (Math.hypot(u - dst[i], v - dst[i + 1]) > 2) continue;
    inliers++;
    points.push(src[i], src[i + 1], dst[i], dst[i + 1]);
  }
  [orb, ka, kb, da, db, none, bf, matches, sm, dm, mask, hm].forEach((m) => m.delete());
  return { h, inliers, points };
}

/** Largest distance between two maps of a's pixels (grid over a's frame, only where `keep` says). */
function maxDeviation(w: number, h: number, f: (x: number, y: number) => [number, number] | null, g: (x: number, y: number) => [number, number] | null, keep: (p: [number, number]) => boolean): number {
  let worst = 0;
  for (let y = 0; y < h; y += h / 16) {
    for (let x = 0; x < w; x += w / 16) {
      const p = f(x, y), q = g(x, y);
      if (!p || !q || !keep(p)) continue;
      worst = Math.max(worst, Math.hypot(p[0] - q[0], p[1] - q[1]));
    }
  }
  return worst;
}

const viaH = (hm: ArrayLike<number>) => (x: number, y: number): [number, number] => {
  const [u, v] = project(hm, x, y);
  return [u, v];
};

describe('photo-wall sequences against OpenCV', () => {
  it('renders an undistorted rotation whose frames OpenCV registers to the exact K R K^-1 homography', async () => {
    const { cv } = await loadOpenCV();
    const s = spec();
    // Both looking at the forest and the peaks (wall 2), pitched and rolled apart.
    const a = pose(100), b = pose(130, 4, 2);
    const ga = await renderGray(cv, s, a), gb = await renderGray(cv, s, b);
    const { h, inliers, points } = openCvHomography(cv, ga, gb);
    ga.delete();
    gb.delete();
    expect(inliers).toBeGreaterThan(100);
    // Exact homography of a camera turning about its centre (Hartley & Zisserman, 2nd ed., 8.4.2).
    const exact = rotationHomography(camera(s), a, camera(s), b);
    const inB = (p: [number, number]): boolean => p[0] > 20 && p[0] < W - 20 && p[1] > 20 && p[1] < H - 20;
    // Over the overlap, OpenCV's fit and the truth agree within 1.5 px (ORB keypoints are integer
    // pixel positions at their pyramid level, so a pixel or so is what such a fit is good for).
    const rms = (hm: ArrayLike<number>): number => {
      let s2 = 0;
      for (let i = 0; i < points.length; i += 4) {
        const [u, v] = viaH(hm)(points[i], points[i + 1]);
        s2 += (u - points[i + 2]) ** 2 + (v - points[i + 3]) ** 2;
      }
      return Math.sqrt(s2 / (points.length / 4));
    };
    // Measured at 960 x 640: 0.71 px apart at most; OpenCV's 1150 inliers sit 0.98 px RMS from the
    // truth, 0.97 px from OpenCV's own best fit: the exact homography explains them as well as any does.
    expect(maxDeviation(W, H, viaH(h), viaH(exact), inB)).toBeLessThan(1.5);
    expect(rms(exact)).toBeLessThan(1.1 * rms(h) + 0.05);
    // The generator's own lens mapping is the same homography when there is no distortion.
    expect(maxDeviation(W, H, pixelMapper(s, a, b), viaH(exact), inB)).toBeLessThan(1e-6);
  }, 30_000);

  it('bends straight lines as Brown\'s model says: OpenCV\'s undistort with (k1, k2) gives back the ideal frame', async () => {
    const { cv } = await loadOpenCV();
    const k1 = -0.08, k2 = 0.01;
    const p = pose(115, 3, 0);
    const ideal = await renderGray(cv, spec(), p);
    const bent = await renderGray(cv, spec({ k1, k2 }), p);
    const f = (28 / 36) * W;
    // OpenCV's distortion model is Brown's: x_d = x_u (1 + k1 r^2 + k2 r^4) on normalised coordinates.
    const k = cv.matFromArray(3, 3, cv.CV_64F, [f, 0, (W - 1) / 2, 0, f, (H - 1) / 2, 0, 0, 1]);
    const dist = cv.matFromArray(1, 5, cv.CV_64F, [k1, k2, 0, 0, 0]);
    const straightened = new cv.Mat();
    cv.undistort(bent, straightened, k, dist, k);
    const back = openCvHomography(cv, straightened, ideal);
    const raw = openCvHomography(cv, bent, ideal);
    [ideal, bent, k, dist, straightened].forEach((m) => m.delete());
    const identity = (x: number, y: number): [number, number] => [x, y];
    const inner = (q: [number, number]): boolean => q[0] > 50 && q[0] < W - 50 && q[1] > 50 && q[1] < H - 50;
    // Undistorted by OpenCV, the frame is the ideal one (measured 0.12 px at most at 960 x 640).
    expect(back.inliers).toBeGreaterThan(100);
    expect(maxDeviation(W, H, viaH(back.h), identity, inner)).toBeLessThan(0.5);
    // Not undistorted, no homography brings it there: the best one OpenCV finds is still 12 px off
    // somewhere in the frame at 960 x 640 (measured), so the test can tell the two apart.
    expect(maxDeviation(W, H, viaH(raw.h), identity, inner)).toBeGreaterThan(5);
  }, 30_000);
});

describe('photo-wall sequences: files and truth', () => {
  it('writes frames with the EXIF of the spec, only into the folder given, and never over anything', async () => {
    const folder = join(tempDir(), 'seq');
    const s: SequenceSpec = { ...spec(), width: 300, height: 200, exifFocalLengthMm: 27, exposureMode: 2, frames: [{ ...pose(0), time: 0, ev: -2, evBias: -2 }, { ...pose(30), time: 1.25 }], stray1x1: 'stray.jpg', duplicates: [{ of: 1, name: 'IMG_0002_1.jpg' }] };
    const written = await writeSequence(folder, s);
    expect((await readdir(folder)).sort()).toEqual(['IMG_0001.jpg', 'IMG_0002.jpg', 'IMG_0002_1.jpg', 'stray.jpg']);
    expect(Buffer.compare(await readFile(join(folder, 'IMG_0002.jpg')), await readFile(join(folder, 'IMG_0002_1.jpg')))).toBe(0);
    // exifr, an outside EXIF reader, sees the CIPA DC-008 tags as written.
    const e = await exifr.parse(join(folder, 'IMG_0001.jpg'), { reviveValues: false, translateValues: false });
    expect(e.ExposureTime).toBeCloseTo(1 / 500, 6);
    expect(e.ExposureCompensation).toBe(-2);
    expect(e.ExposureMode).toBe(2);
    expect(e.FocalLength).toBe(27);
    expect(e.FocalLengthIn35mmFormat).toBe(27);
    const e2 = await exifr.parse(join(folder, 'IMG_0002.jpg'), { reviveValues: false });
    expect([e2.DateTimeOriginal, e2.SubSecTimeOriginal]).toEqual(['2026:05:14 10:00:01', '250']);
    expect(await exifr.parse(join(folder, 'stray.jpg'))).toBeUndefined();
    expect(written.frames[0].focalPx).toBeCloseTo((28 / 36) * 300, 9);
    await expect(writeSequence(folder, s)).rejects.toThrow(/Expected an empty folder/);
    // Seeded: the same spec gives the same bytes (noise included).
    const again = join(tempDir(), 'again');
    await writeSequence(again, { ...s, noise: { read: 0.004, gain: 0.001 } });
    const third = join(tempDir(), 'third');
    await writeSequence(third, { ...s, noise: { read: 0.004, gain: 0.001 } });
    expect(Buffer.compare(await readFile(join(again, 'IMG_0002.jpg')), await readFile(join(third, 'IMG_0002.jpg')))).toBe(0);
    expect(Buffer.compare(await readFile(join(again, 'IMG_0002.jpg')), await readFile(join(folder, 'IMG_0002.jpg')))).not.toBe(0);
  }, 30_000);

  it('catalogues scenarios whose truth matches their geometry', () => {
    const all = scenarios();
    expect(new Set(all.map((s) => s.name)).size).toBe(all.length);
    for (const s of all) {
      if (s.kind === 'clean') expect(s.truth.findings).toEqual([]);
      else expect(s.truth.findings.length).toBeGreaterThan(0);
    }
    const gap = all.find((s) => s.name === 'fault-gap-8pc')!;
    const o = gap.truth.neighbourOverlaps.map((p) => p.overlap);
    expect(o[3]).toBeCloseTo(0.08, 2);
    expect(Math.min(...o.filter((_, i) => i !== 3))).toBeGreaterThan(0.4);
    const ae = all.find((s) => s.name === 'fault-ae-jump')!;
    expect(ae.truth.neighbourOverlaps[3].overlap).toBeCloseTo(0.33, 2);
    // Overlap is symmetric for a pure rotation of one camera up to the frame's shape; for a yaw turn, exactly.
    const sp = spec();
    expect(trueOverlap(sp, pose(0), pose(30))).toBeCloseTo(trueOverlap(sp, pose(30), pose(0)), 2);
  });
});
