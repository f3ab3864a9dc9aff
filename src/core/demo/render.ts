/**
 * Rendering a demo frame: the scene's radiance through the virtual camera (render once per station
 * pose), then per exposure: gain, motion blur, sensor noise, clipping and sRGB encoding to 8 bits.
 */
import type { CameraModel, Pose } from './camera.js';
import { expectCamera, focalLengthPx, worldToCamera } from './camera.js';
import { latticeHash } from './lattice-noise.js';
import { createRandom } from '../numeric/random.js';
import type { SceneView } from './scene-radiance.js';
import { shadeDirection } from './scene-radiance.js';
import { linearToSrgb } from '../image/srgb.js';
import type { RadialDistortion } from '../geometry/lens.js';
import { isPinhole, undistortRadius } from '../geometry/lens.js';

/** Linear-light RGB of one view at 0 EV, interleaved (R, G, B per pixel), row-major. */
export interface RadianceImage {
  readonly width: number;
  readonly height: number;
  readonly data: Float32Array;
}

/**
 * The ideal (undistorted) normalised point of pixel (x, y) into out[0], out[1]; false where the lens
 * images nothing (its model folds back before that radius).
 */
function idealPoint(x: number, y: number, cx: number, cy: number, f: number, d: RadialDistortion | null, out: Float64Array): boolean {
  const xd = (x - cx) / f, yd = (y - cy) / f;
  if (isPinhole(d)) {
    out[0] = xd;
    out[1] = yd;
    return true;
  }
  const rd = Math.sqrt(xd * xd + yd * yd);
  const ru = undistortRadius(rd, d!.k1, d!.k2);
  if (!Number.isFinite(ru)) return false;
  const s = rd > 0 ? ru / rd : 1;
  out[0] = xd * s;
  out[1] = yd * s;
  return true;
}

/**
 * Paints a figure into a radiance image: the directions within its box get a dark coat with light
 * horizontal bands (texture a matcher can see), over whatever the scene had there.
 */
export function paintVisitor(radiance: RadianceImage, camera: CameraModel, pose: Pose, v: { yawDeg: number; pitchDeg: number; widthDeg: number; heightDeg: number }, distortion: RadialDistortion | null = null): void {
  const { width, height, data } = radiance;
  const r = worldToCamera(pose);
  const f = focalLengthPx(camera);
  const cx = (width - 1) / 2, cy = (height - 1) / 2;
  const deg = 180 / Math.PI;
  const ideal = new Float64Array(2);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      if (!idealPoint(x, y, cx, cy, f, distortion, ideal)) continue;
      const u = ideal[0], vv = ideal[1];
      const dx = r[0] * u + r[3] * vv + r[6], dy = r[1] * u + r[4] * vv + r[7], dz = r[2] * u + r[5] * vv + r[8];
      const yaw = Math.atan2(dx, dz) * deg;
      const e = Math.atan2(dy, Math.hypot(dx, dz)) * deg;
      const dyaw = ((((yaw - v.yawDeg) % 360) + 540) % 360) - 180;
      if (Math.abs(dyaw) > v.widthDeg / 2 || Math.abs(e - v.pitchDeg) > v.heightDeg / 2) continue;
      const band = Math.sin(((e - v.pitchDeg) / v.heightDeg) * 9 * Math.PI) > 0.3 ? 0.5 : 0.03;
      const o = 3 * (y * width + x);
      data[o] = band;
      data[o + 1] = band * 0.6;
      data[o + 2] = band * 0.5;
    }
  }
}

/** A vertical post near the camera (metres; world frame: y up, z forward at yaw 0, x right). */
export interface NearPost {
  readonly x: number;
  readonly z: number;
  readonly radius: number;
  readonly bottom: number;
  readonly top: number;
}

/**
 * Paints near posts into a radiance image seen from `centre` (metres): each pixel's ray is cut with
 * every post's cylinder, and the nearest hit shades the post, striped along its height, times the
 * same cos^4 vignetting as the scene. A camera whose centre is off its pivot sees the posts shift
 * against the distant scene from one station to the next: parallax.
 */
export function paintPosts(radiance: RadianceImage, camera: CameraModel, pose: Pose, posts: readonly NearPost[], centre: readonly [number, number, number], distortion: RadialDistortion | null = null): void {
  const { width, height, data } = radiance;
  const r = worldToCamera(pose);
  const f = focalLengthPx(camera);
  const cx = (width - 1) / 2, cy = (height - 1) / 2;
  const [ox, oy, oz] = centre;
  const ideal = new Float64Array(2);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      if (!idealPoint(x, y, cx, cy, f, distortion, ideal)) continue;
      const u = ideal[0], v = ideal[1];
      const dx = r[0] * u + r[3] * v + r[6], dy = r[1] * u + r[4] * v + r[7], dz = r[2] * u + r[5] * v + r[8];
      let best = Infinity, hitY = 0, hitA = 0;
      for (const p of posts) {
        // |(o + t d) - p| = radius in the horizontal plane.
        const qx = ox - p.x, qz = oz - p.z;
        const a = dx * dx + dz * dz, b = 2 * (qx * dx + qz * dz), c = qx * qx + qz * qz - p.radius * p.radius;
        const disc = b * b - 4 * a * c;
        if (disc < 0 || a === 0) continue;
        const t = (-b - Math.sqrt(disc)) / (2 * a);
        if (!(t > 0) || t >= best) continue;
        const hy = oy + t * dy;
        if (hy < p.bottom || hy > p.top) continue;
        best = t;
        hitY = hy;
        hitA = Math.atan2(qx + t * dx, qz + t * dz);
      }
      if (best === Infinity) continue;
      const band = Math.sin(hitY * 2 * Math.PI / 0.14) > 0 ? 0.55 : 0.06;
      const shade = band * (0.8 + 0.2 * Math.cos(hitA));
      const q = 1 / (1 + u * u + v * v);
      const o = 3 * (y * width + x);
      data[o] = shade * q * q;
      data[o + 1] = 0.85 * shade * q * q;
      data[o + 2] = 0.6 * shade * q * q;
    }
  }
}

/** 8-bit sRGB-encoded RGB, interleaved, row-major: what goes into the JPEG encoder. */
export interface RgbImage {
  readonly width: number;
  readonly height: number;
  readonly data: Uint8Array;
}

export interface RadianceOptions {
  /** Natural vignetting, cos^4 of the off-axis angle (default on). */
  readonly vignetting: boolean;
  /**
   * Radial distortion of the lens (lens.ts: Brown's model on focal-normalised coordinates); none by
   * default. Each output pixel is a distorted point: it is undistorted before its ray is cast.
   */
  readonly distortion: RadialDistortion | null;
}

/**
 * The scene as the camera at `pose` sees it: one sample of the band-limited radiance per pixel
 * centre, times cos^4 of the angle off the optical axis (natural vignetting of a pinhole; the
 * cos^4 law, common practice).
 */
export function renderRadiance(view: SceneView, camera: CameraModel, pose: Pose, options: Partial<RadianceOptions> = {}, out?: Float32Array): RadianceImage {
  expectCamera(camera, 'camera');
  const { width, height } = camera;
  const vignetting = options.vignetting ?? true;
  const n = width * height * 3;
  const data = out && out.length >= n ? out.subarray(0, n) : new Float32Array(n);
  const r = worldToCamera(pose);
  const f = focalLengthPx(camera);
  const cx = (width - 1) / 2, cy = (height - 1) / 2;
  const twoPi = 2 * Math.PI;
  if (!isPinhole(options.distortion)) {
    renderDistorted(view, r, f, width, height, options.distortion!, vignetting, data);
    return { width, height, data };
  }
  // World ray of pixel (x, y) = R^T (u, v, 1) with u = (x - cx) / f, v = (y - cy) / f: linear in x
  // along a row, so each row starts from its left end and steps.
  const sx = r[0] / f, sy = r[1] / f, sz = r[2] / f;
  for (let y = 0; y < height; y++) {
    const v = (y - cy) / f;
    const u0 = -cx / f;
    let dx = r[0] * u0 + r[3] * v + r[6];
    let dy = r[1] * u0 + r[4] * v + r[7];
    let dz = r[2] * u0 + r[5] * v + r[8];
    let o = y * width * 3;
    for (let x = 0; x < width; x++, o += 3) {
      let yaw = Math.atan2(dx, dz);
      if (yaw < 0) yaw += twoPi;
      shadeDirection(view, yaw, dy / Math.sqrt(dx * dx + dz * dz), data, o);
      if (vignetting) {
        const u = (x - cx) / f;
        const q = 1 / (1 + u * u + v * v);
        const c4 = q * q;
        data[o] *= c4;
        data[o + 1] *= c4;
        data[o + 2] *= c4;
      }
      dx += sx;
      dy += sy;
      dz += sz;
    }
  }
  return { width, height, data };
}

/** renderRadiance through a distorting lens: every pixel's ideal position by Newton's method, then its ray. */
function renderDistorted(view: SceneView, r: Float64Array, f: number, width: number, height: number, d: RadialDistortion, vignetting: boolean, data: Float32Array): void {
  const cx = (width - 1) / 2, cy = (height - 1) / 2;
  const twoPi = 2 * Math.PI;
  for (let y = 0, o = 0; y < height; y++) {
    const yd = (y - cy) / f;
    for (let x = 0; x < width; x++, o += 3) {
      const xd = (x - cx) / f;
      const rd = Math.sqrt(xd * xd + yd * yd);
      const ru = undistortRadius(rd, d.k1, d.k2);
      if (!Number.isFinite(ru)) {
        // The lens folds back before this radius: nothing is imaged here.
        data[o] = data[o + 1] = data[o + 2] = 0;
        continue;
      }
      const s = rd > 0 ? ru / rd : 1;
      const u = xd * s, v = yd * s;
      const dx = r[0] * u + r[3] * v + r[6], dy = r[1] * u + r[4] * v + r[7], dz = r[2] * u + r[5] * v + r[8];
      let yaw = Math.atan2(dx, dz);
      if (yaw < 0) yaw += twoPi;
      shadeDirection(view, yaw, dy / Math.sqrt(dx * dx + dz * dz), data, o);
      if (vignetting) {
        const q = 1 / (1 + u * u + v * v);
        const c4 = q * q;
        data[o] *= c4;
        data[o + 1] *= c4;
        data[o + 2] *= c4;
      }
    }
  }
}

export interface ExposureOptions {
  /** Exposure relative to the radiance in EV: linear light is multiplied by 2^ev. */
  readonly ev: number;
  /** Horizontal motion blur: a box of this many pixels in linear light (0 or 1 for none). */
  readonly blurPx: number;
  /** Seed of the sensor noise; null for none. */
  readonly noiseSeed: number | null;
  /** Shot noise: variance per unit of linear signal (signal-dependent part). */
  readonly shotNoise: number;
  /** Read noise: standard deviation in linear units (the floor). */
  readonly readNoise: number;
}

export const defaultExposureOptions: ExposureOptions = { ev: 0, blurPx: 0, noiseSeed: null, shotNoise: 1 / 3000, readNoise: 0.0008 };

/** 8-bit sRGB code of linear light l = i / (lutSize - 1), rounded (IEC 61966-2-1). */
const lutSize = 65536;
const encodeLut = Uint8Array.from({ length: lutSize }, (_, i) => Math.round(255 * linearToSrgb(i / (lutSize - 1))));

/** Standard normal deviates drawn once from a fixed seed; a frame's noise picks among them by hashing. */
const normalBits = 10;
const normalTableSize = 1 << normalBits;
const normalMask = normalTableSize - 1;
const normalTable = ((): Float32Array => {
  const rnd = createRandom(0x6e6f6973);
  return Float32Array.from({ length: normalTableSize }, () => rnd.normal());
})();

/**
 * One exposure of a rendered view: linear light times 2^ev, a horizontal box blur, Gaussian sensor
 * noise with variance shot * signal + read^2 (signal-dependent), clipped at 1 and sRGB-encoded to 8
 * bits. Deterministic for a given noise seed.
 */
export function exposeFrame(radiance: RadianceImage, options: Partial<ExposureOptions> = {}, out?: Uint8Array): RgbImage {
  const o = { ...defaultExposureOptions, ...options };
  const { width, height, data: src } = radiance;
  if (!Number.isFinite(o.ev)) throw new TypeError(`Expected a finite number for ev but received ${o.ev}`);
  if (!Number.isInteger(o.blurPx) || o.blurPx < 0 || o.blurPx > width) throw new TypeError(`Expected a whole number of pixels from 0 to ${width} for blurPx but received ${o.blurPx}`);
  const n = width * height * 3;
  const dst = out && out.length >= n ? out.subarray(0, n) : new Uint8Array(n);
  const gain = Math.pow(2, o.ev);
  const noisy = o.noiseSeed !== null;
  const noiseKey = noisy ? (createRandom(o.noiseSeed!).next() * 4294967296) | 0 : 0;
  const shot = o.shotNoise, read2 = o.readNoise * o.readNoise;
  const row = new Float32Array(width * 3);
  const scale = lutSize - 1;
  for (let y = 0; y < height; y++) {
    const start = y * width * 3;
    const line = o.blurPx > 1 ? boxBlurRow(src, start, width, o.blurPx, row) : src.subarray(start, start + width * 3);
    for (let x = 0, i = 0; x < width; x++, i += 3) {
      let r = line[i] * gain, g = line[i + 1] * gain, b = line[i + 2] * gain;
      if (noisy) {
        // One hash of the pixel's position and the frame's noise key picks the three channels' deviates.
        const h = (latticeHash(x, y, noiseKey) * 4294967296) >>> 0;
        r += Math.sqrt(shot * r + read2) * normalTable[h & normalMask];
        g += Math.sqrt(shot * g + read2) * normalTable[(h >>> normalBits) & normalMask];
        b += Math.sqrt(shot * b + read2) * normalTable[(h >>> (2 * normalBits)) & normalMask];
      }
      dst[start + i] = r <= 0 ? 0 : r >= 1 ? 255 : encodeLut[(r * scale + 0.5) | 0];
      dst[start + i + 1] = g <= 0 ? 0 : g >= 1 ? 255 : encodeLut[(g * scale + 0.5) | 0];
      dst[start + i + 2] = b <= 0 ? 0 : b >= 1 ? 255 : encodeLut[(b * scale + 0.5) | 0];
    }
  }
  return { width, height, data: dst };
}

/**
 * A horizontal box of `size` pixels over one interleaved RGB row (edges repeat the end pixel):
 * the smear of a camera turning during the exposure.
 */
function boxBlurRow(src: Float32Array, start: number, width: number, size: number, out: Float32Array): Float32Array {
  const left = (size - 1) >> 1;
  const inv = 1 / size;
  for (let c = 0; c < 3; c++) {
    let sum = 0;
    for (let k = -left; k < size - left; k++) sum += src[start + 3 * Math.min(width - 1, Math.max(0, k)) + c];
    for (let x = 0; x < width; x++) {
      out[3 * x + c] = sum * inv;
      const leaving = Math.max(0, x - left);
      const entering = Math.min(width - 1, x - left + size);
      sum += src[start + 3 * entering + c] - src[start + 3 * leaving + c];
    }
  }
  return out;
}

/** Luminance (BT.709 weights on linear light) of an interleaved linear RGB image. */
export function radianceLuminance(img: RadianceImage): Float32Array {
  const n = img.width * img.height;
  const out = new Float32Array(n);
  const d = img.data;
  for (let i = 0; i < n; i++) out[i] = 0.2126 * d[3 * i] + 0.7152 * d[3 * i + 1] + 0.0722 * d[3 * i + 2];
  return out;
}
