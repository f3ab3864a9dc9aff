// Views of a photograph as a camera turning about its centre would see it: the photograph is the
// image plane of a wide source camera, and each view is a rotated pinhole camera looking at that
// plane. Two views are then related exactly by H = K R_b R_a^T K^-1 (Hartley & Zisserman, sec.
// 8.4.2; Szeliski, "Image alignment and stitching", 2006, sec. 2.1), whatever the content.
import { multiply } from '../../src/core/geometry/homography.js';
import type { FloatImage, GrayImage } from '../../src/core/image/image.js';
import { overlapRegions } from '../../src/core/geometry/overlap.js';
import type { RandomSource } from '../../src/core/numeric/random.js';
import { linearToSrgb, srgbToLinear } from '../../src/core/image/srgb.js';
import { warpBilinear } from '../../src/core/image/warp.js';
import { toCameraFrame } from './images.js';

export const intrinsics = (f: number, w: number, h: number): Float64Array => Float64Array.of(f, 0, (w - 1) / 2, 0, f, (h - 1) / 2, 0, 0, 1);
export const intrinsicsInverse = (f: number, w: number, h: number): Float64Array => Float64Array.of(1 / f, 0, -(w - 1) / 2 / f, 0, 1 / f, -(h - 1) / 2 / f, 0, 0, 1);

/** World to camera for a camera turned by yaw (about the vertical, positive to the right), then pitch (positive up), then roll. */
export function rotationOf(yawDeg: number, pitchDeg = 0, rollDeg = 0): Float64Array {
  const r = Math.PI / 180;
  const [cy, sy] = [Math.cos(yawDeg * r), Math.sin(yawDeg * r)];
  const [cp, sp] = [Math.cos(pitchDeg * r), Math.sin(pitchDeg * r)];
  const [cr, sr] = [Math.cos(rollDeg * r), Math.sin(rollDeg * r)];
  // Camera axes: x right, y down, z forward. R = Rz(roll) Rx(pitch) Ry(yaw), rows = camera axes in world.
  const ry = Float64Array.of(cy, 0, -sy, 0, 1, 0, sy, 0, cy);
  const rx = Float64Array.of(1, 0, 0, 0, cp, sp, 0, -sp, cp);
  const rz = Float64Array.of(cr, sr, 0, -sr, cr, 0, 0, 0, 1);
  return multiply(rz, multiply(rx, ry));
}

const transpose = (m: ArrayLike<number>): Float64Array => Float64Array.of(m[0], m[3], m[6], m[1], m[4], m[7], m[2], m[5], m[8]);

export interface ViewCamera {
  readonly width: number;
  readonly height: number;
  /** Focal length in pixels. */
  readonly focal: number;
}

/** The exact homography from view a's pixels to view b's: K R_b R_a^T K^-1. */
export function exactHomography(cam: ViewCamera, ra: ArrayLike<number>, rb: ArrayLike<number>): Float64Array {
  return multiply(intrinsics(cam.focal, cam.width, cam.height), multiply(multiply(rb, transpose(ra)), intrinsicsInverse(cam.focal, cam.width, cam.height)));
}

/**
 * Renders the view of a camera with rotation r of the photograph `src`, which is seen by the
 * unrotated source camera of focal length `sourceFocal` (pixels of src). Pixels that miss the
 * photograph are NaN.
 */
export function renderView(src: GrayImage, sourceFocal: number, cam: ViewCamera, r: ArrayLike<number>): FloatImage {
  const srcFromView = multiply(intrinsics(sourceFocal, src.width, src.height), multiply(transpose(r), intrinsicsInverse(cam.focal, cam.width, cam.height)));
  return warpBilinear(src, srcFromView, cam.width, cam.height);
}

/** Darkens towards the corners in linear light: gain 1 - strength * (r / r_corner)^2, a lens's light fall-off. */
export function vignette(img: FloatImage, strength: number): FloatImage {
  const { width: w, height: h } = img;
  const cx = (w - 1) / 2, cy = (h - 1) / 2, r2 = cx * cx + cy * cy;
  const out = new Float32Array(img.data.length);
  for (let y = 0; y < h; y++)
    for (let x = 0; x < w; x++) {
      const v = img.data[y * w + x];
      const g = 1 - (strength * ((x - cx) ** 2 + (y - cy) ** 2)) / r2;
      out[y * w + x] = Number.isNaN(v) ? v : 255 * linearToSrgb(srgbToLinear(v / 255) * g);
    }
  return { width: w, height: h, data: out };
}

/** A rendered view as a camera would write it: vignetting, sensor noise, JPEG. */
export async function cameraView(src: GrayImage, sourceFocal: number, cam: ViewCamera, r: ArrayLike<number>, rnd: RandomSource, d: { vignetting: number; noise: number; jpegQuality: number; ev?: number }): Promise<GrayImage> {
  return toCameraFrame(vignette(renderView(src, sourceFocal, cam, r), d.vignetting), rnd, { noise: d.noise, jpegQuality: d.jpegQuality, ev: d.ev });
}

/** Overlap (as the project defines it, overlap.ts) of two views turned apart by yaw alone. */
export function overlapOfYaw(cam: ViewCamera, yawDeg: number): number {
  return overlapRegions(exactHomography(cam, rotationOf(0), rotationOf(yawDeg)), cam.width, cam.height, cam.width, cam.height).overlap;
}

/** The yaw step (degrees) that leaves the given overlap between two views, by bisection. */
export function yawForOverlap(cam: ViewCamera, overlap: number): number {
  let lo = 0, hi = 2 * Math.atan(cam.width / 2 / cam.focal) * (180 / Math.PI);
  for (let k = 0; k < 60; k++) {
    const mid = (lo + hi) / 2;
    if (overlapOfYaw(cam, mid) > overlap) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2;
}

/**
 * The view from the centre of an upright prism whose walls are photographs (one per wall, in order
 * of increasing yaw, wall 0 facing yaw 0), each wall at distance 1 and filled by its photograph's
 * width. The walls lie at different distances, but the camera's centre does not move, so two views
 * are still related exactly by K R_b R_a^T K^-1. Pixels above or below a wall are NaN.
 */
export function renderPrismView(walls: readonly GrayImage[], cam: ViewCamera, r: ArrayLike<number>): FloatImage {
  const n = walls.length;
  const half = Math.tan(Math.PI / n);
  const { width: w, height: h, focal: f } = cam;
  const out = new Float32Array(w * h);
  for (let y = 0; y < h; y++)
    for (let x = 0; x < w; x++) {
      // Ray in the camera, then in the world: d = R^T K^-1 (x, y, 1).
      const cx = (x - (w - 1) / 2) / f, cy = (y - (h - 1) / 2) / f;
      const dx = r[0] * cx + r[3] * cy + r[6], dy = r[1] * cx + r[4] * cy + r[7], dz = r[2] * cx + r[5] * cy + r[8];
      // The wall the ray meets is the one whose normal it leans on most.
      const yaw = Math.atan2(dx, dz);
      const m = ((Math.round((yaw * n) / (2 * Math.PI)) % n) + n) % n;
      const a = (2 * Math.PI * m) / n;
      const nx = Math.sin(a), nz = Math.cos(a);
      const t = 1 / (dx * nx + dz * nz);
      const u = t * (dx * nz - dz * nx), v = t * dy;
      const img = walls[m];
      const scale = (img.width - 1) / (2 * half);
      const sx = (u + half) * scale, sy = (img.height - 1) / 2 + v * scale;
      if (!(sx >= 0 && sy >= 0 && sx <= img.width - 1 && sy <= img.height - 1)) {
        out[y * w + x] = NaN;
        continue;
      }
      const x0 = Math.min(sx | 0, img.width - 2), y0 = Math.min(sy | 0, img.height - 2);
      const tx = sx - x0, ty = sy - y0, o = y0 * img.width + x0;
      const top = img.data[o] + tx * (img.data[o + 1] - img.data[o]);
      const bottom = img.data[o + img.width] + tx * (img.data[o + img.width + 1] - img.data[o + img.width]);
      out[y * w + x] = top + ty * (bottom - top);
    }
  return { width: w, height: h, data: out };
}
