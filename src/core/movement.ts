/**
 * Movement inside the aligned overlap of two frames: blocks of a whose content b does not repeat
 * where the homography puts it (a person, a wave, a branch that moved between the shots). Each
 * block is compared by zero-mean normalised cross-correlation, which ignores the exposure and
 * vignetting difference; flat blocks (sky, a wall) say nothing and are skipped.
 */
import type { GrayImage } from './image.js';

/** A region of a, analysis pixels. */
export interface MovedRegion {
  readonly x: number;
  readonly y: number;
  readonly width: number;
  readonly height: number;
}

export interface MovementParams {
  /** Side of a compared block, px. */
  readonly block: number;
  /** Below this correlation a textured block differs. */
  readonly minCorrelation: number;
  /** A block whose standard deviation is under this (8-bit levels) is flat. */
  readonly flatSd: number;
  /** A block is textured from this standard deviation on. */
  readonly texturedSd: number;
  /** Fewest neighbouring differing blocks that make a moved region. */
  readonly minBlocks: number;
  /**
   * A block that differs where the model puts it is looked for this many pixels around (b's
   * pixels): a few pixels of misfit (lens distortion, a little parallax) are not movement.
   */
  readonly search: number;
  /** How far a differing block is looked for before it counts as gone, px. */
  readonly displacedSearch: number;
  /** Correlation at which a differing block counts as found, displaced. */
  readonly displacedCorrelation: number;
  /** Fewest blocks displaced by one common shift that make parallax. */
  readonly minDisplaced: number;
}

export const defaultMovementParams: MovementParams = { block: 16, minCorrelation: 0.4, flatSd: 3, texturedSd: 8, minBlocks: 3, search: 3, displacedSearch: 36, displacedCorrelation: 0.75, minDisplaced: 6 };

export interface Movement {
  /** Blocks compared (textured in at least one frame, inside both). */
  readonly blocks: number;
  /** Blocks that differ. */
  readonly differing: number;
  /** Of those, blocks found in b farther off the model's position, by one common shift: parallax, not movement. */
  readonly displaced: number;
  /** Connected differing blocks not found displaced, when they are few: something moved there. */
  readonly regions: MovedRegion[];
  /**
   * Share of the compared blocks that differ. A large share is not movement but frames that do
   * not line up across the overlap (parallax, or a model that fits one plane only).
   */
  readonly misfit: number;
  /**
   * Near and far things do not line up together: many blocks displaced by one common shift, a
   * large share of the overlap off, or what differs scattered over many separate places. No
   * moved regions are named then: they cannot be told from parallax.
   */
  readonly parallax: boolean;
}

/** Above this share of differing blocks the overlap as a whole does not line up. */
export const parallaxMisfit = 0.2;
/** More separate differing places than this are misalignment scattered over the overlap, not things that moved. */
export const maxMovedRegions = 5;

function bilinear(img: GrayImage, x: number, y: number): number {
  const x0 = Math.floor(x), y0 = Math.floor(y);
  const tx = x - x0, ty = y - y0;
  const o = y0 * img.width + x0, d = img.data;
  const top = d[o] + tx * (d[o + 1] - d[o]);
  const bottom = d[o + img.width] + tx * (d[o + img.width + 1] - d[o + img.width]);
  return top + ty * (bottom - top);
}

/** Compares a and b block by block where `h` (a -> b, analysis pixels) maps a into b. */
export function findMovement(a: GrayImage, b: GrayImage, h: ArrayLike<number>, params: Partial<MovementParams> = {}): Movement {
  const p = { ...defaultMovementParams, ...params };
  const s = p.block;
  const cols = Math.floor(a.width / s), rows = Math.floor(a.height / s);
  const differs = new Uint8Array(cols * rows);
  const va = new Float64Array(s * s), vb = new Float64Array(s * s);
  let blocks = 0, differing = 0, displaced = 0;
  const shifts: { k: number; dx: number; dy: number }[] = [];
  const n = s * s;
  const bx = new Float64Array(n), by = new Float64Array(n);
  // Correlation of a's block (in va) with b sampled at the mapped positions shifted by (dx, dy);
  // sd of b's samples in sdOut[0]. NaN when a shifted sample leaves b.
  const sdOut = new Float64Array(1);
  const compare = (dx: number, dy: number, ma: number, saa: number): number => {
    let mb = 0;
    for (let k = 0; k < n; k++) {
      const x = bx[k] + dx, y = by[k] + dy;
      if (!(x >= 0 && y >= 0 && x < b.width - 1 && y < b.height - 1)) return NaN;
      vb[k] = bilinear(b, x, y);
      mb += vb[k];
    }
    mb /= n;
    let sbb = 0, sab = 0;
    for (let k = 0; k < n; k++) {
      const db = vb[k] - mb;
      sbb += db * db;
      sab += (va[k] - ma) * db;
    }
    sdOut[0] = Math.sqrt(sbb / n);
    return sbb > 0 && saa > 0 ? sab / Math.sqrt(saa * sbb) : 0;
  };
  for (let r = 0; r < rows; r++)
    for (let c = 0; c < cols; c++) {
      let inside = true, clipped = 0;
      for (let k = 0, v = 0; v < s && inside; v++)
        for (let u = 0; u < s; u++, k++) {
          const x = c * s + u, y = r * s + v;
          const w = h[6] * x + h[7] * y + h[8];
          const px = (h[0] * x + h[1] * y + h[2]) / w, py = (h[3] * x + h[4] * y + h[5]) / w;
          if (!(w > 0 && px >= 0 && py >= 0 && px < b.width - 1 && py < b.height - 1)) {
            inside = false;
            break;
          }
          bx[k] = px;
          by[k] = py;
          va[k] = a.data[y * a.width + x];
          if (va[k] >= 250 || bilinear(b, px, py) >= 250) clipped++;
        }
      if (!inside || clipped > n / 4) continue;
      let ma = 0;
      for (let k = 0; k < n; k++) ma += va[k];
      ma /= n;
      let saa = 0;
      for (let k = 0; k < n; k++) saa += (va[k] - ma) ** 2;
      const sda = Math.sqrt(saa / n);
      const zncc = compare(0, 0, ma, saa);
      const sdb = sdOut[0];
      if (sda < p.texturedSd && sdb < p.texturedSd) continue;
      blocks++;
      // Textured in one frame and flat in the other, or both textured but unlike even a few
      // pixels off the model's position.
      let unlike = sda < p.flatSd || sdb < p.flatSd || !(zncc >= p.minCorrelation);
      if (unlike && sda >= p.flatSd && sdb >= p.flatSd) {
        for (let dy = -p.search; dy <= p.search && unlike; dy++)
          for (let dx = -p.search; dx <= p.search && unlike; dx++) if ((dx || dy) && compare(dx, dy, ma, saa) >= p.minCorrelation) unlike = false;
      }
      if (unlike) {
        differing++;
        // Is it there in b, only farther off (parallax: near things shift against far ones), or
        // gone (movement)? Searched coarsely over +/- displacedSearch px, then around the best.
        if (sda >= p.texturedSd && sdb >= p.flatSd) {
          let best = -1, bdx = 0, bdy = 0;
          const D = p.displacedSearch;
          for (let dy = -D; dy <= D; dy += 3)
            for (let dx = -D; dx <= D; dx += 3) {
              const z = compare(dx, dy, ma, saa);
              if (z > best) [best, bdx, bdy] = [z, dx, dy];
            }
          for (let dy = bdy - 2; dy <= bdy + 2 && best < p.displacedCorrelation; dy++)
            for (let dx = bdx - 2; dx <= bdx + 2; dx++) best = Math.max(best, compare(dx, dy, ma, saa) || -1);
          if (best >= p.displacedCorrelation) shifts.push({ k: r * cols + c, dx: bdx, dy: bdy });
        }
        differs[r * cols + c] = 1;
      }
    }

  // Parallax shifts near things together: blocks found displaced by about one common shift (the
  // most frequent, on a 4 px grid) count as displaced, once there are several of them and they
  // make up a good part of the blocks found anywhere; a block found at some chance shift of its own
  // (smooth or repetitive texture matches somewhere) stays among the moved.
  const bins = new Map<string, { n: number; dx: number; dy: number }>();
  for (const sh of shifts) {
    const key = `${Math.round(sh.dx / 4)},${Math.round(sh.dy / 4)}`;
    const b0 = bins.get(key) ?? { n: 0, dx: 0, dy: 0 };
    bins.set(key, { n: b0.n + 1, dx: b0.dx + sh.dx, dy: b0.dy + sh.dy });
  }
  const top = [...bins.values()].sort((x, y) => y.n - x.n)[0];
  if (top) {
    const mx = top.dx / top.n, my = top.dy / top.n;
    const coherent = shifts.filter((sh) => Math.hypot(sh.dx - mx, sh.dy - my) <= 4);
    if (coherent.length >= Math.max(p.minDisplaced, 0.3 * shifts.length)) {
      displaced = coherent.length;
      for (const sh of coherent) differs[sh.k] = 0;
    }
  }

  // Connected differing blocks (4-neighbours) of at least minBlocks make a region.
  const seen = new Uint8Array(cols * rows);
  const regions: MovedRegion[] = [];
  for (let start = 0; start < differs.length; start++) {
    if (!differs[start] || seen[start]) continue;
    const stack = [start];
    seen[start] = 1;
    let count = 0, c0 = Infinity, c1 = -Infinity, r0 = Infinity, r1 = -Infinity;
    while (stack.length) {
      const k = stack.pop()!;
      count++;
      const r = Math.floor(k / cols), c = k % cols;
      c0 = Math.min(c0, c);
      c1 = Math.max(c1, c);
      r0 = Math.min(r0, r);
      r1 = Math.max(r1, r);
      for (const [dr, dc] of [[1, 0], [-1, 0], [0, 1], [0, -1]]) {
        const rr = r + dr, cc = c + dc;
        if (rr < 0 || rr >= rows || cc < 0 || cc >= cols) continue;
        const nk = rr * cols + cc;
        if (differs[nk] && !seen[nk]) {
          seen[nk] = 1;
          stack.push(nk);
        }
      }
    }
    if (count >= p.minBlocks) regions.push({ x: c0 * s, y: r0 * s, width: (c1 - c0 + 1) * s, height: (r1 - r0 + 1) * s });
  }
  const misfit = blocks > 0 ? differing / blocks : 0;
  const parallax = displaced > 0 || misfit > parallaxMisfit || regions.length > maxMovedRegions;
  return { blocks, differing, displaced, regions: parallax ? [] : regions, misfit, parallax };
}
