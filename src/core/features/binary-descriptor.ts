import { createRandom } from '../numeric/random.js';

/**
 * A steered binary descriptor of 256 intensity comparisons between 5x5 box means in a 31x31 patch,
 * the test pairs drawn once from an isotropic Gaussian (sigma = patch/5) with a fixed seed (Calonder
 * et al., "BRIEF", ECCV 2010, sampling G II) and rotated to the keypoint's orientation in 32 steps
 * (the steering of Rublee et al., "ORB", ICCV 2011). Comparisons are invariant to any monotonic
 * change of brightness, so exposure differences between frames cost only what clips.
 */
export const descriptorBits = 256;
export const descriptorWords = descriptorBits / 32;
export const patchSize = 31;
export const angleSteps = 32;
const boxHalf = 2;
const maxOffset = (patchSize >> 1) - boxHalf;

/** Test pairs (x1, y1, x2, y2) per test, unrotated, integer offsets within the patch. */
export const testPattern: Int8Array = (() => {
  const rnd = createRandom(0x5eed5c07);
  const sigma = patchSize / 5;
  const p = new Int8Array(descriptorBits * 4);
  for (let i = 0; i < p.length; i++) {
    let v: number;
    do v = Math.round(rnd.normal() * sigma);
    while (Math.abs(v) > maxOffset);
    p[i] = v;
  }
  return p;
})();

/**
 * For an integral image of row stride `stride` (width + 1), the four corner offsets of every box of
 * every test at every angle step, relative to the integral index of the keypoint's top-left box
 * corner. Layout: [step][test][point 0/1] -> integral offset of that box's (x - 2, y - 2) corner.
 */
export function steeredOffsets(stride: number): Int32Array {
  const out = new Int32Array(angleSteps * descriptorBits * 2);
  for (let s = 0; s < angleSteps; s++) {
    const a = (2 * Math.PI * s) / angleSteps;
    const c = Math.cos(a);
    const sn = Math.sin(a);
    for (let t = 0; t < descriptorBits; t++) {
      for (let q = 0; q < 2; q++) {
        const px = testPattern[4 * t + 2 * q];
        const py = testPattern[4 * t + 2 * q + 1];
        const rx = Math.round(px * c - py * sn);
        const ry = Math.round(px * sn + py * c);
        out[(s * descriptorBits + t) * 2 + q] = (ry - boxHalf) * stride + (rx - boxHalf);
      }
    }
  }
  return out;
}

/** Angle step nearest to an orientation in radians. */
export function angleStep(angle: number): number {
  const s = Math.round((angle * angleSteps) / (2 * Math.PI)) % angleSteps;
  return s < 0 ? s + angleSteps : s;
}

/**
 * Writes the descriptor of a keypoint at integer level position (cx, cy) into `out` at word offset
 * `at`. `integral` is the level's summed-area table, `offsets` from steeredOffsets for its stride.
 */
export function describe(integral: Float64Array, stride: number, offsets: Int32Array, cx: number, cy: number, step: number, out: Uint32Array, at: number): void {
  const base = cy * stride + cx;
  const box = 2 * boxHalf + 1;
  const right = box;
  const down = box * stride;
  const diag = down + right;
  let o = step * descriptorBits * 2;
  for (let word = 0; word < descriptorWords; word++) {
    let bits = 0;
    for (let b = 0; b < 32; b++, o += 2) {
      const p = base + offsets[o];
      const q = base + offsets[o + 1];
      const s1 = integral[p + diag] - integral[p + down] - integral[p + right] + integral[p];
      const s2 = integral[q + diag] - integral[q + down] - integral[q + right] + integral[q];
      if (s1 < s2) bits |= 1 << b;
    }
    out[at + word] = bits >>> 0;
  }
}
