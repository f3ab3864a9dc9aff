// Camera rotations from pair homographies: on views of a pinhole camera turning about its centre,
// whose homographies follow from the published model H = K_b R_b R_a^T K_a^-1 (Hartley & Zisserman,
// Multiple View Geometry, sec. 8.4.2), the chain and the joint refinement must give back the poses
// and the focal length.
import { describe, expect, it } from 'vitest';
import type { Pose } from '../../../src/core/demo/camera.js';
import { cameraModel, focalLengthPx, rotationHomography } from '../../../src/core/demo/camera.js';
import { project } from '../../../src/core/geometry/homography.js';
import { createRandom } from '../../../src/core/numeric/random.js';
import type { RotationLink } from '../../../src/core/geometry/rotations.js';
import { chainRotations, focalFromHomography, rotationAngleOf, stationPoses } from '../../../src/core/geometry/rotations.js';
import { multiply, transpose } from '../../../src/core/numeric/matrix3.js';
import { bundleAdjust } from '../../../src/core/geometry/lens-bundle.js';

const camera = cameraModel(3000, 2000, 35);
const f = focalLengthPx(camera);
const size = { width: 3000, height: 2000 };

function turn(stations: number, seed: number): Pose[] {
  const rnd = createRandom(seed);
  return Array.from({ length: stations }, (_, k) => ({ yawDeg: 40 + (360 / stations) * k + 2 * (rnd.next() - 0.5), pitchDeg: 1.5 * (rnd.next() - 0.5), rollDeg: 1.5 * (rnd.next() - 0.5) }));
}

/** Tie points: a grid over a that lands inside b, with b's side disturbed by noise of sd `noise` px. */
function link(poses: Pose[], i: number, j: number, noise: number, seed: number): RotationLink {
  const h = rotationHomography(camera, poses[i], camera, poses[j]);
  const rnd = createRandom(seed);
  const pts: number[] = [];
  for (let y = 20; y < 2000; y += 90)
    for (let x = 20; x < 3000; x += 90) {
      const [u, v, w] = project(h, x, y);
      if (w > 0 && u >= 0 && v >= 0 && u < 3000 && v < 2000) pts.push(x, y, u + noise * rnd.normal(), v + noise * rnd.normal());
    }
  return { i, j, homography: h, points: Float64Array.from(pts) };
}

const wrap = (d: number): number => ((((d + 180) % 360) + 360) % 360) - 180;

describe('camera rotations from pair homographies', () => {
  const poses = turn(12, 3);
  const links = poses.slice(1).map((_, k) => link(poses, k, k + 1, 0.3, k));
  const sizes = poses.map(() => size);

  it('finds the focal length of each turn from its homography alone', () => {
    for (const l of links) expect(Math.abs(focalFromHomography(l.homography, size, size)! / f - 1)).toBeLessThan(0.01);
  });

  it('chains the rotations so that yaw, pitch and roll come back', () => {
    const r = chainRotations(12, links, f, sizes);
    const est = stationPoses(r);
    for (let k = 1; k < 12; k++) {
      expect(Math.abs(wrap(est[k]!.yawDeg - (poses[k].yawDeg - poses[0].yawDeg))), `yaw of station ${k}`).toBeLessThan(0.2);
      // Pitch and roll against the estimated level: off by the mean tilt of the set at most.
      expect(Math.abs(est[k]!.pitchDeg - poses[k].pitchDeg), `pitch of station ${k}`).toBeLessThan(0.6);
      expect(Math.abs(est[k]!.rollDeg - poses[k].rollDeg), `roll of station ${k}`).toBeLessThan(0.6);
    }
  });

  it('refines rotations and the focal length jointly from a focal length 15 % off', () => {
    const start = chainRotations(12, links, 1.15 * f, sizes);
    const refined = bundleAdjust(start, links, 1.15 * f, sizes, { refineFocal: true });
    expect(Math.abs(refined.focalPx / f - 1)).toBeLessThan(0.003);
    expect(refined.rmsPx).toBeLessThan(0.6);
    const est = stationPoses(refined.rotations);
    for (let k = 1; k < 12; k++) expect(Math.abs(wrap(est[k]!.yawDeg - (poses[k].yawDeg - poses[0].yawDeg)))).toBeLessThan(0.05);
  });

  it('measures how far the chain misses closing against the closure pair', () => {
    const closure = link(poses, 11, 0, 0.3, 99);
    const r = chainRotations(12, links, f, sizes);
    const measured = chainRotations(2, [{ ...closure, i: 0, j: 1 }], f, [size, size])[1]!;
    const predicted = multiply(r[0]!, transpose(r[11]!));
    expect(rotationAngleOf(multiply(measured, transpose(predicted)))).toBeLessThan(0.05);
    // One neighbour homography a degree off in yaw: the chain misses by that degree.
    const bent = poses.map((p, k) => (k >= 6 ? { ...p, yawDeg: p.yawDeg + 1 } : p));
    const off = links.map((l, k) => (k === 5 ? { ...l, homography: rotationHomography(camera, poses[5], camera, bent[6]) } : l));
    const r2 = chainRotations(12, off, f, sizes);
    expect(rotationAngleOf(multiply(measured, transpose(multiply(r2[0]!, transpose(r2[11]!)))))).toBeGreaterThan(0.9);
  });

  it('leaves stations no matched pair reaches without a rotation', () => {
    const r = chainRotations(12, links.filter((l) => l.i !== 5), f, sizes);
    expect(r.slice(0, 6).every((x) => x !== null)).toBe(true);
    expect(r.slice(6).every((x) => x === null)).toBe(true);
  });
});
