import type { Homography } from '../geometry/homography.js';
import { invert, multiply } from '../geometry/homography.js';
import { normalise, transpose } from '../numeric/matrix3.js';

/**
 * A pinhole camera rotating about its centre (the demo shoot's virtual camera).
 *
 * World frame: y up, z forward at yaw 0, x to the right. Image frame: x to the right, y down,
 * pixel centres at integer coordinates. Square pixels: the sensor height is the sensor width times
 * height / width.
 */
export interface CameraModel {
  readonly width: number;
  readonly height: number;
  readonly focalLengthMm: number;
  readonly sensorWidthMm: number;
  readonly sensorHeightMm: number;
}

/** Where the camera points, in degrees. */
export interface Pose {
  /** Positive turns to the right. */
  readonly yawDeg: number;
  /** Positive tilts up. */
  readonly pitchDeg: number;
  /** Positive turns the camera clockwise as seen from behind it (the horizon then tilts anticlockwise in the image). */
  readonly rollDeg: number;
}

/** Full frame: 36 x 24 mm. */
export const fullFrameWidthMm = 36;
/** Diagonal of the 36 x 24 mm frame, the yardstick of the 35 mm equivalent focal length. */
export const fullFrameDiagonalMm = Math.hypot(36, 24);

export function expectCamera(c: CameraModel, name: string): void {
  if (!Number.isInteger(c.width) || c.width < 2 || !Number.isInteger(c.height) || c.height < 2) {
    throw new TypeError(`Expected whole numbers of pixels (2 or more) for ${name} size but received ${c.width}x${c.height}`);
  }
  for (const key of ['focalLengthMm', 'sensorWidthMm', 'sensorHeightMm'] as const) {
    if (!(c[key] > 0 && Number.isFinite(c[key]))) throw new TypeError(`Expected a positive length in mm for ${name}.${key} but received ${c[key]}`);
  }
}

/** A camera of the given size with square pixels on a sensor `sensorWidthMm` wide. */
export function cameraModel(width: number, height: number, focalLengthMm: number, sensorWidthMm = fullFrameWidthMm): CameraModel {
  const c = { width, height, focalLengthMm, sensorWidthMm, sensorHeightMm: (sensorWidthMm * height) / width };
  expectCamera(c, 'camera');
  return c;
}

/** Focal length in pixels: f_mm / sensorWidth_mm * width. */
export function focalLengthPx(c: CameraModel): number {
  return (c.focalLengthMm / c.sensorWidthMm) * c.width;
}

/** Angle subtended by one pixel at the image centre, in radians (1 / f_px). */
export function pixelAngle(c: CameraModel): number {
  return 1 / focalLengthPx(c);
}

/**
 * The 35 mm equivalent focal length: scaled by the ratio of the diagonals (common practice; the
 * CIPA DC-008 FocalLengthIn35mmFilm tag). Equal to the focal length on a 36 x 24 mm sensor.
 */
export function focalLength35mm(c: CameraModel): number {
  return (c.focalLengthMm * fullFrameDiagonalMm) / Math.hypot(c.sensorWidthMm, c.sensorHeightMm);
}

/** K = [[f, 0, (W - 1) / 2], [0, f, (H - 1) / 2], [0, 0, 1]], row-major. */
export function intrinsics(c: CameraModel): Float64Array {
  const f = focalLengthPx(c);
  return Float64Array.of(f, 0, (c.width - 1) / 2, 0, f, (c.height - 1) / 2, 0, 0, 1);
}

/** Horizontal field of view in degrees. */
export function horizontalFovDeg(c: CameraModel): number {
  return (2 * Math.atan(c.sensorWidthMm / 2 / c.focalLengthMm) * 180) / Math.PI;
}

const rad = Math.PI / 180;

/**
 * R, world to camera, row-major: its rows are the camera's right, down and forward axes in world
 * coordinates, so camera = R world. R is orthogonal; because the world is y-up and the image y-down
 * its determinant is -1, and R_b R_a^-1 (the rotation between two frames) is a proper rotation.
 */
export function worldToCamera(p: Pose): Float64Array {
  const y = p.yawDeg * rad, t = p.pitchDeg * rad, r = p.rollDeg * rad;
  const sy = Math.sin(y), cy = Math.cos(y), st = Math.sin(t), ct = Math.cos(t), sr = Math.sin(r), cr = Math.cos(r);
  // Unrolled axes: forward after yaw then pitch; right stays horizontal; down completes the frame.
  const fx = sy * ct, fy = st, fz = cy * ct;
  const rx = cy, ry = 0, rz = -sy;
  const dx = sy * st, dy = -ct, dz = cy * st;
  // Roll about forward: the right axis turns towards down.
  return Float64Array.of(
    cr * rx + sr * dx, cr * ry + sr * dy, cr * rz + sr * dz,
    -sr * rx + cr * dx, -sr * ry + cr * dy, -sr * rz + cr * dz,
    fx, fy, fz,
  );
}

/**
 * The homography from full-resolution pixels of frame a to those of frame b for a camera rotating
 * about its centre: H_ab = K_b R_b R_a^-1 K_a^-1 (Hartley & Zisserman, Multiple View Geometry, 2nd
 * ed., sec. 8.4.2), row-major, scaled by a positive factor so that |H[8]| = 1. The sign is kept:
 * w > 0 exactly for the pixels of a whose ray lies in front of b (the orientPositive convention
 * that overlap.ts relies on). H[8] is the depth in b of a's pixel (0, 0), so H[8] = 1 for every
 * pair whose frames are less than 90 degrees apart.
 */
export function rotationHomography(ca: CameraModel, pa: Pose, cb: CameraModel, pb: Pose): Homography {
  const kaInv = invert(intrinsics(ca));
  if (!kaInv) throw new TypeError(`Expected an invertible camera for ca but received ${JSON.stringify(ca)}`);
  return normalise(multiply(multiply(intrinsics(cb), multiply(worldToCamera(pb), transpose(worldToCamera(pa)))), kaInv));
}

/** The world direction (not normalised) seen by pixel (x, y) of a camera at pose p. */
export function pixelDirection(c: CameraModel, p: Pose, x: number, y: number): [number, number, number] {
  const r = worldToCamera(p);
  const f = focalLengthPx(c);
  const u = (x - (c.width - 1) / 2) / f, v = (y - (c.height - 1) / 2) / f;
  return [r[0] * u + r[3] * v + r[6], r[1] * u + r[4] * v + r[7], r[2] * u + r[5] * v + r[8]];
}

/** Yaw (0..2 pi, positive to the right of +z) and elevation (radians, positive up) of a direction. */
export function directionAngles(dx: number, dy: number, dz: number): [number, number] {
  let yaw = Math.atan2(dx, dz);
  if (yaw < 0) yaw += 2 * Math.PI;
  return [yaw, Math.atan2(dy, Math.hypot(dx, dz))];
}
