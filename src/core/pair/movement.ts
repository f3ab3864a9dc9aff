/**
 * Movement inside the aligned overlap of two frames: blocks of a whose content b does not repeat
 * where the homography puts it (a person, a wave, a branch that moved between the shots). Each
 * block is compared by zero-mean normalised cross-correlation, which ignores the exposure and
 * vignetting difference; flat blocks (sky, a wall) say nothing and are skipped.
 *
 * The two frames are compared on one grid and at one sharpness (common-band.ts), so that a frame
 * smeared by motion or seen at a coarser scale does not differ everywhere. Blocks are judged not
 * against the homography alone but against a smooth displacement field fitted to where every block
 * is found (displacement-field.ts): a lens's radial distortion moves blocks by pixels to tens of
 * pixels, smoothly, while parallax breaks from the field where near and far things meet.
 */
import { sampleBilinear } from '../image/bilinear.js';
import { commonBand, lowPassed } from './common-band.js';
import type { LensPair, SmoothField } from './displacement-field.js';
import { fieldAt, fitSmoothField } from './displacement-field.js';
import type { FloatImage, GrayImage } from '../image/image.js';

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
   * Each textured block's displacement is measured within this many pixels of where the homography
   * puts it: the smooth field (lens distortion the homography cannot absorb) is fitted to these.
   */
  readonly fieldSearch: number;
  /** Least correlation for a block's measured displacement to enter the smooth field. */
  readonly fieldCorrelation: number;
  /**
   * A block that differs where the smooth field puts it is looked for this many pixels around: a
   * pixel or two of misfit is neither movement nor parallax worth a reshoot.
   */
  readonly search: number;
  /** How far a differing block is looked for before it counts as gone, px. */
  readonly displacedSearch: number;
  /** Correlation at which a differing block counts as found, displaced. */
  readonly displacedCorrelation: number;
  /** Fewest blocks displaced by one common shift that make parallax. */
  readonly minDisplaced: number;
}

export const defaultMovementParams: MovementParams = { block: 16, minCorrelation: 0.4, flatSd: 3, texturedSd: 8, minBlocks: 3, fieldSearch: 16, fieldCorrelation: 0.7, search: 2, displacedSearch: 36, displacedCorrelation: 0.75, minDisplaced: 6 };

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
  /** Where the blocks displaced by one common shift lie in a (their bounding box), or null. */
  readonly displacedRegion: MovedRegion | null;
  /** Gaussian sigma both frames were low-passed with to compare them at one sharpness, px (0: none). */
  readonly lowPass: number;
  /** Largest displacement of the smooth field over the compared blocks, px: what the homography leaves (lens distortion). */
  readonly smoothShift: number;
}

/** Above this share of differing blocks the overlap as a whole does not line up. */
export const parallaxMisfit = 0.2;
/** More separate differing places than this are misalignment scattered over the overlap, not things that moved. */
export const maxMovedRegions = 5;

/** Compares a and b block by block where `h` (a -> b, analysis pixels) maps a into b; NaN pixels (off a lens's ideal image) are skipped. */
export function findMovement(a: GrayImage | FloatImage, b: GrayImage | FloatImage, h: ArrayLike<number>, params: Partial<MovementParams> = {}): Movement {
  const p = { ...defaultMovementParams, ...params };
  const band = commonBand(a, b, h);
  const A = band.a, use = band.use, w = band.width, ht = band.height;
  const s = p.block, n = s * s;
  const cols = Math.floor(w / s), rows = Math.floor(ht / s);
  // b on a's grid; replaced by b carried along the smooth field once that is known.
  let B = band.b;
  const differs = new Uint8Array(cols * rows);
  const compared = new Uint8Array(cols * rows);
  const meanA = new Float64Array(cols * rows), ssA = new Float64Array(cols * rows), sdAll = new Float64Array(cols * rows);
  let blocks = 0, differing = 0, displaced = 0;
  const shifts: { k: number; dx: number; dy: number }[] = [];
  // Correlation of a's block k at (x0, y0) with b's pixels shifted by whole pixels (dx, dy); the
  // standard deviation of b's pixels in sdOut[0]. NaN when a shifted pixel leaves b.
  const sdOut = new Float64Array(1);
  // The band compare() works in: the common band, or a coarser one while the field is measured.
  let PA = A, PB = B, PM = meanA, PS = ssA;
  const compare = (k: number, x0: number, y0: number, dx: number, dy: number): number => {
    const bx = x0 + dx, by = y0 + dy;
    if (bx < 0 || by < 0 || bx + s > w || by + s > ht) return NaN;
    const ma = PM[k];
    let sb = 0, sbb = 0, sab = 0;
    for (let v = 0; v < s; v++) {
      const oa = (y0 + v) * w + x0, ob = (by + v) * w + bx;
      for (let u = 0; u < s; u++) {
        const vb = PB[ob + u];
        sb += vb;
        sbb += vb * vb;
        sab += (PA[oa + u] - ma) * vb;
      }
    }
    if (sb !== sb) return NaN;
    const vbb = sbb - (sb * sb) / n;
    sdOut[0] = Math.sqrt(Math.max(0, vbb) / n);
    return vbb > 0 && PS[k] > 0 ? sab / Math.sqrt(PS[k] * vbb) : 0;
  };

  const coarseSigma = Math.max(2, 1.5 * band.sigma);
  // Pass 1: every textured block's displacement from where the homography puts it, to sub-pixel.
  const fx = new Float64Array(cols * rows), fy = new Float64Array(cols * rows), fdx = new Float64Array(cols * rows), fdy = new Float64Array(cols * rows);
  let fieldPoints = 0;
  // Search radius of a measurement: the field's own window at first, wider once the field
  // predicts where to look (see the rounds below).
  let R = p.fieldSearch;
  const z = new Float64Array(9);
  const inField = new Uint8Array(cols * rows), measurable = new Uint8Array(cols * rows);
  // A smooth field needs a few hundred points, not every block of a large overlap: on a large
  // frame every other block (a checkerboard) is measured.
  const sparse = cols * rows > 1200;
  // Block k's best match within R of (cx, cy): kept as a field point (sub-pixel, by a parabola
  // through the peak and its neighbours on each axis) when it correlates well and is not on the
  // window's edge.
  // Uphill pixel by pixel from (cx + sx, cy + sy) until the best shift is surrounded by worse
  // ones; kept when that peak correlates well and lies inside the window.
  const climb = (k: number, x0: number, y0: number, cx: number, cy: number, sx: number, sy: number, start: number): boolean => {
    let best = start, bdx = sx, bdy = sy;
    for (let step = 0; step < 4; step++) {
      let mdx = 0, mdy = 0;
      for (let j = 0, dy = -1; dy <= 1; dy++)
        for (let dx = -1; dx <= 1; dx++, j++) {
          const q = dx || dy ? compare(k, x0, y0, cx + bdx + dx, cy + bdy + dy) : best;
          z[j] = q === q ? q : -1;
          if (z[j] > best) [best, mdx, mdy] = [z[j], dx, dy];
        }
      if (!mdx && !mdy) break;
      bdx += mdx;
      bdy += mdy;
      if (Math.abs(bdx) >= R || Math.abs(bdy) >= R) return false;
    }
    const centre = z[4];
    if (centre < p.fieldCorrelation || best > centre) return false;
    // Sub-pixel peak: a parabola through the best correlation and its neighbours on each axis.
    const zl = z[3], zr = z[5], zu = z[1], zd = z[7];
    const ex = zl - 2 * centre + zr, ey = zu - 2 * centre + zd;
    fx[fieldPoints] = x0 + (s - 1) / 2;
    fy[fieldPoints] = y0 + (s - 1) / 2;
    fdx[fieldPoints] = cx + bdx + (ex < 0 ? Math.max(-0.5, Math.min(0.5, (0.5 * (zl - zr)) / ex)) : 0);
    fdy[fieldPoints] = cy + bdy + (ey < 0 ? Math.max(-0.5, Math.min(0.5, (0.5 * (zu - zd)) / ey)) : 0);
    fieldPoints++;
    return true;
  };
  const measure = (k: number, x0: number, y0: number, cx: number, cy: number): boolean => {
    // Most blocks sit on a peak next to where they are expected; the others are looked for on
    // every other shift of the window first (natural images correlate over more than a pixel).
    const here = compare(k, x0, y0, cx, cy);
    if (here >= p.fieldCorrelation && climb(k, x0, y0, cx, cy, 0, 0, here)) return true;
    let best = -Infinity, bdx = 0, bdy = 0;
    for (let dy = -R + 1; dy < R; dy += 2)
      for (let dx = -R + 1; dx < R; dx += 2) {
        const q = compare(k, x0, y0, cx + dx, cy + dy);
        if (q > best) [best, bdx, bdy] = [q, dx, dy];
      }
    return best >= p.fieldCorrelation - 0.2 && climb(k, x0, y0, cx, cy, bdx, bdy, best);
  };
  for (let r = 0; r < rows; r++)
    for (let c = 0; c < cols; c++) {
      const k = r * cols + c, x0 = c * s, y0 = r * s;
      let ma = 0, clipped = 0, inside = true;
      for (let v = 0; v < s && inside; v++)
        for (let u = 0, o = (y0 + v) * w + x0; u < s; u++, o++) {
          if (B[o] !== B[o] || A[o] !== A[o]) {
            inside = false;
            break;
          }
          if (!use[o]) clipped++;
          ma += A[o];
        }
      if (!inside || clipped > n / 4) continue;
      ma /= n;
      let saa = 0;
      for (let v = 0; v < s; v++) for (let u = 0, o = (y0 + v) * w + x0; u < s; u++, o++) saa += (A[o] - ma) ** 2;
      meanA[k] = ma;
      ssA[k] = saa;
      const sda = Math.sqrt(saa / n);
      sdAll[k] = sda;
      compare(k, x0, y0, 0, 0);
      if (sda < p.texturedSd && sdOut[0] < p.texturedSd) continue;
      compared[k] = 1;
      blocks++;
      if (sda < p.flatSd || sdOut[0] < p.flatSd || (sparse && (r + c) % 2)) continue;
      measurable[k] = 1;
    }
  const at = new Float64Array(2);
  // One camera: both frames' centres, distortion measured on a's half diagonal. After b is
  // carried along the first field the second measures what is left, with no lens shape of its own.
  let lens: LensPair | null = { h, ax: (a.width - 1) / 2, ay: (a.height - 1) / 2, bx: (b.width - 1) / 2, by: (b.height - 1) / 2, rn: Math.hypot(a.width, a.height) / 2 };
  const fitField = (): SmoothField => {
    fieldPoints = 0;
    inField.fill(0);
    R = p.fieldSearch;
    for (let k = 0; k < measurable.length; k++) if (measurable[k] && measure(k, (k % cols) * s, Math.floor(k / cols) * s, 0, 0)) inField[k] = 1;
    let field = fitSmoothField(fx, fy, fdx, fdy, fieldPoints, 0.5, lens);
    // Further rounds: blocks the first window missed (the far corners of a distorted overlap shift
    // the most, and faster than a cubic held constant past its points) are looked for around the
    // field, and the field is fitted again to all, so that it reaches a little farther each round.
    // Past the points the field is held, not extrapolated, while the distortion keeps growing
    // toward the frame's edge: a block there is looked for twice as far around the prediction.
    R = p.fieldSearch;
    for (let round = 0; round < 6; round++) {
      let added = 0;
      for (let k = 0; k < measurable.length; k++) {
        if (!measurable[k] || inField[k]) continue;
        const x0 = (k % cols) * s, y0 = Math.floor(k / cols) * s;
        fieldAt(field, x0 + (s - 1) / 2, y0 + (s - 1) / 2, at);
        if (Math.max(Math.abs(at[0]), Math.abs(at[1])) < 1 || !measure(k, x0, y0, Math.round(at[0]), Math.round(at[1]))) continue;
        inField[k] = 1;
        added++;
      }
      if (added === 0) break;
      field = fitSmoothField(fx, fy, fdx, fdy, fieldPoints, 0.5, lens);
    }
    return field;
  };
  // The field is measured in a coarser band than blocks are judged in: toward the edge of a
  // distorted overlap one frame's content is shrunk against the other's, and a fine texture (a
  // weave, grass, needles) no longer correlates in its finest band even where it lines up. A
  // coarse band keeps the shift and loses only some precision, which the fit over hundreds of
  // blocks restores.
  const coarseA = lowPassed(A, w, ht, coarseSigma);
  const coarseMean = new Float64Array(cols * rows), coarseSs = new Float64Array(cols * rows);
  for (let k = 0; k < measurable.length; k++) {
    if (!measurable[k]) continue;
    const x0 = (k % cols) * s, y0 = Math.floor(k / cols) * s;
    let m = 0, mm = 0;
    for (let v = 0; v < s; v++)
      for (let u = 0, o = (y0 + v) * w + x0; u < s; u++, o++) {
        m += coarseA[o];
        mm += coarseA[o] * coarseA[o];
      }
    if (m !== m) {
      measurable[k] = 0;
      continue;
    }
    coarseMean[k] = m / n;
    coarseSs[k] = mm - (m * m) / n;
  }
  [PA, PB, PM, PS] = [coarseA, lowPassed(B, w, ht, coarseSigma), coarseMean, coarseSs];
  const first = fitField();
  let field = first;
  // A lens's distortion does not only shift a block: toward the frame's edge it also shrinks it
  // against the other frame's middle (by 1 + 3 k1 r^2 along the radius, Brown's model: about 18 %
  // at k1 = -0.15 near a 28 mm frame's side), and a block compared by shifting alone no longer
  // correlates there. So b is carried along the field onto a's grid, which undoes the local scale
  // as well as the shift, and what is left is measured and judged against a second field.
  if (first.terms > 1) {
    const carried = new Float32Array(w * ht);
    for (let y = 0, o = 0; y < ht; y++)
      for (let x = 0; x < w; x++, o++) {
        fieldAt(first, x, y, at);
        const px = x + at[0], py = y + at[1];
        // Kept from before the shared sampler: the last column and row stay NaN here (the sampler's
        // rule would give them values; the movement tests hit them 3939 times, so it would change
        // results, which this refactor must not).
        carried[o] = px < w - 1 && py < ht - 1 ? sampleBilinear(B, w, ht, px, py) : NaN;
      }
    B = carried;
    lens = null;
    PB = lowPassed(B, w, ht, coarseSigma);
    field = fitField();
  }
  [PA, PB, PM, PS] = [A, B, meanA, ssA];

  // Pass 2: each compared block against the smooth field. Within a pixel or two of it, the block
  // lines up; otherwise it differs, and is looked for farther off (parallax: near things shift
  // against far ones by one common shift) or not found (something moved).
  let smoothShift = 0;
  for (let k = 0; k < compared.length; k++) {
    if (!compared[k]) continue;
    const x0 = (k % cols) * s, y0 = Math.floor(k / cols) * s;
    fieldAt(first, x0 + (s - 1) / 2, y0 + (s - 1) / 2, at);
    const sx = at[0], sy = at[1];
    fieldAt(field, x0 + (s - 1) / 2, y0 + (s - 1) / 2, at);
    smoothShift = Math.max(smoothShift, field === first ? Math.hypot(sx, sy) : Math.hypot(sx + at[0], sy + at[1]));
    const px = Math.round(at[0]), py = Math.round(at[1]);
    const sda = sdAll[k];
    const zncc = compare(k, x0, y0, px, py);
    const sdb = sdOut[0];
    if (zncc !== zncc) {
      // The field puts the block beyond b's pixels: nothing to compare it with.
      compared[k] = 0;
      blocks--;
      continue;
    }
    // Textured in one frame and flat in the other (something in front of sky) correlates no better
    // than noise does, so the correlation alone decides: a contrast difference with the same
    // structure is not a change.
    // Within the search, a block flat in a lines up with b's as well when b's is flat there too: a
    // flat block next to a hard edge (a dark roof line against sky) takes in a row of the edge in b
    // a pixel or two off, and then correlates like noise at every shift.
    let unlike = !(zncc >= p.minCorrelation);
    if (unlike)
      for (let dy = -p.search; dy <= p.search && unlike; dy++)
        for (let dx = -p.search; dx <= p.search && unlike; dx++) {
          if (!dx && !dy) continue;
          const q = compare(k, x0, y0, px + dx, py + dy);
          if (q >= p.minCorrelation || (q === q && sda < p.texturedSd && sdOut[0] < p.texturedSd)) unlike = false;
        }
    if (!unlike) continue;
    differing++;
    differs[k] = 1;
    if (sda >= p.texturedSd && sdb >= p.flatSd) {
      let best = -1, bdx = 0, bdy = 0;
      const D = p.displacedSearch;
      for (let dy = -D; dy <= D; dy += 3)
        for (let dx = -D; dx <= D; dx += 3) {
          const q = compare(k, x0, y0, px + dx, py + dy);
          if (q > best) [best, bdx, bdy] = [q, dx, dy];
        }
      for (let dy = bdy - 2, cy = bdy, cx = bdx; dy <= cy + 2 && best < p.displacedCorrelation; dy++)
        for (let dx = cx - 2; dx <= cx + 2; dx++) best = Math.max(best, compare(k, x0, y0, px + dx, py + dy) || -1);
      if (best >= p.displacedCorrelation) shifts.push({ k, dx: bdx, dy: bdy });
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
  let displacedRegion: MovedRegion | null = null;
  const top = [...bins.values()].sort((x, y) => y.n - x.n)[0];
  if (top) {
    const mx = top.dx / top.n, my = top.dy / top.n;
    const coherent = shifts.filter((sh) => Math.hypot(sh.dx - mx, sh.dy - my) <= 4);
    if (coherent.length >= Math.max(p.minDisplaced, 0.3 * shifts.length)) {
      displaced = coherent.length;
      let c0 = Infinity, c1 = -Infinity, r0 = Infinity, r1 = -Infinity;
      for (const sh of coherent) {
        differs[sh.k] = 0;
        const r = Math.floor(sh.k / cols), c = sh.k % cols;
        [c0, c1, r0, r1] = [Math.min(c0, c), Math.max(c1, c), Math.min(r0, r), Math.max(r1, r)];
      }
      displacedRegion = { x: c0 * s, y: r0 * s, width: (c1 - c0 + 1) * s, height: (r1 - r0 + 1) * s };
    }
  }

  // Connected differing blocks (8-neighbours: one thing can touch the grid corner to corner) of at
  // least minBlocks make a region.
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
      for (const [dr, dc] of [[1, 0], [-1, 0], [0, 1], [0, -1], [1, 1], [1, -1], [-1, 1], [-1, -1]]) {
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
  return { blocks, differing, displaced, regions: parallax ? [] : regions, misfit, parallax, displacedRegion, lowPass: band.sigma, smoothShift };
}
