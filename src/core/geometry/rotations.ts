/**
 * Camera rotations of a sequence shot from one place (a camera turning about its centre), from the
 * pair homographies and their tie points.
 *
 * Model (Hartley & Zisserman, Multiple View Geometry, sec. 8.4.2; Szeliski, "Image alignment and
 * stitching", 2006, sec. 2.1): pixel x_i of station i and x_j of station j seeing one direction are
 * related by x_j ~ K_j R_j R_i^T K_i^-1 x_i, with K = [f 0 cx; 0 f cy; 0 0 1], the principal point at
 * the frame centre and one focal length f for the sequence. R_i turns world directions into station
 * i's camera frame (x right, y down, z forward); the world is station 0's camera frame.
 *
 * Rotations are first chained along a spanning tree of the matched pairs here, then refined jointly
 * with the focal length and the lens's distortion in lens-bundle.ts.
 */
import { Matrix, SingularValueDecomposition } from 'ml-matrix';
import type { Homography } from './homography.js';
import { determinant, multiply, transpose } from '../numeric/matrix3.js';

/** A 3x3 rotation matrix, row-major. */
export type Rotation = Float64Array;

/** One measured relation: station i's pixels to station j's, full-resolution pixels. */
export interface RotationLink {
  readonly i: number;
  readonly j: number;
  /** a -> b homography in full-resolution pixels. */
  readonly homography: ArrayLike<number>;
  /** Tie points xa, ya, xb, yb per point, full-resolution pixels. */
  readonly points: ArrayLike<number>;
}

/** Size in pixels of each station's frame (after orientation). */
export interface FrameSize {
  readonly width: number;
  readonly height: number;
}

/** Rotation by the vector w (axis times angle in radians), Rodrigues' formula. */
export function rotationOfVector(wx: number, wy: number, wz: number): Rotation {
  const t = Math.hypot(wx, wy, wz);
  if (t < 1e-12) return Float64Array.of(1, -wz, wy, wz, 1, -wx, -wy, wx, 1);
  const x = wx / t, y = wy / t, z = wz / t;
  const c = Math.cos(t), s = Math.sin(t), v = 1 - c;
  return Float64Array.of(
    c + x * x * v, x * y * v - z * s, x * z * v + y * s,
    y * x * v + z * s, c + y * y * v, y * z * v - x * s,
    z * x * v - y * s, z * y * v + x * s, c + z * z * v,
  );
}

/** The angle of a rotation, in degrees. */
export function rotationAngleOf(r: ArrayLike<number>): number {
  const c = (r[0] + r[4] + r[8] - 1) / 2;
  return (Math.acos(Math.max(-1, Math.min(1, c))) * 180) / Math.PI;
}

/** The rotation nearest to m in the Frobenius norm (the orthogonal polar factor, via SVD). */
export function nearestRotation(m: ArrayLike<number>): Rotation {
  const svd = new SingularValueDecomposition(new Matrix([[m[0], m[1], m[2]], [m[3], m[4], m[5]], [m[6], m[7], m[8]]]));
  const u = svd.leftSingularVectors, v = svd.rightSingularVectors;
  const flip = determinant(u.mmul(v.transpose()).to1DArray()) < 0 ? -1 : 1;
  const d = Matrix.diag([1, 1, flip]);
  return Float64Array.from(u.mmul(d).mmul(v.transpose()).to1DArray());
}

function intrinsics(f: number, size: FrameSize): Float64Array {
  return Float64Array.of(f, 0, (size.width - 1) / 2, 0, f, (size.height - 1) / 2, 0, 0, 1);
}

function intrinsicsInverse(f: number, size: FrameSize): Float64Array {
  return Float64Array.of(1 / f, 0, -(size.width - 1) / 2 / f, 0, 1 / f, -(size.height - 1) / 2 / f, 0, 0, 1);
}

/**
 * K_b^-1 H K_a scaled to unit determinant: a rotation when f is right and the camera only turned.
 * Returns it with its distance from the nearest rotation (Frobenius norm of M M^T - I).
 */
function rotationPart(h: ArrayLike<number>, f: number, a: FrameSize, b: FrameSize): { m: Float64Array; error: number } | null {
  const m = multiply(multiply(intrinsicsInverse(f, b), h), intrinsics(f, a));
  const d = determinant(m);
  if (!(Math.abs(d) > 1e-300)) return null;
  const s = Math.cbrt(d);
  for (let k = 0; k < 9; k++) m[k] /= s;
  const mmt = multiply(m, transpose(m));
  let e = 0;
  for (let k = 0; k < 9; k++) e += (mmt[k] - (k % 4 === 0 ? 1 : 0)) ** 2;
  return { m, error: Math.sqrt(e) };
}

/** R_b R_a^T from a pair homography and the focal length, or null when it is far from a rotation. */
export function relativeRotation(h: ArrayLike<number>, f: number, a: FrameSize, b: FrameSize): Rotation | null {
  const part = rotationPart(h, f, a, b);
  if (!part || part.error > 0.5) return null;
  return nearestRotation(part.m);
}

/**
 * The focal length (pixels) that makes a homography closest to a pure rotation, searched by golden
 * section on log f between a tenth and ten times the longer side; null when the turn is too small
 * to tell (under about 3 degrees) or no focal length fits.
 */
export function focalFromHomography(h: ArrayLike<number>, a: FrameSize, b: FrameSize): number | null {
  const side = Math.max(a.width, a.height);
  const cost = (lf: number): number => rotationPart(h, Math.exp(lf), a, b)?.error ?? Infinity;
  let lo = Math.log(0.1 * side), hi = Math.log(10 * side);
  // A coarse scan first: the cost is not unimodal over so wide a range.
  let best = lo, bestCost = Infinity;
  for (let k = 0; k <= 60; k++) {
    const lf = lo + ((hi - lo) * k) / 60;
    const c = cost(lf);
    if (c < bestCost) {
      bestCost = c;
      best = lf;
    }
  }
  const step = (hi - lo) / 60;
  lo = best - step;
  hi = best + step;
  const g = (Math.sqrt(5) - 1) / 2;
  let x1 = hi - g * (hi - lo), x2 = lo + g * (hi - lo);
  let c1 = cost(x1), c2 = cost(x2);
  for (let it = 0; it < 60; it++) {
    if (c1 < c2) {
      hi = x2;
      x2 = x1;
      c2 = c1;
      x1 = hi - g * (hi - lo);
      c1 = cost(x1);
    } else {
      lo = x1;
      x1 = x2;
      c1 = c2;
      x2 = lo + g * (hi - lo);
      c2 = cost(x2);
    }
  }
  const f = Math.exp((lo + hi) / 2);
  const part = rotationPart(h, f, a, b);
  if (!part || part.error > 0.02) return null;
  // A tiny turn fits any focal length about equally well.
  if (rotationAngleOf(nearestRotation(part.m)) < 3) return null;
  return f;
}

/** Fewest tie points from which raysRotation takes a link's rotation. */
const minRayPoints = 8;
/**
 * A chaining start rotation can be this far (degrees, rms over the tie points) from the pinhole
 * rays it is taken from: barrel distortion of k1 = -0.3 at a 28 mm frame's corners bends a ray by
 * about 4 degrees (Brown's model, r = 0.77); a pair matched on something else misses by far more.
 * Our own threshold.
 */
const maxRayMissDeg = 10;

/**
 * R_j R_i^T from a link's tie points as pinhole rays (Kabsch: the rotation nearest to the sum of
 * b a^T), or null with too few points or rays it does not bring together. Used where the
 * homography is too far from a rotation to give one: over a wide field through a strongly
 * distorting lens no homography is close to a rotation, though the tie points still are.
 */
export function raysRotation(l: RotationLink, f: number, sizes: readonly FrameSize[]): Rotation | null {
  const count = Math.floor(l.points.length / 4);
  if (count < minRayPoints) return null;
  const a = sizes[l.i], b = sizes[l.j];
  const ray = (x: number, y: number, s: FrameSize, out: Float64Array): void => {
    const u = (x - (s.width - 1) / 2) / f, v = (y - (s.height - 1) / 2) / f, n = Math.sqrt(u * u + v * v + 1);
    out[0] = u / n;
    out[1] = v / n;
    out[2] = 1 / n;
  };
  const ra = new Float64Array(3), rb = new Float64Array(3), m = new Float64Array(9);
  for (let k = 0; k < count; k++) {
    ray(l.points[4 * k], l.points[4 * k + 1], a, ra);
    ray(l.points[4 * k + 2], l.points[4 * k + 3], b, rb);
    for (let r = 0; r < 3; r++) for (let c = 0; c < 3; c++) m[3 * r + c] += rb[r] * ra[c];
  }
  const rot = nearestRotation(m);
  let miss = 0;
  for (let k = 0; k < count; k++) {
    ray(l.points[4 * k], l.points[4 * k + 1], a, ra);
    ray(l.points[4 * k + 2], l.points[4 * k + 3], b, rb);
    const dot = rb[0] * (rot[0] * ra[0] + rot[1] * ra[1] + rot[2] * ra[2]) + rb[1] * (rot[3] * ra[0] + rot[4] * ra[1] + rot[5] * ra[2]) + rb[2] * (rot[6] * ra[0] + rot[7] * ra[1] + rot[8] * ra[2]);
    miss += Math.acos(Math.max(-1, Math.min(1, dot))) ** 2;
  }
  return (Math.sqrt(miss / count) * 180) / Math.PI <= maxRayMissDeg ? rot : null;
}

/**
 * Rotations chained from station 0 along a breadth-first spanning tree of the links: null for
 * stations no chain of matched pairs reaches.
 */
export function chainRotations(stations: number, links: readonly RotationLink[], f: number, sizes: readonly FrameSize[]): (Rotation | null)[] {
  return chainTree(stations, links, f, sizes).rotations;
}

/** chainRotations, with the links of the spanning tree it went along. */
export function chainTree(stations: number, links: readonly RotationLink[], f: number, sizes: readonly FrameSize[]): { rotations: (Rotation | null)[]; tree: RotationLink[] } {
  const out: (Rotation | null)[] = new Array(stations).fill(null);
  const tree: RotationLink[] = [];
  if (stations === 0) return { rotations: out, tree };
  out[0] = Float64Array.of(1, 0, 0, 0, 1, 0, 0, 0, 1);
  const queue = [0];
  while (queue.length > 0) {
    const s = queue.shift()!;
    for (const l of links) {
      const forward = l.i === s && out[l.j] === null;
      const backward = l.j === s && out[l.i] === null;
      if (!forward && !backward) continue;
      const rel = relativeRotation(l.homography, f, sizes[l.i], sizes[l.j]) ?? raysRotation(l, f, sizes);
      if (!rel) continue;
      tree.push(l);
      // R_j = R_ij R_i, and R_i = R_ij^T R_j.
      if (forward) {
        out[l.j] = multiply(rel, out[s]!);
        queue.push(l.j);
      } else {
        out[l.i] = multiply(transpose(rel), out[s]!);
        queue.push(l.i);
      }
    }
  }
  return { rotations: out, tree };
}

/** Where each station points, in degrees, against the sequence's own level. */
export interface StationPose {
  readonly yawDeg: number;
  readonly pitchDeg: number;
  readonly rollDeg: number;
}

const dot = (a: ArrayLike<number>, b: ArrayLike<number>): number => a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
/** The cross product of two 3-vectors. */
export const cross = (a: ArrayLike<number>, b: ArrayLike<number>): [number, number, number] => [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]];
const unit = (a: ArrayLike<number>): [number, number, number] => {
  const n = Math.hypot(a[0], a[1], a[2]) || 1;
  return [a[0] / n, a[1] / n, a[2] / n];
};
/** Column k of R^T (row k of R): camera axis k in world coordinates. */
const axisOf = (r: ArrayLike<number>, k: number): [number, number, number] => [r[3 * k], r[3 * k + 1], r[3 * k + 2]];

/**
 * The world's up direction for a sequence: the mean of the cameras' up axes (a levelled head keeps
 * them vertical; in a sweep their tilts cancel), sharpened, when the optical axes lie on one great
 * circle (a single row), to that circle's pole, the axis the camera turned about.
 */
export function estimateUp(rotations: readonly Rotation[]): [number, number, number] {
  const mean = [0, 0, 0];
  for (const r of rotations) {
    const up = axisOf(r, 1);
    for (let k = 0; k < 3; k++) mean[k] -= up[k];
  }
  const up = unit(mean);
  if (rotations.length < 3) return up;
  const m = new Matrix(3, 3);
  for (const r of rotations) {
    const z = axisOf(r, 2);
    for (let a = 0; a < 3; a++) for (let b = 0; b < 3; b++) m.set(a, b, m.get(a, b) + z[a] * z[b]);
  }
  const svd = new SingularValueDecomposition(m);
  const sv = svd.diagonal;
  // One row: the smallest spread is tiny against the other two.
  if (sv[2] > 0.02 * sv[1]) return up;
  const pole = unit(svd.leftSingularVectors.getColumn(2));
  return dot(pole, up) >= 0 ? pole : [-pole[0], -pole[1], -pole[2]];
}

/** Yaw (relative to the first reached station), pitch and roll of every station with a rotation. */
export function stationPoses(rotations: readonly (Rotation | null)[]): (StationPose | null)[] {
  const known = rotations.filter((r): r is Rotation => r !== null);
  if (known.length === 0) return rotations.map(() => null);
  const up = estimateUp(known);
  const first = axisOf(known[0], 2);
  const forward = unit(first.map((v, k) => v - dot(first, up) * up[k]));
  const right = cross(forward, up);
  const deg = 180 / Math.PI;
  return rotations.map((r) => {
    if (!r) return null;
    const z = axisOf(r, 2), x = axisOf(r, 0);
    const yaw = Math.atan2(dot(z, right), dot(z, forward)) * deg;
    const pitch = Math.asin(Math.max(-1, Math.min(1, dot(z, up)))) * deg;
    // Roll: the camera's x axis against the level right direction of its view, about its axis.
    const level = unit(cross(z, up));
    const roll = Math.atan2(dot(cross(level, x), z), dot(level, x)) * deg;
    return { yawDeg: yaw, pitchDeg: pitch, rollDeg: roll };
  });
}

/** The homography of a station pair from rotations and focal length (for tests and the coverage map). */
export function homographyOfRotations(ri: Rotation, rj: Rotation, f: number, a: FrameSize, b: FrameSize): Homography {
  return multiply(multiply(intrinsics(f, b), multiply(rj, transpose(ri))), intrinsicsInverse(f, a));
}
