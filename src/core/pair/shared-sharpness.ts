import type { GrayImage } from '../image/image.js';
import { expectImage } from '../image/image.js';
import { median } from '../numeric/median.js';
import { clippedHigh, clippedLow } from './sharpness.js';

/**
 * The four directions of the energies, by angle in the frame (y down): across, falling diagonal
 * (top left to bottom right), down, rising diagonal (bottom left to top right).
 */
export const sharpnessDirections = ['horizontal', 'falling-diagonal', 'vertical', 'rising-diagonal'] as const;
export type SharpnessDirection = (typeof sharpnessDirections)[number];

export interface SharedSharpnessParams {
  /** Side of a compared block in coarse cells (4 x 4 pixels each). */
  readonly blockCells: number;
  /**
   * Least mean squared difference (8-bit levels squared) between coarse cells two apart, in both
   * frames, for a block to count as texture: flat sky, water or fog below it carry no evidence.
   */
  readonly minTexture: number;
  /** Largest local scale of the homography (either way) at which a block's bands still compare like with like. */
  readonly maxScale: number;
  /** Fewer textured blocks than this give no measure. */
  readonly minBlocks: number;
}

/**
 * Soft content (clouds, haze, water) has no fine detail to lose: it reads alike in a sharp and a
 * blurred frame and carries no evidence. A block counts when the richer of its two frames holds this
 * many times the fine energy of the softest tenth of blocks, where that energy is mostly noise. Our
 * own value, set on the pan of test/main/blur-sequence.test.ts: blocks of cloud there (sensor noise of
 * 1.5 levels, JPEG q88) held fine energies of 6 to 35 per pixel, blocks of the photograph 24 to 250.
 */
const detailOverFloor = 4;

export const defaultSharedSharpnessParams: SharedSharpnessParams = { blockCells: 8, minTexture: 9, maxScale: 1.25, minBlocks: 12 };

export interface SharedSharpness {
  /**
   * b's sharpness over a's on the content both see, per direction of `sharpnessDirections` as seen
   * in a (b's own directions turned by the pair's roll, to the nearest 45 degrees).
   */
  readonly byDirection: readonly [number, number, number, number];
  /** Geometric mean of the four: b's sharpness over a's overall. */
  readonly ratio: number;
  /** Blocks compared: textured in both frames, with fine detail in one (the fewest of the four directions). */
  readonly blocks: number;
}

/**
 * A frame's 4 x 4 cell means, and which cells hold a clipped pixel; filled on demand (`fillCells`),
 * since only the cells of the overlap are ever read.
 */
interface Coarse {
  readonly width: number;
  readonly height: number;
  readonly data: Float32Array;
  readonly clipped: Uint8Array;
  readonly done: Uint8Array;
}

function coarseOf(img: GrayImage): Coarse {
  const cw = (img.width / 4) | 0, ch = (img.height / 4) | 0;
  return { width: cw, height: ch, data: new Float32Array(cw * ch), clipped: new Uint8Array(cw * ch), done: new Uint8Array(cw * ch) };
}

/** Fills the cells [cx0, cx1) x [cy0, cy1) (clamped to the frame) not filled yet. */
function fillCells(img: GrayImage, c: Coarse, cx0: number, cy0: number, cx1: number, cy1: number): void {
  const { width: w, data } = img;
  for (let y = Math.max(0, cy0); y < Math.min(c.height, cy1); y++)
    for (let x = Math.max(0, cx0); x < Math.min(c.width, cx1); x++) {
      const k = y * c.width + x;
      if (c.done[k]) continue;
      let s = 0, clip = 0;
      for (let dy = 0; dy < 4; dy++)
        for (let dx = 0, o = (4 * y + dy) * w + 4 * x; dx < 4; dx++, o++) {
          const v = data[o];
          s += v;
          if (v <= clippedLow || v >= clippedHigh) clip = 1;
        }
      c.data[k] = s / 16;
      c.clipped[k] = clip;
      c.done[k] = 1;
    }
}

const isClipped = (v: number): boolean => v <= clippedLow || v >= clippedHigh;

/**
 * Squared differences over two pixels' distance in the four directions (order of
 * `sharpnessDirections`), summed over the pixels of cells [cx0, cx1) x [cy0, cy1) of the frame
 * whose 3 x 3 neighbourhood holds no clipped pixel, into out[0..3]; the same over the coarse cells
 * whose neighbours are not clipped, into out[4..7]; out[8] and out[9] count the samples.
 */
function windowEnergies(img: GrayImage, c: Coarse, cx0: number, cy0: number, cx1: number, cy1: number, out: Float64Array): void {
  out.fill(0);
  fillCells(img, c, cx0 - 1, cy0 - 1, cx1 + 1, cy1 + 1);
  const { width: w, data } = img;
  const x0 = Math.max(1, 4 * cx0), x1 = Math.min(img.width - 1, 4 * cx1);
  const y0 = Math.max(1, 4 * cy0), y1 = Math.min(img.height - 1, 4 * cy1);
  // Most windows hold no clipped pixel at all (their cells and the ring around them are clean):
  // then no pixel needs the check.
  let clean = true;
  for (let y = Math.max(0, cy0 - 1); y < Math.min(c.height, cy1 + 1) && clean; y++)
    for (let x = Math.max(0, cx0 - 1); x < Math.min(c.width, cx1 + 1); x++)
      if (c.clipped[y * c.width + x]) {
        clean = false;
        break;
      }
  let e0 = 0, e1 = 0, e2 = 0, e3 = 0, n = 0;
  for (let y = y0; y < y1; y++) {
    for (let x = x0, o = y * w + x0; x < x1; x++, o++) {
      const nw = data[o - w - 1], nn = data[o - w], ne = data[o - w + 1];
      const ww = data[o - 1], ee = data[o + 1];
      const sw = data[o + w - 1], ss = data[o + w], se = data[o + w + 1];
      if (!clean && (isClipped(data[o]) || isClipped(nw) || isClipped(nn) || isClipped(ne) || isClipped(ww) || isClipped(ee) || isClipped(sw) || isClipped(ss) || isClipped(se))) continue;
      const gh = ee - ww, gf = se - nw, gv = ss - nn, gr = ne - sw;
      e0 += gh * gh;
      e1 += gf * gf;
      e2 += gv * gv;
      e3 += gr * gr;
      n++;
    }
  }
  out[0] = e0;
  out[1] = e1;
  out[2] = e2;
  out[3] = e3;
  out[8] = n;
  const cw = c.width, cd = c.data, cl = c.clipped;
  const u0 = Math.max(1, cx0), u1 = Math.min(cw - 1, cx1), v0 = Math.max(1, cy0), v1 = Math.min(c.height - 1, cy1);
  e0 = e1 = e2 = e3 = n = 0;
  for (let y = v0; y < v1; y++) {
    for (let x = u0, o = y * cw + u0; x < u1; x++, o++) {
      if (cl[o] || cl[o - cw - 1] || cl[o - cw] || cl[o - cw + 1] || cl[o - 1] || cl[o + 1] || cl[o + cw - 1] || cl[o + cw] || cl[o + cw + 1]) continue;
      const gh = cd[o + 1] - cd[o - 1], gf = cd[o + cw + 1] - cd[o - cw - 1], gv = cd[o + cw] - cd[o - cw], gr = cd[o - cw + 1] - cd[o + cw - 1];
      e0 += gh * gh;
      e1 += gf * gf;
      e2 += gv * gv;
      e3 += gr * gr;
      n++;
    }
  }
  out[4] = e0;
  out[5] = e1;
  out[6] = e2;
  out[7] = e3;
  out[9] = n;
}

/**
 * log(fine / coarse) per direction of one window into out[0..3] and the fine energy per sample into
 * out[4..7], or false when the window is too clipped or too flat to say anything.
 */
function bandRatios(e: Float64Array, cells: number, minTexture: number, out: Float64Array): boolean {
  const nf = e[8], nc = e[9];
  // Most of the window must be unclipped in both bands, or it compares different content.
  if (nf < 0.6 * 16 * cells || nc < 0.4 * cells) return false;
  if ((e[4] + e[5] + e[6] + e[7]) / (4 * nc) < minTexture) return false;
  for (let k = 0; k < 4; k++) {
    if (!(e[k] > 0 && e[4 + k] > 0)) return false;
    out[k] = Math.log(e[k] / nf) - Math.log(e[4 + k] / nc);
    out[4 + k] = e[k] / nf;
  }
  return true;
}

/**
 * How sharp b is against a on the content both see, per direction. Blocks of a (`blockCells`
 * coarse cells square) are mapped through h to b, where the window of the same content is sized by
 * the homography's local scale; in each frame, on its own pixels, the ratio of fine (two pixels
 * apart) to coarse (two 4 x 4 cells apart) gradient energy is taken per direction, as in
 * `sharpness`. Nothing is resampled, so neither frame is softened by interpolation, and the fine
 * over coarse band ratio cancels contrast and brightness. Only blocks textured in both frames,
 * mostly unclipped and at a local scale within `maxScale` count. Per direction, b's log ratio minus
 * a's is taken at the median over the blocks with fine detail in at least one frame (see
 * `detailOverFloor`), so clouds and water do not outvote the detail that does tell; a median resists
 * a few blocks where something moved.
 * Null when fewer than `minBlocks` textured blocks are found.
 */
export function sharedSharpness(a: GrayImage, b: GrayImage, h: ArrayLike<number>, params: Partial<SharedSharpnessParams> = {}): SharedSharpness | null {
  expectImage(a, 'a');
  expectImage(b, 'b');
  if (h.length !== 9 || !Array.from(h).every(Number.isFinite)) throw new TypeError(`Expected 9 finite numbers for h but received ${Array.from(h).join(', ')}`);
  const p = { ...defaultSharedSharpnessParams, ...params };
  if (!(Number.isInteger(p.blockCells) && p.blockCells >= 2)) throw new TypeError(`Expected an integer of at least 2 for blockCells but received ${p.blockCells}`);
  const ca = coarseOf(a), cb = coarseOf(b);
  const K = p.blockCells;
  const ea = new Float64Array(10), eb = new Float64Array(10);
  const la = new Float64Array(8), lb = new Float64Array(8);
  const diffs: number[][] = [[], [], [], []];
  const detail: number[][] = [[], [], [], []];
  for (let by = 1; by + K < ca.height; by += K) {
    for (let bx = 1; bx + K < ca.width; bx += K) {
      // The block's middle, in a's pixels (cell x spans pixels 4x .. 4x + 3).
      const x = 4 * (bx + K / 2) - 0.5, y = 4 * (by + K / 2) - 0.5;
      const wz = h[6] * x + h[7] * y + h[8];
      if (!(wz > 0)) continue;
      const u = (h[0] * x + h[1] * y + h[2]) / wz, v = (h[3] * x + h[4] * y + h[5]) / wz;
      // The local linear part of h there: how a's block looks in b.
      const j00 = (h[0] - u * h[6]) / wz, j01 = (h[1] - u * h[7]) / wz;
      const j10 = (h[3] - v * h[6]) / wz, j11 = (h[4] - v * h[7]) / wz;
      const scale = Math.sqrt(Math.abs(j00 * j11 - j01 * j10));
      if (!(scale <= p.maxScale && scale >= 1 / p.maxScale)) continue;
      const sx = Math.hypot(j00, j10), sy = Math.hypot(j01, j11);
      const kw = Math.max(2, Math.round(K * sx)), kh = Math.max(2, Math.round(K * sy));
      const ux0 = Math.round((u + 0.5) / 4 - kw / 2), uy0 = Math.round((v + 0.5) / 4 - kh / 2);
      if (ux0 < 1 || uy0 < 1 || ux0 + kw >= cb.width || uy0 + kh >= cb.height) continue;
      windowEnergies(a, ca, bx, by, bx + K, by + K, ea);
      if (!bandRatios(ea, K * K, p.minTexture, la)) continue;
      windowEnergies(b, cb, ux0, uy0, ux0 + kw, uy0 + kh, eb);
      if (!bandRatios(eb, kw * kh, p.minTexture, lb)) continue;
      // a's direction k is b's direction k + turn (directions repeat every 180 degrees).
      const turn = Math.round(Math.atan2(j10 - j01, j00 + j11) / (Math.PI / 4));
      for (let k = 0; k < 4; k++) {
        const kb = (((k + turn) % 4) + 4) % 4;
        diffs[k].push(lb[kb] - la[k]);
        detail[k].push(Math.max(la[4 + k], lb[4 + kb]));
      }
    }
  }
  if (diffs[0].length < p.minBlocks) return null;
  let blocks = Infinity;
  const logs = diffs.map((d, k) => {
    // Blocks whose richer frame holds at least `detailOverFloor` times the fine energy of the
    // softest tenth (sensor noise and JPEG residue where there is no detail at all); at least
    // `minBlocks` of the richest when fewer qualify.
    const order = d.map((_, x) => x).sort((x, y) => detail[k][y] - detail[k][x]);
    const floor = detail[k][order[Math.floor(0.9 * (order.length - 1))]];
    let keep = order.filter((x) => detail[k][x] >= detailOverFloor * floor);
    if (keep.length < p.minBlocks) keep = order.slice(0, p.minBlocks);
    blocks = Math.min(blocks, keep.length);
    return median(keep.map((x) => d[x]));
  });
  const byDirection = logs.map(Math.exp) as unknown as [number, number, number, number];
  const ratio = Math.exp((logs[0] + logs[1] + logs[2] + logs[3]) / 4);
  return { byDirection, ratio, blocks };
}
