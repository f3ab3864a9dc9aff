/**
 * Hash-based lattice (value) noise and its sums over octaves, for the demo scene. The horizontal
 * coordinate is a yaw angle, so every lattice is periodic around the full turn: octave k has
 * `cells * 2^k` cells per 360 degrees, a whole number, and the scene joins up where yaw wraps.
 *
 * Octaves finer than the frame's angular pixel size are faded out (band-limiting), so a frame never
 * samples detail it cannot resolve: two frames of one focal length see the same function, and a
 * corner in one is a corner in the other.
 */

/** A well-mixed 32-bit hash of a lattice point, as a float in [0, 1). */
export function latticeHash(ix: number, iy: number, seed: number): number {
  let h = Math.imul(ix, 0x27d4eb2d) ^ Math.imul(iy ^ seed, 0x165667b1) ^ seed;
  h = Math.imul(h ^ (h >>> 15), 0x85ebca6b);
  h = Math.imul(h ^ (h >>> 13), 0xc2b2ae35);
  return ((h ^ (h >>> 16)) >>> 0) * 2.3283064365386963e-10;
}

/** Cubic smoothstep of t in [0, 1]. */
function fade(t: number): number {
  return t * t * (3 - 2 * t);
}

/** x in lattice units as a cell index in [0, period): integer arithmetic only, no float modulo. */
function cellOf(x: number, period: number): number {
  let i = Math.floor(x) | 0;
  if (i >= period || i < 0) {
    i %= period;
    if (i < 0) i += period;
  }
  return i;
}

/** Value noise in [0, 1) at (x, y) in lattice units, periodic in x with `period` cells. */
export function valueNoise2(x: number, y: number, period: number, seed: number): number {
  const fx = Math.floor(x);
  const fy = Math.floor(y);
  const sx = fade(x - fx);
  const sy = fade(y - fy);
  const ix0 = cellOf(fx, period);
  const ix1 = ix0 + 1 === period ? 0 : ix0 + 1;
  const iy = fy | 0;
  const a = latticeHash(ix0, iy, seed);
  const b = latticeHash(ix1, iy, seed);
  const c = latticeHash(ix0, iy + 1, seed);
  const d = latticeHash(ix1, iy + 1, seed);
  const top = a + sx * (b - a);
  return top + sy * (c + sx * (d - c) - top);
}

/** Value noise in [0, 1) at x in lattice units, periodic with `period` cells. */
export function valueNoise1(x: number, period: number, seed: number): number {
  const fx = Math.floor(x);
  const sx = fade(x - fx);
  const ix0 = cellOf(fx, period);
  const ix1 = ix0 + 1 === period ? 0 : ix0 + 1;
  const a = latticeHash(ix0, 0, seed);
  return a + sx * (latticeHash(ix1, 0, seed) - a);
}

/** The octaves of one band-limited noise sum, ready for evaluation. */
export interface Octaves {
  readonly count: number;
  /**
   * Per octave k, at k * octaveStride: lattice cells per radian of yaw and of elevation, the offset
   * in y (so octaves do not share lattice lines), the amplitude after band-limiting divided by the
   * sum of the nominal amplitudes, the cells per full turn (the period in x), the hash seed, and the
   * last cell looked up (x, y): neighbouring pixels mostly fall in the same cell of the coarser
   * octaves, so the four corner values kept in `corners` are reused (exact, not an approximation).
   * Scratch: one Octaves per thread.
   */
  readonly params: Float64Array;
  readonly corners: Float64Array;
  /** Octaves summed into `partial` by octaveNoise2 (the coarse part, for patterns at large scale). */
  readonly coarseCount: number;
  /** partial[0]: the coarse part of the last octaveNoise2 call (mean 0.5). */
  readonly partial: Float64Array;
}

export const octaveStride = 8;

export interface OctaveSpec {
  /** Lattice cells per full turn of yaw at the coarsest octave (a whole number). */
  readonly cells: number;
  /** Most octaves (each doubling the frequency), before band-limiting. */
  readonly octaves: number;
  /** Amplitude ratio between consecutive octaves. */
  readonly persistence: number;
  /** Lattice cells per radian in elevation relative to yaw (over 1: features flattened, as seen obliquely). */
  readonly stretchY: number;
  readonly seed: number;
  /** Octaves whose sum octaveNoise2 also reports on its own (default 0). */
  readonly coarseOctaves?: number;
}

/**
 * Lattice spacing, in pixels, below which an octave is gone and above which it is whole. Two
 * pixels per lattice cell is where value noise starts to alias; four is comfortably resolved.
 */
export const fadeStartPx = 4;
export const fadeEndPx = 2;

/**
 * Prepares a noise sum for frames whose pixels subtend `pixelAngle` radians: octaves whose lattice
 * is finer than `fadeEndPx` pixels are dropped, those between `fadeEndPx` and `fadeStartPx` fade.
 * The weights are normalised by the nominal amplitudes, so band-limiting lowers the contrast of the
 * finest detail without moving the mean.
 */
export function prepareOctaves(spec: OctaveSpec, pixelAngle: number): Octaves {
  if (!Number.isInteger(spec.cells) || spec.cells < 1) throw new TypeError(`Expected a positive whole number for cells but received ${spec.cells}`);
  if (!(pixelAngle > 0)) throw new TypeError(`Expected a positive angle for pixelAngle but received ${pixelAngle}`);
  const rows: number[][] = [];
  let nominal = 0;
  for (let k = 0; k < spec.octaves; k++) nominal += Math.pow(spec.persistence, k);
  for (let k = 0; k < spec.octaves; k++) {
    const cells = spec.cells * Math.pow(2, k);
    const perRadian = cells / (2 * Math.PI);
    const spacingPx = 1 / (perRadian * Math.max(1, spec.stretchY) * pixelAngle);
    const band = fade(Math.min(1, Math.max(0, (spacingPx - fadeEndPx) / (fadeStartPx - fadeEndPx))));
    if (band <= 0) break;
    const seed = (Math.imul(spec.seed, 0x3c6ef372) + Math.imul(k + 1, 0x2545f491)) | 0;
    const offsetY = (((Math.imul(spec.seed, 7919) + k * 104729) >>> 0) % 1000) + 0.5;
    rows.push([perRadian, perRadian * spec.stretchY, offsetY, (Math.pow(spec.persistence, k) * band) / nominal, cells, seed, -1, -0x7fffffff]);
  }
  return {
    count: rows.length,
    params: Float64Array.from(rows.flat()),
    corners: new Float64Array(4 * rows.length),
    coarseCount: Math.min(rows.length, spec.coarseOctaves ?? 0),
    partial: new Float64Array(1),
  };
}

/**
 * The noise sum at yaw `yaw` (radians, 0..2 pi) and elevation `elevation` (radians); mean 0.5.
 * The sum of the first `coarseCount` octaves is left in o.partial[0].
 */
export function octaveNoise2(o: Octaves, yaw: number, elevation: number): number {
  let s = 0.5;
  const p = o.params, corners = o.corners, coarse = o.coarseCount;
  o.partial[0] = 0.5;
  for (let k = 0, q = 0, c = 0; k < o.count; k++, q += octaveStride, c += 4) {
    if (k === coarse) o.partial[0] = s;
    // valueNoise2, with the corner values of the last cell kept.
    const x = yaw * p[q];
    const y = elevation * p[q + 1] + p[q + 2];
    const fx = Math.floor(x);
    const fy = Math.floor(y);
    const tx = x - fx, ty = y - fy;
    const period = p[q + 4];
    let ix0 = fx | 0;
    if (ix0 >= period || ix0 < 0) ix0 = cellOf(fx, period);
    const iy = fy | 0;
    if (ix0 !== p[q + 6] || iy !== p[q + 7]) {
      const ix1 = ix0 + 1 === period ? 0 : ix0 + 1;
      const seed = p[q + 5] | 0;
      const last = p[q + 6];
      if (iy === p[q + 7] && (ix0 === last + 1 || (ix0 === 0 && last === period - 1))) {
        // One cell to the right along a row: the old right corners are the new left ones.
        corners[c] = corners[c + 1];
        corners[c + 2] = corners[c + 3];
      } else {
        corners[c] = latticeHash(ix0, iy, seed);
        corners[c + 2] = latticeHash(ix0, iy + 1, seed);
      }
      corners[c + 1] = latticeHash(ix1, iy, seed);
      corners[c + 3] = latticeHash(ix1, iy + 1, seed);
      p[q + 6] = ix0;
      p[q + 7] = iy;
    }
    const sx = tx * tx * (3 - 2 * tx);
    const sy = ty * ty * (3 - 2 * ty);
    const a = corners[c], b = corners[c + 1], c2 = corners[c + 2];
    const top = a + sx * (b - a);
    const bottom = c2 + sx * (corners[c + 3] - c2);
    s += p[q + 3] * (top + sy * (bottom - top) - 0.5);
  }
  if (coarse >= o.count) o.partial[0] = s;
  return s;
}

/** The noise sum along yaw alone (radians, 0..2 pi); mean 0.5. */
export function octaveNoise1(o: Octaves, yaw: number): number {
  let s = 0.5;
  const p = o.params;
  for (let k = 0, q = 0; k < o.count; k++, q += octaveStride) s += p[q + 3] * (valueNoise1(yaw * p[q], p[q + 4], p[q + 5] | 0) - 0.5);
  return s;
}
