// Synthetic warps of real photographs by known homographies: the engine must recover each one.
// Sources: graf1.png and leuvenA.jpg (test/fixtures/external/SOURCES.md). The transforms, exposure
// changes, noise and JPEG round trips are generated here from a seed; the ground truth is the
// homography we warped with, composed exactly (Hartley & Zisserman, ch. 2: H_ab = T_b^-1 T_a).
import { beforeAll, describe, expect, it } from 'vitest';
import { detectAndDescribe } from '../../../src/core/features/features.js';
import { invert, multiply } from '../../../src/core/geometry/homography.js';
import type { GrayImage } from '../../../src/core/image/image.js';
import { estimatePairGeometry } from '../../../src/core/pair/pair-geometry.js';
import { createRandom } from '../../../src/core/numeric/random.js';
import { warpBilinear } from '../../../src/core/image/warp.js';
import { externalFixture, loadGray, meanCornerError, toCameraFrame } from '../../helpers/images.js';

const W = 512;
const H = 384;

interface Case {
  seed: number;
  source: string;
  rollDeg: number;
  scale: number;
  ev: number;
  noise: number;
  jpegQuality: number;
}

/** Source pixel of frame pixel: centre the frame on the source, then roll, scale, shift, tilt. */
function frameToSource(src: GrayImage, rollDeg: number, scale: number, dx: number, dy: number, px: number, py: number): Float64Array {
  const a = (rollDeg * Math.PI) / 180;
  const c = Math.cos(a) * scale, s = Math.sin(a) * scale;
  const toCentre = Float64Array.of(1, 0, -(W - 1) / 2, 0, 1, -(H - 1) / 2, 0, 0, 1);
  const tilt = Float64Array.of(1, 0, 0, 0, 1, 0, px, py, 1);
  const rot = Float64Array.of(c, -s, 0, s, c, 0, 0, 0, 1);
  const place = Float64Array.of(1, 0, (src.width - 1) / 2 + dx, 0, 1, (src.height - 1) / 2 + dy, 0, 0, 1);
  return multiply(place, multiply(rot, multiply(tilt, toCentre)));
}

const round = (v: number, d: number): number => Number(v.toFixed(d));

function makeCases(): Case[] {
  const rnd = createRandom(20261202);
  const cases: Case[] = [];
  for (let i = 0; i < 24; i++) {
    cases.push({
      seed: 1000 + i,
      source: i % 2 === 0 ? 'graf1.png' : 'leuvenA.jpg',
      rollDeg: round(-20 + 40 * rnd.next(), 1),
      scale: i % 4 === 1 ? 1.2 : i % 4 === 3 ? round(1 / 1.2, 3) : round(0.9 + 0.2 * rnd.next(), 3),
      ev: round(-2 + 4 * rnd.next(), 2),
      noise: round(3 * rnd.next(), 1),
      jpegQuality: 75 + Math.round(20 * rnd.next()),
    });
  }
  return cases;
}

describe('synthetic warps of real photographs (known homographies)', () => {
  const sources = new Map<string, GrayImage>();
  beforeAll(async () => {
    for (const name of ['graf1.png', 'leuvenA.jpg']) sources.set(name, await loadGray(externalFixture(name)));
  });

  const cases = makeCases();
  const errors: number[] = [];

  it.each(cases)('recovers roll $rollDeg deg, scale $scale, $ev EV, noise $noise, JPEG q$jpegQuality ($source)', async (k) => {
    const src = sources.get(k.source)!;
    const rnd = createRandom(k.seed);
    const ta = frameToSource(src, 0, 1, -40, 0, 0, 0);
    const tb = frameToSource(src, k.rollDeg, k.scale, 40 + 20 * (rnd.next() - 0.5), 20 * (rnd.next() - 0.5), 2e-4 * (rnd.next() - 0.5), 2e-4 * (rnd.next() - 0.5));
    const a = await toCameraFrame(warpBilinear(src, ta, W, H), rnd, { noise: k.noise, jpegQuality: k.jpegQuality });
    const b = await toCameraFrame(warpBilinear(src, tb, W, H), rnd, { ev: k.ev, noise: k.noise, jpegQuality: k.jpegQuality });
    const truth = multiply(invert(tb)!, ta);
    const g = estimatePairGeometry(detectAndDescribe(a), detectAndDescribe(b));
    expect(g.homography, `no model: ${g.noModel}`).not.toBeNull();
    const err = meanCornerError(g.homography!, truth, W, H);
    errors.push(err);
    expect(err).toBeLessThan(2);
  });

  it('keeps the mean corner error under 1 px at analysis resolution over all cases', () => {
    expect(errors.length).toBe(cases.length);
    const mean = errors.reduce((s, e) => s + e, 0) / errors.length;
    console.log(`corner error over ${errors.length} cases: mean ${mean.toFixed(3)} px, max ${Math.max(...errors).toFixed(3)} px`);
    expect(mean).toBeLessThan(1);
  });
});
