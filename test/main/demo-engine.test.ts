// The engine on the demo shoot: the frames go through JPEG (sharp), are decoded at the analysis size
// (src/main/decode.ts) and matched (src/core/features/features.ts, src/core/pair/pair-geometry.ts); the result is
// compared with the analytic homography of the rotating camera (Hartley & Zisserman, Multiple View
// Geometry, 2nd ed., sec. 8.4.2: H = K_b R_b R_a^-1 K_a^-1) by the mean distance of the frame
// corners, as in test/core/features/synthetic-warps.test.ts. Keypoints should spread over textured land and avoid
// a clear sky, which has few corners (common practice; the reason for adaptive non-maximal
// suppression, Brown, Szeliski & Winder, CVPR 2005).
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { pixelAngle, pixelDirection } from '../../src/core/demo/camera.js';
import type { DemoPlan, PlannedFrame } from '../../src/core/demo/demo-plan.js';
import { demoCameraModel, planDemoShoot } from '../../src/core/demo/demo-plan.js';
import { renderJob, renderJobs } from '../../src/core/demo/demo-station.js';
import { plannedHomography } from '../../src/core/demo/demo-truth.js';
import { exposureDifference } from '../../src/core/pair/exposure.js';
import type { Features } from '../../src/core/features/features.js';
import { detectAndDescribe } from '../../src/core/features/features.js';
import { multiply } from '../../src/core/geometry/homography.js';
import { estimatePairGeometry } from '../../src/core/pair/pair-geometry.js';
import type { SceneView, Surface } from '../../src/core/demo/scene-radiance.js';
import { createScene, prepareSceneView, sceneCoordinates, surfaceAt } from '../../src/core/demo/scene-radiance.js';
import type { DecodedFrame } from '../../src/main/decode.js';
import { decodeForAnalysis } from '../../src/main/decode.js';
import { encodeDemoFrame } from '../../src/main/demo-writer.js';
import { meanCornerError } from '../helpers/images.js';

let root = '';
beforeAll(async () => {
  root = await mkdtemp(join(tmpdir(), 'seamscout-demo-engine-'));
});
afterAll(async () => {
  if (root) await rm(root, { recursive: true, force: true });
});

/** Renders the named frames of a plan, writes them as the demo writer does, decodes them at `maxSide`. */
async function decodeFrames(plan: DemoPlan, files: string[], maxSide: number): Promise<Map<string, DecodedFrame>> {
  const view = prepareSceneView(createScene(plan.seed), pixelAngle(demoCameraModel(plan.camera.width, plan.camera.height)));
  const byFile = new Map(plan.frames.map((f) => [f.file, f]));
  const out = new Map<string, DecodedFrame>();
  for (const job of renderJobs(plan, new Set(files))) {
    const images = renderJob(view, plan.camera.width, plan.camera.height, job);
    for (const [i, f] of job.frames.entries()) {
      const path = join(root, `${plan.seed}-${plan.camera.width}-${f.file}`);
      await writeFile(path, await encodeDemoFrame(images[i].data, byFile.get(f.file)!, plan.camera));
      out.set(f.file, await decodeForAnalysis(path, maxSide));
    }
  }
  return out;
}

/** s-times smaller analysis pixels from full-resolution ones (pixel centres at integers): x' = (x + 0.5) s - 0.5. */
function scaling(s: number): Float64Array {
  return Float64Array.of(s, 0, 0.5 * s - 0.5, 0, s, 0.5 * s - 0.5, 0, 0, 1);
}

/** What each of a grid of the frame's pixels looks at. */
function surfaces(view: SceneView, plan: DemoPlan, f: PlannedFrame, cols: number, rows: number): Surface[] {
  const cam = demoCameraModel(plan.camera.width, plan.camera.height);
  const out: Surface[] = [];
  for (let r = 0; r < rows; r++) {
    for (let c = 0; c < cols; c++) {
      const [yaw, h] = sceneCoordinates(...pixelDirection(cam, f, ((c + 0.5) * cam.width) / cols - 0.5, ((r + 0.5) * cam.height) / rows - 0.5));
      out.push(surfaceAt(view, yaw, h));
    }
  }
  return out;
}

const solid = (s: Surface): boolean => s === 'land' || s === 'structure';

describe('the engine on a clean demo shoot at 3000 x 2000, analysed at 1500 px', () => {
  const plan = planDemoShoot({ clean: true });
  const view = prepareSceneView(createScene(plan.seed), pixelAngle(demoCameraModel(3000, 2000)));
  const refs = plan.stations.map((s) => plan.frames.find((f) => f.file === s.reference)!);
  // The neighbour pair that sees most land in both frames (open sea and sky are measured below at 1500 px).
  const landShare = refs.map((f) => surfaces(view, plan, f, 30, 20).filter(solid).length / 600);
  let best = 0;
  for (let s = 1; s < refs.length - 1; s++) if (Math.min(landShare[s], landShare[s + 1]) > Math.min(landShare[best], landShare[best + 1])) best = s;
  const [a, b] = [refs[best], refs[best + 1]];
  let decoded: Map<string, DecodedFrame>;
  let fa: Features, fb: Features;

  beforeAll(async () => {
    decoded = await decodeFrames(plan, [a.file, b.file], 1500);
    fa = detectAndDescribe(decoded.get(a.file)!.image);
    fb = detectAndDescribe(decoded.get(b.file)!.image);
  });

  it('finds keypoints spread over the land and few in the sky', () => {
    const img = decoded.get(a.file)!.image;
    const cam = demoCameraModel(3000, 2000);
    const s = 3000 / img.width;
    const cols = 8, rows = 6;
    const cellSolid = new Array(cols * rows).fill(0), cellKeypoints = new Array(cols * rows).fill(0);
    const grid = surfaces(view, plan, a, cols * 5, rows * 5);
    grid.forEach((g, i) => {
      const c = Math.floor((i % (cols * 5)) / 5), r = Math.floor(Math.floor(i / (cols * 5)) / 5);
      if (solid(g)) cellSolid[r * cols + c]++;
    });
    let sky = 0;
    const k = fa.keypoints;
    for (let i = 0; i < k.count; i++) {
      const x = (k.x[i] + 0.5) * s - 0.5, y = (k.y[i] + 0.5) * s - 0.5;
      const [yaw, h] = sceneCoordinates(...pixelDirection(cam, a, x, y));
      // A few pixels above the skyline still count as the skyline's corner: look 4 px lower too.
      const [yaw2, h2] = sceneCoordinates(...pixelDirection(cam, a, x, y + 4 * s));
      if (surfaceAt(view, yaw, h) === 'sky' && surfaceAt(view, yaw2, h2) === 'sky') sky++;
      cellKeypoints[Math.min(rows - 1, Math.floor((y / 2000) * rows)) * cols + Math.min(cols - 1, Math.floor((x / 3000) * cols))]++;
    }
    const skyArea = grid.filter((g) => g === 'sky').length / grid.length;
    const landCells = cellSolid.map((n, i) => (n === 25 ? i : -1)).filter((i) => i >= 0);
    const covered = landCells.filter((i) => cellKeypoints[i] >= 5).length;
    console.log(`${a.file}: ${k.count} keypoints, ${sky} in the sky (${(100 * skyArea).toFixed(0)} % of the frame); ${covered} of ${landCells.length} all-land cells hold 5 or more`);
    expect(k.count).toBeGreaterThan(1000);
    expect(skyArea).toBeGreaterThan(0.1);
    expect(sky / k.count).toBeLessThan(0.25 * skyArea);
    expect(landCells.length).toBeGreaterThan(10);
    expect(covered / landCells.length).toBeGreaterThan(0.9);
  });

  it('matches a neighbour pair with the frame corners within 3 px of the truth at full resolution', () => {
    const g = estimatePairGeometry(fa, fb);
    expect(g.homography, `no model: ${g.noModel}`).not.toBeNull();
    const s = decoded.get(a.file)!.image.width / 3000;
    // Analysis homography back to full resolution: S^-1 H S.
    const full = multiply(multiply(scaling(1 / s), g.homography!), scaling(s));
    const err = meanCornerError(full, plannedHomography(plan, a, b), 3000, 2000);
    console.log(`${a.file} -> ${b.file}: ${g.inliers} inliers of ${g.matches.count} matches, corner error ${err.toFixed(2)} px at full resolution`);
    expect(err).toBeLessThan(3);
  });
});

describe('the engine on every neighbour pair of a clean demo shoot at 1500 x 1000', () => {
  it('matches all of them, the closure pair included, near the truth', async () => {
    const plan = planDemoShoot({ clean: true, width: 1500, height: 1000 });
    const refs = plan.stations.map((s) => plan.frames.find((f) => f.file === s.reference)!);
    const brackets = plan.frames.filter((f) => f.station < 3);
    const decoded = await decodeFrames(plan, [...new Set([...refs, ...brackets].map((f) => f.file))], 1500);
    const features = new Map(refs.map((f) => [f.file, detectAndDescribe(decoded.get(f.file)!.image)]));
    const errors: number[] = [];
    for (let i = 0; i < refs.length; i++) {
      const a = refs[i], b = refs[(i + 1) % refs.length];
      const g = estimatePairGeometry(features.get(a.file)!, features.get(b.file)!);
      expect(g.homography, `${a.file} -> ${b.file}: ${g.noModel}`).not.toBeNull();
      errors.push(meanCornerError(g.homography!, plannedHomography(plan, a, b), 1500, 1000));
    }
    const sorted = [...errors].sort((x, y) => x - y);
    console.log(`corner errors over ${errors.length} pairs: median ${sorted[sorted.length >> 1].toFixed(2)} px, worst ${sorted[sorted.length - 1].toFixed(2)} px`);
    expect(sorted[sorted.length >> 1]).toBeLessThan(2);
    expect(sorted[sorted.length - 1]).toBeLessThan(6);

    // The engine's EV measure (src/core/pair/exposure.ts, linear light per IEC 61966-2-1) on bracket
    // frames of one view, through JPEG and greyscale decoding: the bias steps of 2 EV (APEX).
    const identity = [1, 0, 0, 0, 1, 0, 0, 0, 1];
    for (let st = 0; st < 3; st++) {
      const [lo, mid, hi] = plan.frames.filter((f) => f.station === st).map((f) => decoded.get(f.file)!.image);
      expect(Math.abs(exposureDifference(lo, mid, identity)!.ev - 2)).toBeLessThan(0.05);
      expect(Math.abs(exposureDifference(mid, hi, identity)!.ev - 2)).toBeLessThan(0.05);
    }
  });
});
