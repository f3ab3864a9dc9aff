// The demo shoot's virtual camera and renderer: pinhole geometry against the analytic rotating-camera
// homography (Hartley & Zisserman, Multiple View Geometry, 2nd ed., sec. 8.4.2: H = K_b R_b R_a^-1
// K_a^-1), exposure in linear light (APEX: a step of 1 EV doubles the light; sRGB decoding per IEC
// 61966-2-1), natural vignetting (the cos^4 law, common practice), motion blur as a box filter in
// linear light (common practice) and signal-dependent sensor noise (Poisson-Gaussian model, variance
// a * signal + b: Foi et al., "Practical Poissonian-Gaussian noise modeling and fitting for
// single-image raw-data", IEEE TIP 2008 (memory)).
import { describe, expect, it } from 'vitest';
import type { Pose } from '../../../src/core/demo/camera.js';
import {
  cameraModel, focalLength35mm, focalLengthPx, horizontalFovDeg, intrinsics, pixelAngle, pixelDirection, rotationHomography, worldToCamera,
} from '../../../src/core/demo/camera.js';
import { invert, project } from '../../../src/core/geometry/homography.js';
import type { FloatImage } from '../../../src/core/image/image.js';
import type { RadianceImage } from '../../../src/core/demo/render.js';
import { exposeFrame, radianceLuminance, renderRadiance } from '../../../src/core/demo/render.js';
import { createScene, prepareSceneView, radianceAlong, sceneCoordinates } from '../../../src/core/demo/scene-radiance.js';
import { linearOf8bit, linearToSrgb } from '../../../src/core/image/srgb.js';
import { warpBilinear } from '../../../src/core/image/warp.js';

const W = 600, H = 400;
const camera = cameraModel(W, H, 35);
const view = prepareSceneView(createScene(1), pixelAngle(camera));
const deg = Math.PI / 180;

/** Pinhole projection of a world direction d: x = K R d (Hartley & Zisserman, eq. 6.8, camera at the origin). */
function projectDirection(pose: Pose, d: readonly number[]): [number, number, number] {
  const r = worldToCamera(pose);
  const k = intrinsics(camera);
  const c = [0, 1, 2].map((i) => r[3 * i] * d[0] + r[3 * i + 1] * d[1] + r[3 * i + 2] * d[2]);
  return [(k[0] * c[0]) / c[2] + k[2], (k[4] * c[1]) / c[2] + k[5], c[2]];
}

/** An 8-bit-scale float image of the luminance, sRGB-encoded (what a viewer compares). */
function encodedLuminance(r: RadianceImage): FloatImage {
  const lum = radianceLuminance(r);
  const data = new Float32Array(lum.length);
  for (let i = 0; i < lum.length; i++) data[i] = 255 * linearToSrgb(Math.min(1, lum[i]));
  return { width: r.width, height: r.height, data };
}

function meanAbsDifference(a: FloatImage, b: FloatImage): { mad: number; n: number } {
  let s = 0, n = 0;
  for (let i = 0; i < a.data.length; i++) {
    if (Number.isNaN(a.data[i])) continue;
    s += Math.abs(a.data[i] - b.data[i]);
    n++;
  }
  return { mad: s / n, n };
}

describe('virtual camera', () => {
  it('has the pinhole intrinsics and field of view of a 35 mm lens on a 36 x 24 mm sensor', () => {
    // f_px = f_mm / sensor width * W; principal point at the centre of pixel-centred coordinates.
    expect(focalLengthPx(camera)).toBeCloseTo((35 / 36) * 600, 10);
    expect(Array.from(intrinsics(camera))).toEqual([(35 / 36) * 600, 0, 299.5, 0, (35 / 36) * 600, 199.5, 0, 0, 1]);
    // Horizontal field of view 2 atan(18 / 35) = 54.43 degrees (pinhole, common practice).
    expect(horizontalFovDeg(camera)).toBeCloseTo((2 * Math.atan(18 / 35) * 180) / Math.PI, 10);
    // On a full-frame sensor the 35 mm equivalent is the focal length itself (CIPA DC-008 FocalLengthIn35mmFilm).
    expect(focalLength35mm(camera)).toBeCloseTo(35, 10);
    expect(camera.sensorHeightMm).toBeCloseTo(24, 10);
  });

  it('turns right for positive yaw, up for positive pitch, and sees straight ahead at the principal point', () => {
    const [yaw0, h0] = sceneCoordinates(...pixelDirection(camera, { yawDeg: 0, pitchDeg: 0, rollDeg: 0 }, 299.5, 199.5));
    expect(yaw0).toBeCloseTo(0, 12);
    expect(h0).toBeCloseTo(0, 12);
    // A frame turned 10 degrees right sees at its centre what the straight frame sees f tan(10 deg) px right of its centre.
    const d = pixelDirection(camera, { yawDeg: 10, pitchDeg: 0, rollDeg: 0 }, 299.5, 199.5);
    const [x, y] = projectDirection({ yawDeg: 0, pitchDeg: 0, rollDeg: 0 }, d);
    expect(x).toBeCloseTo(299.5 + focalLengthPx(camera) * Math.tan(10 * deg), 8);
    expect(y).toBeCloseTo(199.5, 8);
    // Pitched up, the centre looks above the horizon: image y grows downwards.
    const up = pixelDirection(camera, { yawDeg: 0, pitchDeg: 5, rollDeg: 0 }, 299.5, 199.5);
    expect(projectDirection({ yawDeg: 0, pitchDeg: 0, rollDeg: 0 }, up)[1]).toBeCloseTo(199.5 - focalLengthPx(camera) * Math.tan(5 * deg), 8);
  });

  it('gives H_ab = K_b R_b R_a^-1 K_a^-1 that maps each pixel of a to where b sees the same direction', () => {
    const a: Pose = { yawDeg: 100, pitchDeg: 0.7, rollDeg: -0.4 };
    const b: Pose = { yawDeg: 127, pitchDeg: -0.5, rollDeg: 0.8 };
    const h = rotationHomography(camera, a, camera, b);
    expect(h[8]).toBe(1);
    for (const [x, y] of [[0, 0], [599, 0], [599, 399], [0, 399], [300, 200], [555.5, 17.25]]) {
      const [u, v, depth] = projectDirection(b, pixelDirection(camera, a, x, y));
      const [hu, hv, w] = project(h, x, y);
      expect(hu).toBeCloseTo(u, 7);
      expect(hv).toBeCloseTo(v, 7);
      // w > 0 exactly when the ray is in front of b (the orientPositive convention of homography.ts).
      expect(w > 0).toBe(depth > 0);
    }
  });
});

describe('rendering', () => {
  const a: Pose = { yawDeg: 250, pitchDeg: 0.6, rollDeg: -0.5 };
  const b: Pose = { yawDeg: 268, pitchDeg: -0.3, rollDeg: 0.7 };

  it('renders overlapping frames that the truth homography aligns, and a homography 0.5 degrees off does not', () => {
    const ra = renderRadiance(view, camera, a, { vignetting: false });
    const rb = renderRadiance(view, camera, b, { vignetting: false });
    const ia = encodedLuminance(ra), ib = encodedLuminance(rb);
    const truth = rotationHomography(camera, a, camera, b);
    // warpBilinear takes the map from destination (b) pixels to source (a) pixels: H^-1.
    const aligned = meanAbsDifference(warpBilinear(ia, invert(truth)!, W, H), ib);
    const off = rotationHomography(camera, a, camera, { ...b, yawDeg: b.yawDeg + 0.5 });
    const misaligned = meanAbsDifference(warpBilinear(ia, invert(off)!, W, H), ib);
    console.log(`warp by the truth: MAD ${aligned.mad.toFixed(2)} levels over ${aligned.n} px; 0.5 deg off: ${misaligned.mad.toFixed(2)}`);
    expect(aligned.n).toBeGreaterThan(0.4 * W * H);
    expect(aligned.mad).toBeLessThan(3);
    expect(misaligned.mad).toBeGreaterThan(3 * aligned.mad);
  });

  it('is a function of the seed: same seed, same radiance; another seed, another scene', () => {
    const again = renderRadiance(prepareSceneView(createScene(1), pixelAngle(camera)), camera, a);
    const first = renderRadiance(view, camera, a);
    expect(Buffer.from(again.data.buffer).equals(Buffer.from(first.data.buffer))).toBe(true);
    const other = encodedLuminance(renderRadiance(prepareSceneView(createScene(2), pixelAngle(camera)), camera, a));
    expect(meanAbsDifference(other, encodedLuminance(first)).mad).toBeGreaterThan(10);
  });

  it('renders each pixel as the radiance along its pinhole ray', () => {
    const img = renderRadiance(view, camera, a, { vignetting: false });
    const px = new Float32Array(3);
    for (const [x, y] of [[0, 0], [599, 0], [321, 187], [17, 399], [599, 399]]) {
      radianceAlong(view, ...pixelDirection(camera, a, x, y), px);
      for (let c = 0; c < 3; c++) expect(img.data[3 * (y * W + x) + c]).toBeCloseTo(px[c], 4);
    }
  });

  it('darkens towards the corners by cos^4 of the off-axis angle', () => {
    const flat = renderRadiance(view, camera, a, { vignetting: false });
    const vig = renderRadiance(view, camera, a);
    const f = focalLengthPx(camera);
    for (const [x, y] of [[0, 0], [599, 399], [300, 0], [450, 300]]) {
      const cosTheta = 1 / Math.hypot((x - 299.5) / f, (y - 199.5) / f, 1);
      const i = 3 * (y * W + x);
      for (let c = 0; c < 3; c++) expect(vig.data[i + c] / flat.data[i + c]).toBeCloseTo(Math.pow(cosTheta, 4), 5);
    }
  });
});

describe('exposure', () => {
  const pose: Pose = { yawDeg: 300, pitchDeg: 0, rollDeg: 0 };
  const radiance = renderRadiance(view, camera, pose);

  it('scales linear light by 2^dEV: the mean ratio of unclipped samples matches within 0.05 EV', () => {
    for (const [evA, evB] of [[0, -2], [0, 2], [-2, 1.3], [0, 0.5]]) {
      const fa = exposeFrame(radiance, { ev: evA, noiseSeed: 11 });
      const fb = exposeFrame(radiance, { ev: evB, noiseSeed: 12 });
      let sa = 0, sb = 0, n = 0;
      for (let i = 0; i < fa.data.length; i++) {
        const va = fa.data[i], vb = fb.data[i];
        if (va <= 4 || va >= 250 || vb <= 4 || vb >= 250) continue;
        sa += linearOf8bit[va];
        sb += linearOf8bit[vb];
        n++;
      }
      expect(n).toBeGreaterThan(0.2 * fa.data.length);
      expect(Math.abs(Math.log2(sb / sa) - (evB - evA))).toBeLessThan(0.05);
    }
  });

  it('clips at white and keeps unit-luminance tints: more exposure never darkens a sample', () => {
    const lo = exposeFrame(radiance, { ev: 0 });
    const hi = exposeFrame(radiance, { ev: 3 });
    let clipped = 0, darker = 0;
    for (let i = 0; i < lo.data.length; i++) {
      if (hi.data[i] < lo.data[i]) darker++;
      if (hi.data[i] === 255) clipped++;
    }
    expect(darker).toBe(0);
    expect(clipped).toBeGreaterThan(0);
  });

  it('blurs horizontally as a box of N pixels in linear light', () => {
    // A single bright column on black: after a box of 5 px, five columns hold a fifth of it each.
    const w = 40, h = 3;
    const data = new Float32Array(w * h * 3);
    for (let y = 0; y < h; y++) for (let c = 0; c < 3; c++) data[3 * (y * w + 20) + c] = 0.5;
    const out = exposeFrame({ width: w, height: h, data }, { blurPx: 5 });
    for (let x = 0; x < w; x++) {
      const expected = x >= 18 && x <= 22 ? 0.1 : 0;
      expect(linearOf8bit[out.data[3 * (w + x)]]).toBeCloseTo(expected, 2);
    }
  });

  it('adds noise whose variance grows with the signal as shot * signal + read^2', () => {
    const shotNoise = 1 / 3000, readNoise = 0.0008;
    for (const level of [0.05, 0.3]) {
      const data = new Float32Array(200 * 200 * 3).fill(level);
      const out = exposeFrame({ width: 200, height: 200, data }, { noiseSeed: 5, shotNoise, readNoise });
      let s = 0, s2 = 0;
      for (const v of out.data) {
        const l = linearOf8bit[v];
        s += l;
        s2 += l * l;
      }
      const n = out.data.length;
      const sd = Math.sqrt(s2 / n - (s / n) ** 2);
      expect(s / n).toBeCloseTo(level, 3);
      // Within 10 %: 8-bit quantisation adds a little variance of its own.
      expect(sd / Math.sqrt(shotNoise * level + readNoise * readNoise)).toBeGreaterThan(0.95);
      expect(sd / Math.sqrt(shotNoise * level + readNoise * readNoise)).toBeLessThan(1.1);
    }
  });
});
