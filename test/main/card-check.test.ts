// A card holds a day: its frames split into sequences, each checked on its own (issue 16). The
// sequences are rendered from real photographs (the photo-wall corpus, test/helpers/photo-
// sequences.ts; sources in test/fixtures/external/SOURCES.md), each with exact truth, into folders
// of their own, then copied together onto one card with the capture times they would have had.
// The rule checked throughout: each sequence's verdicts equal those of checking it alone.
import { copyFile, mkdir, readdir } from 'node:fs/promises';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Report } from '../../src/core/sequence/report.js';
import { defaultBudget } from '../../src/core/sequence/report.js';
import { sequenceReport } from '../../src/core/sequence/sequence-report.js';
import { cardCoverageMapSvg } from '../../src/core/sequence/card-coverage-map.js';
import { XMLParser } from 'fast-xml-parser';
import { judge } from '../../src/core/sequence/verdicts.js';
import { createAnalysisPool } from '../../src/main/analysis-pool.js';
import { checkCard } from '../../src/main/card-check.js';
import { readCard, runCheck } from '../../src/main/check.js';
import { createFeatureCache } from '../../src/main/feature-cache.js';
import { isCardLayout } from '../../src/main/scan.js';
import { formatSummary } from '../../src/main/summary.js';
import { tempDir } from '../helpers/cli.js';
import type { FrameSpec, SequenceSpec } from '../helpers/photo-sequences.js';
import { scenarios, writeSequence } from '../helpers/photo-sequences.js';

const pool = createAnalysisPool(0);
afterAll(() => pool.destroy());
const root = tempDir();
const SIZE = { width: 900, height: 600 };

/** A scenario's spec at SIZE, renamed from `first` on, its times moved by `offsetS`, optionally only some frames. */
function spec(name: string, first: number, offsetS: number, frames?: (f: readonly FrameSpec[]) => FrameSpec[]): SequenceSpec {
  const s = scenarios().find((x) => x.name === name)!.spec;
  const chosen = (frames ? frames(s.frames) : [...s.frames]).map((f) => ({ ...f, time: f.time + offsetS }));
  return { ...s, ...SIZE, frames: chosen, names: chosen.map((_, i) => `IMG_${String(first + i).padStart(4, '0')}.jpg`) };
}

/** Renders a spec into a folder of its own and copies its files onto the card (into `sub` when given). */
async function shoot(card: string, name: string, s: SequenceSpec, sub = ''): Promise<string> {
  const alone = join(root, name);
  await writeSequence(alone, s);
  await mkdir(join(card, sub), { recursive: true });
  for (const f of await readdir(alone)) await copyFile(join(alone, f), join(card, sub, f));
  return alone;
}

const check = async (folder: string, recursive = false): Promise<Report> => judge((await checkCard(folder, { pool, recursive })).analysis, defaultBudget);
const alone = async (folder: string): Promise<Report> => judge((await runCheck(folder, { pool })).analysis, defaultBudget);

/** What a report says of its frames and pairs: the verdicts to compare. */
const verdicts = (r: Report): unknown => ({
  verdict: r.verdict,
  frames: r.frames.map((f) => `${f.file} ${f.verdict} ${f.flags.join(' ')}`),
  pairs: r.pairs.map((p) => `${p.a}~${p.b} ${p.kind} ${p.verdict} ${p.reasons.join(' ')}`),
  holes: (r.holes ?? []).map((h) => `${h.code} ${h.verdict}`),
});

describe('a card of two panoramas ten minutes apart and two single shots', () => {
  // The first: the hand-held pan of 8 frames 35 degrees apart without its fifth frame: frames 4 and
  // 6 are 70 degrees apart and share nothing (the field of view is 65 degrees), 3 s apart in a 1.5 s
  // rhythm: a gap in one panorama, the fault the check is for, not a new sequence. The second, ten
  // minutes later in another scene: six frames of a clean turn with soft frames (sky, fog, water).
  // Then two frames aimed at the ceiling and the floor, 20 and 25 minutes on.
  const card = join(root, 'card');
  const cache = createFeatureCache(join(root, 'cache'));
  let report: Report;
  let first: Report, second: Report;
  beforeAll(async () => {
    const a = await shoot(card, 'gap-pan', spec('clean-pan-8', 101, 0, (f) => f.filter((_, i) => i !== 4)));
    const b = await shoot(card, 'soft-pan', spec('clean-soft', 201, 600, (f) => f.slice(0, 6)));
    await shoot(card, 'singles', spec('clean-soft', 301, 1200, (f) => [{ ...f[0], pitchDeg: 80, time: 0 }, { ...f[3], pitchDeg: -80, time: 300 }]));
    report = judge((await checkCard(card, { pool, cache })).analysis, defaultBudget);
    [first, second] = [await alone(a), await alone(b)];
  }, 240_000);

  it('finds the two sequences, keeps the pan with a frame missing whole, and lists the single shots apart', () => {
    expect(report.sequences!.map((q) => [q.firstFile, q.lastFile, q.frames.length])).toEqual([
      ['IMG_0101.jpg', 'IMG_0107.jpg', 7],
      ['IMG_0201.jpg', 'IMG_0206.jpg', 6],
    ]);
    expect(report.sequences![1].splitBy.map((e) => e.by)).toEqual(['pause']);
    expect(report.singleShots!.map((s) => s.file)).toEqual(['IMG_0301.jpg', 'IMG_0302.jpg']);
    expect(report.frames.map((f) => f.file)).not.toContain('IMG_0301.jpg');
    expect(report.folderProblems).toEqual([]);
  });

  it('judges each sequence as checking it alone does', () => {
    expect(verdicts(sequenceReport(report, 1))).toEqual(verdicts(first));
    expect(verdicts(sequenceReport(report, 2))).toEqual(verdicts(second));
    // The planted fault is the first sequence's own: the pair across the gap, to reshoot.
    expect(first.pairs.filter((p) => p.reasons.length).map((p) => `${p.a}~${p.b} ${p.verdict} ${p.reasons}`)).toEqual(['IMG_0104.jpg~IMG_0105.jpg reshoot no-match']);
    expect(second.verdict).toBe('ok');
    expect(report.verdict).toBe('reshoot');
  });

  it('says so in the terminal: a block per sequence, the single shots, then the card', () => {
    const text = formatSummary(report);
    expect(text).toMatch(/^2 sequences and 2 single shots on the card$/m);
    expect(text).toMatch(/^Sequence 1 of 2: IMG_0101\.jpg to IMG_0107\.jpg, 7 frames, 7 stations, 10:00, RESHOOT$/m);
    expect(text).toMatch(/^Sequence 2 of 2: IMG_0201\.jpg to IMG_0206\.jpg, 6 frames, 6 stations, 10:10, ok$/m);
    expect(text).toMatch(/apart from the sequence before: a pause of 10 min/);
    expect(text).toMatch(/^2 sequences: 1 ok, 1 to reshoot; 2 single shots\.$/m);
    expect(text).not.toMatch(/\d\.\d{4,}/);
  });

  it('draws the card\'s coverage map as one map per sequence, each under its name', () => {
    const svg = cardCoverageMapSvg(report)!;
    // Parsed back with an outside XML parser (fast-xml-parser): well-formed, one nested map each.
    const doc = new XMLParser({ ignoreAttributes: false }).parse(svg);
    const maps = [doc.svg.svg].flat();
    expect(maps).toHaveLength(2);
    expect([doc.svg.text].flat().map((t: { '#text': string }) => t['#text'])).toEqual(['Sequence 1 of 2: IMG_0101.jpg to IMG_0107.jpg', 'Sequence 2 of 2: IMG_0201.jpg to IMG_0206.jpg']);
    const ids = [...svg.matchAll(/id="([^"]+)"/g)].map((m) => m[1]);
    expect(new Set(ids).size).toBe(ids.length);
    for (const m of svg.matchAll(/url\(#([^)]+)\)/g)) expect(ids).toContain(m[1]);
  });

  it('checks one sequence when asked, by its number or its first file, and names the ones there are otherwise', async () => {
    const one = judge((await checkCard(card, { pool, cache, sequence: 'IMG_0201' })).analysis, defaultBudget);
    expect(one.sequences!.map((q) => [q.index, q.firstFile])).toEqual([[2, 'IMG_0201.jpg']]);
    expect(one.singleShots).toEqual([]);
    expect(verdicts(one)).toEqual(verdicts(sequenceReport(report, 2)));
    expect(verdicts(judge((await checkCard(card, { pool, cache, sequence: '1' })).analysis, defaultBudget))).toEqual(verdicts(sequenceReport(report, 1)));
    await expect(checkCard(card, { pool, cache, sequence: '9' })).rejects.toThrow('no sequence 9 on this card: it has 1 (IMG_0101.jpg), 2 (IMG_0201.jpg)');
  }, 240_000);
});

describe('a new panorama begun at once, with no pause and the same camera', () => {
  // A hand-held pan of 8 frames at the horizon (1.5 s a frame), then, 8 s later (re-aiming; far
  // under any pause), six frames turning round the ground below the camera (pitch -75 degrees,
  // 40 degrees apart, 1.5 s a frame): the pan sees the walls from -23 to +23 degrees of pitch, the
  // second set the floor from -98 to -52, so nothing is seen by both and only the content, with a
  // step out of the rhythm, sets them apart.
  let report: Report;
  beforeAll(async () => {
    const card = join(root, 'at-once');
    const pan = spec('clean-pan-8', 101, 0);
    const end = pan.frames[pan.frames.length - 1].time;
    await shoot(card, 'at-once-1', pan);
    await shoot(card, 'at-once-2', spec('clean-pan-8', 201, 0, (f) => f.slice(0, 6).map((x, i) => ({ ...x, yawDeg: 40 * i, pitchDeg: -75, rollDeg: 0, time: end + 8 + 1.5 * i }))));
    report = await check(card);
  }, 240_000);

  it('is split by content, and the break is said, since it may be a missing frame', () => {
    expect(report.sequences!.map((q) => [q.firstFile, q.frames.length])).toEqual([['IMG_0101.jpg', 8], ['IMG_0201.jpg', 6]]);
    expect(report.sequences![1].splitBy).toEqual([{ by: 'content', after: 'IMG_0108.jpg', before: 'IMG_0201.jpg' }]);
    expect(report.folderProblems.map((p) => p.code)).toEqual(['sequence-break']);
    expect(report.sequences!.map((q) => q.verdict)).toEqual(['ok', 'ok']);
    expect(report.verdict).toBe('weak');
  });
});

describe('one turn with a long wait in the middle, over two numbered folders of a camera card', () => {
  // A clean full turn of 12 frames; the photographer waited two minutes after the sixth, and the
  // camera began a new numbered folder there (DCF layout: DCIM/100TESTS, DCIM/101TESTS).
  let report: Report;
  const card = join(root, 'wait');
  beforeAll(async () => {
    const turn = spec('clean-turn-12', 1, 0, (f) => f.map((x, i) => (i >= 6 ? { ...x, time: x.time + 120 } : x)));
    const folder = join(root, 'wait-alone');
    await writeSequence(folder, turn);
    for (const [k, f] of (await readdir(folder)).sort().entries()) {
      const sub = join(card, 'DCIM', k < 6 ? '100TESTS' : '101TESTS');
      await mkdir(sub, { recursive: true });
      await copyFile(join(folder, f), join(sub, f));
    }
    report = await check(card, await isCardLayout(card));
  }, 240_000);

  it('is read as a card and kept whole: the frames either side of the wait overlap', () => {
    expect(report.sequences).toHaveLength(1);
    expect(report.sequences![0].frames.map((f) => f.file)).toEqual(Array.from({ length: 12 }, (_, i) => join('DCIM', i < 6 ? '100TESTS' : '101TESTS', `IMG_${String(i + 1).padStart(4, '0')}.jpg`)));
    expect(report.singleShots).toEqual([]);
    expect(report.geometry!.closure?.closes).toBe(true);
    expect(report.verdict).toBe('ok');
    expect(formatSummary(report)).not.toMatch(/^Sequence /m);
  });
});

describe('a card holding another camera\'s run of frames and one lone phone shot', () => {
  // Five frames of the card's camera (most of the card), then three of another camera (a phone
  // panorama), then one frame of a third: headers only are read, tiny frames are enough.
  it('keeps the other camera\'s run for a sequence of its own and sets the lone file apart', async () => {
    const card = join(root, 'cameras');
    const small = (first: number, offsetS: number, count: number, make: string, model: string): SequenceSpec => ({ ...spec('clean-pan-8', first, offsetS, (f) => f.slice(0, count)), width: 360, height: 240, make, model });
    await shoot(card, 'cam-a', small(101, 0, 5, 'Maker', 'Camera One'));
    await shoot(card, 'cam-b', small(201, 600, 3, 'Other', 'Phone Two'));
    await shoot(card, 'cam-c', small(301, 1200, 1, 'Third', 'Phone Three'));
    const read = await readCard(card);
    expect(read.ordered.map((f) => f.file)).toEqual(['IMG_0101.jpg', 'IMG_0102.jpg', 'IMG_0103.jpg', 'IMG_0104.jpg', 'IMG_0105.jpg', 'IMG_0201.jpg', 'IMG_0202.jpg', 'IMG_0203.jpg']);
    expect(read.skipped.map((s) => [s.file, s.code])).toEqual([['IMG_0301.jpg', 'not-in-sequence']]);
  }, 60_000);
});
