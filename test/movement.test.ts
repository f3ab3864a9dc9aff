// Movement inside the aligned overlap: on a real photograph (leuvenA, test/fixtures/external/
// SOURCES.md) with a figure pasted into one copy, and on a rendered sequence with a planted figure
// that stands in one station's frames only (the demo generator's visitor): flagged there, and
// nowhere else. A pair that does not line up as a whole (leuven, two camera positions) is parallax.
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import type { GrayImage } from '../src/core/image.js';
import { detectAndDescribe } from '../src/core/features.js';
import { findMovement, parallaxMisfit } from '../src/core/movement.js';
import { estimatePairGeometry } from '../src/core/pair-geometry.js';
import { defaultBudget } from '../src/core/report.js';
import { judge } from '../src/core/verdicts.js';
import { createAnalysisPool } from '../src/main/analysis-pool.js';
import { runCheck } from '../src/main/check.js';
import { writeDemoShoot } from '../src/main/demo-writer.js';
import { tempDir } from './helpers/cli.js';
import { externalFixture, loadGray } from './helpers/images.js';

const identity = [1, 0, 0, 0, 1, 0, 0, 0, 1];
let photo: GrayImage;
beforeAll(async () => {
  photo = await loadGray(externalFixture('leuvenA.jpg'));
});

/** The photo with its brightness scaled (an exposure change) and a striped figure pasted at (x, y). */
function withFigure(gain: number, figure: { x: number; y: number; w: number; h: number } | null): GrayImage {
  const data = photo.data.map((v) => Math.min(255, Math.round(v * gain)));
  if (figure)
    for (let y = figure.y; y < figure.y + figure.h; y++)
      for (let x = figure.x; x < figure.x + figure.w; x++) data[y * photo.width + x] = (y >> 3) % 2 ? 30 : 180;
  return { ...photo, data };
}

describe('movement between two aligned frames', () => {
  it('finds nothing between a photograph and the same view one stop darker', () => {
    const m = findMovement(photo, withFigure(0.5, null), identity);
    expect(m.blocks).toBeGreaterThan(200);
    expect(m.regions).toEqual([]);
  });

  it('finds a figure that is in one frame only, where it is', () => {
    const fig = { x: 300, y: 200, w: 60, h: 110 };
    const m = findMovement(photo, withFigure(0.8, fig), identity);
    expect(m.regions).toHaveLength(1);
    const r = m.regions[0];
    expect(r.x).toBeLessThanOrEqual(fig.x);
    expect(r.y).toBeLessThanOrEqual(fig.y);
    expect(r.x + r.width).toBeGreaterThanOrEqual(fig.x + fig.w - 16);
    expect(r.y + r.height).toBeGreaterThanOrEqual(fig.y + fig.h - 16);
    expect(r.width).toBeLessThan(fig.w + 48);
  });
});

describe('frames that do not line up as a whole', () => {
  it('are parallax, not movement: leuvenA and leuvenB, photographed from two positions', async () => {
    const b = await loadGray(externalFixture('leuvenB.jpg'));
    const g = estimatePairGeometry(detectAndDescribe(photo), detectAndDescribe(b));
    expect(g.homography).not.toBeNull();
    const m = findMovement(photo, b, g.homography!);
    console.log(`leuven: ${m.differing} of ${m.blocks} blocks do not line up (${(100 * m.misfit).toFixed(0)} %)`);
    expect(m.misfit).toBeGreaterThan(parallaxMisfit);
    expect(m.parallax).toBe(true);
    expect(m.regions).toEqual([]);
    expect(findMovement(photo, withFigure(0.5, null), identity).misfit).toBeLessThan(0.02);
  });
});

describe('a rendered sequence with a figure in one overlap', () => {
  it('flags movement on that pair only', async () => {
    const pool = createAnalysisPool(0);
    const demo = await writeDemoShoot(join(tempDir(), 'visitor'), { clean: true, width: 1200, height: 800, stations: 6, seed: 5, visitor: true });
    const planted = demo.truth.problems.find((p) => p.code === 'movement')!;
    const report = judge((await runCheck(demo.folder, { pool })).analysis, defaultBudget);
    const flagged = report.pairs.filter((p) => p.reasons.includes('movement')).map((p) => [p.a, p.b]);
    expect(flagged).toEqual([planted.frames]);
    const pair = report.pairs.find((p) => p.a === planted.frames[0] && p.b === planted.frames[1])!;
    expect(pair.verdict).toBe('weak');
    expect(pair.advice.join(' ')).toMatch(/something moved between/);
    // Nothing else is flagged on the clean set.
    expect(report.pairs.filter((p) => p.reasons.length && p !== pair)).toEqual([]);
    expect(report.frames.filter((f) => f.flags.length)).toEqual([]);
  }, 240_000);
});

describe('a rendered sequence with near posts, the camera turned off its pivot', () => {
  // Ten striped posts 3 m away among a distant scene; the lens's entrance pupil 10 cm in front of
  // the pivot moves the camera centre about 5 cm between stations 30 degrees apart, which shifts
  // the posts about a degree against the distant scene: parallax, where posts are in the overlap.
  const pool = createAnalysisPool(0);
  const options = { clean: true, width: 1200, height: 800, stations: 12, seed: 5, posts: true } as const;

  it('flags parallax on the pairs that see posts, and nothing else', async () => {
    const demo = await writeDemoShoot(join(tempDir(), 'pivot-off'), { ...options, pivotOffsetM: 0.1 });
    const report = judge((await runCheck(demo.folder, { pool })).analysis, defaultBudget);
    const between = report.pairs.filter((p) => p.kind === 'neighbour' || p.kind === 'closure');
    const parallax = between.filter((p) => p.reasons.includes('parallax'));
    console.log(`pivot 10 cm off: parallax on ${parallax.length} of ${between.length} pairs`);
    expect(parallax.length).toBeGreaterThanOrEqual(between.length / 2);
    expect(report.pairs.flatMap((p) => p.reasons).filter((r) => r !== 'parallax')).toEqual([]);
  }, 240_000);

  it('flags nothing when the camera turns about its centre', async () => {
    const demo = await writeDemoShoot(join(tempDir(), 'pivot-on'), { ...options, pivotOffsetM: 0 });
    const report = judge((await runCheck(demo.folder, { pool })).analysis, defaultBudget);
    expect(report.pairs.filter((p) => p.reasons.length).map((p) => `${p.a}->${p.b}: ${p.reasons}`)).toEqual([]);
    expect(report.verdict).toBe('ok');
  }, 240_000);
});
