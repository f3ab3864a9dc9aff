// The reshoot plan built from judged reports made by hand: one item per reshoot, by station in
// shooting order, with the settings the rest of the sequence was shot at. The rules checked are the
// ones stated in src/core/sequence/reshoot-plan.ts; the settings wording is core/sequence/number-words.ts's.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import Ajv2020 from 'ajv/dist/2020.js';
import { describe, expect, it } from 'vitest';
import { resolveBudget } from '../../../src/core/sequence/budget.js';
import type { Analysis, CoverageHole, FrameMeasure, FrameSettings, PairMeasure, SequenceGeometry, StationMeasure } from '../../../src/core/sequence/report.js';
import { defaultBudget } from '../../../src/core/sequence/report.js';
import { reshootPlan } from '../../../src/core/sequence/reshoot-plan.js';
import { sequenceReport } from '../../../src/core/sequence/sequence-report.js';
import { judge, rejudge } from '../../../src/core/sequence/verdicts.js';
import { cardAnalysis } from '../../helpers/card-analysis.js';
import { projectRoot } from '../../helpers/cli.js';

const settings: FrameSettings = { exposureTime: 1 / 250, fNumber: 8, iso: 100, evBias: 0, focalLength: 35, focalLength35: 35, whiteBalance: 'manual', make: null, model: null };
const frame = (file: string, s: Partial<FrameSettings> = {}, extra: Partial<FrameMeasure> = {}): FrameMeasure => ({
  file, width: 3000, height: 2000, captureTime: null, settings: { ...settings, ...s }, sharpness: 2, keypoints: 1500, ...extra,
});
const pair = (a: string, b: string, extra: Partial<PairMeasure> = {}): PairMeasure => ({
  a, b, kind: 'neighbour', matches: 300, inliers: 200, matchesInOverlap: 250, overlap: 0.45, homography: [1, 0, 1500, 0, 1, 0, 0, 0, 1], evDiff: 0.05, rmsError: 0.8, shiftPx: null, ...extra,
});
const bracketPair = (a: string, b: string, extra: Partial<PairMeasure> = {}): PairMeasure => pair(a, b, { kind: 'bracket', overlap: 0.99, homography: [1, 0, 0, 0, 1, 0, 0, 0, 1], shiftPx: 0.5, evDiff: -2, ...extra });

/** A turn of `n` single-frame stations named 1..n, 28 degrees apart, with the given frames' settings and pair measures changed. */
function singles(n: number, opts: { settings?: Record<string, Partial<FrameSettings>>; pairs?: Record<string, Partial<PairMeasure>>; yaws?: number[] } = {}): Analysis {
  const names = Array.from({ length: n }, (_, k) => String(k + 1));
  const stations: StationMeasure[] = names.map((f, i) => ({ index: i, frames: [f], reference: f, evOffsets: [0], groupedBy: 'single' }));
  const yaws = opts.yaws ?? names.map((_, k) => 28 * k);
  return {
    folder: '/card',
    frames: names.map((f) => frame(f, opts.settings?.[f])),
    stations,
    pairs: names.slice(1).map((b, k) => pair(names[k], b, opts.pairs?.[`${names[k]}-${b}`])),
    skipped: [],
    sweepDeg: null,
    geometry: geometryOf(yaws),
  };
}

/** Poses for stations 0..n-1 at these yaws, one row: what the bundle adjustment would hand over. */
function geometryOf(yaws: number[]): SequenceGeometry {
  return {
    focalPx: 3000, focalFrom: 'exif', poses: yaws.map((y, i) => ({ station: i, yawDeg: y > 180 ? y - 360 : y, pitchDeg: 0, rollDeg: 0 })), unplaced: [],
    horizontalDeg: 200, verticalDeg: 36, gaps: [], closure: null, rmsPx: 0.5, rows: [{ pitchDeg: 0, stations: yaws.map((_, i) => i) }],
  };
}

/** Stations of three frames each (-2, 0, +2 EV by shutter time), named "<station><a|b|c>", the reference "<station>b". */
function brackets(n: number, opts: { settings?: Record<string, Partial<FrameSettings>>; pairs?: Record<string, Partial<PairMeasure>>; drop?: string[] } = {}): Analysis {
  const frames: FrameMeasure[] = [];
  const stations: StationMeasure[] = [];
  const pairs: PairMeasure[] = [];
  for (let s = 1; s <= n; s++) {
    const files = ['a', 'b', 'c'].map((x) => `${s}${x}`).filter((f) => !opts.drop?.includes(f));
    const offsets = files.map((f) => ({ a: -2, b: 0, c: 2 })[f.slice(-1) as 'a' | 'b' | 'c']);
    files.forEach((f, k) => frames.push(frame(f, { evBias: offsets[k], exposureTime: (1 / 250) * 2 ** offsets[k], ...opts.settings?.[f] })));
    stations.push({ index: s - 1, frames: files, reference: `${s}b`, evOffsets: offsets, groupedBy: 'exif' });
    for (const f of files) if (f !== `${s}b`) pairs.push(bracketPair(`${s}b`, f, opts.pairs?.[`${s}b-${f}`]));
    if (s > 1) pairs.push(pair(`${s - 1}b`, `${s}b`, opts.pairs?.[`${s - 1}b-${s}b`]));
  }
  return { folder: '/card', frames, stations, pairs, skipped: [], sweepDeg: null, geometry: geometryOf(stations.map((_, i) => 28 * i)) };
}

describe('the reshoot plan', () => {
  it('is empty for a sequence with nothing flagged', () => {
    expect(judge(brackets(5), defaultBudget).plan).toEqual([]);
  });

  it('reshoots the station whose exposure jumped, at the settings of the rest, with both numberings and the frames', () => {
    const bright = { exposureTime: 1 / 100 };
    const r = judge(brackets(5, { settings: { '3a': { exposureTime: 1 / 400 }, '3b': bright, '3c': { exposureTime: 1 / 25 } }, pairs: { '2b-3b': { evDiff: 1.3 }, '3b-4b': { evDiff: -1.3 } } }), defaultBudget);
    expect(r.plan).toHaveLength(1);
    const item = r.plan![0];
    expect(item).toMatchObject({ action: 'reshoot-station', optional: false, stationIndices: [2], stationNumbers: [3], files: ['3a', '3b', '3c'], reasons: ['exposure-jump'] });
    expect(item.settings).toEqual({ exposureTime: 1 / 250, fNumber: 8, iso: 100 });
    expect(item.text).toBe('Station 3 (3a to 3c): reshoot the bracket at 1/250 s, f/8, ISO 100 like the rest (exposed +1.3 EV against its neighbours).');
  });

  it('names the station whose every link jumped when EXIF shows no change (the light changed)', () => {
    const r = judge(singles(5, { pairs: { '2-3': { evDiff: -1.2 }, '3-4': { evDiff: 1.2 } } }), defaultBudget);
    expect(r.plan!.map((i) => [i.stationNumbers, i.reasons])).toEqual([[[3], ['exposure-jump']]]);
    expect(r.plan![0].text).toMatch(/^Station 3 \(3\): reshoot the frame at 1\/250 s, f\/8, ISO 100 like the rest \(exposed -1\.2 EV against its neighbours\)\.$/);
  });

  it('leaves an exposure change between two stations when nothing says which of them is not like the rest', () => {
    const r = judge(singles(5, { pairs: { '3-4': { evDiff: 1.2 } } }), defaultBudget);
    expect(r.plan).toHaveLength(1);
    expect(r.plan![0].stationNumbers).toEqual([3, 4]);
    expect(r.plan![0].text).toMatch(/^Between stations 3 and 4 \(3 and 4\): lock exposure and reshoot whichever of the two is not like the rest \(the exposure changed by \+1\.2 EV between them\)\.$/);
  });

  it('merges what one reshoot of a station fixes: an exposure jump, another aperture and a blurred frame are one item listing each reason', () => {
    const a = brackets(5, {
      settings: { '3a': { exposureTime: 1 / 400, fNumber: 5.6 }, '3b': { exposureTime: 1 / 100, fNumber: 5.6 }, '3c': { exposureTime: 1 / 25, fNumber: 5.6 } },
      pairs: { '2b-3b': { evDiff: 1.3 }, '3b-4b': { evDiff: -1.3 } },
    });
    // 3b's own whole-frame sharpness far under the rest: the blur verdict falls back to it (no shared-content ratio measured).
    const frames = a.frames.map((f) => (f.file === '3b' ? { ...f, sharpness: 0.6 } : f));
    const r = judge({ ...a, frames }, defaultBudget);
    expect(r.frames.find((f) => f.file === '3b')!.flags).toEqual(expect.arrayContaining(['blurred', 'settings-drift']));
    expect(r.plan).toHaveLength(1);
    const item = r.plan![0];
    expect(item.stationNumbers).toEqual([3]);
    expect([...item.reasons].sort()).toEqual(['blurred', 'exposure-jump', 'settings-drift']);
    expect(item.text).toMatch(/^Station 3 \(3a to 3c\): reshoot the bracket at 1\/250 s, f\/8, ISO 100 like the rest from a steady support \(exposed \+1\.3 EV against its neighbours; its aperture differs from the rest; 3b is blurred\)\.$/);
  });

  it('says which bracket frame is missing', () => {
    const r = judge(brackets(5, { drop: ['4c'] }), defaultBudget);
    expect(r.plan!.map((i) => i.text)).toEqual(['Station 4 (4a to 4b): reshoot the bracket with all 3 frames (the +2 EV frame is missing).']);
  });

  it('adds a bracketed station between two that barely overlap, aimed midway between their yaws', () => {
    const a = brackets(5, { pairs: { '2b-3b': { overlap: 0.06 } } });
    const r = judge({ ...a, geometry: geometryOf([0, 28, 80, 108, 136]) }, defaultBudget);
    expect(r.plan).toHaveLength(1);
    expect(r.plan![0]).toMatchObject({ action: 'add-stations', stationIndices: [1, 2], stationNumbers: [2, 3], files: ['2b', '3b'], aim: [{ yawDeg: 54, pitchDeg: 0 }] });
    expect(r.plan![0].text).toBe('Between stations 2 and 3 (2b and 3b): add one bracketed station, aimed at yaw 54 degrees (overlap only 6 %).');
  });

  it('adds frames, not bracketed stations, to a sequence shot without brackets, as many as keep the usual step', () => {
    // A 84-degree step where the rest turn 28: two frames keep the steps at 28.
    const r = judge(singles(5, { yaws: [0, 28, 112, 140, 168], pairs: { '2-3': { homography: null, overlap: null, inliers: 0, evDiff: null } } }), defaultBudget);
    expect(r.plan).toHaveLength(1);
    expect(r.plan![0].aim.map((x) => x.yawDeg)).toEqual([56, 84]);
    expect(r.plan![0].text).toBe('Between stations 2 and 3 (2 and 3): add two frames, aimed at yaw 56 and 84 degrees (no reliable match).');
  });

  it('lists items in shooting order, the turn that does not close after the last station', () => {
    const a = singles(6, { yaws: [0, 56, 112, 168, 224, 280], pairs: { '4-5': { overlap: 0.1 } }, settings: { '2': { iso: 400 }, '5': { iso: 400 } } });
    const closure = pair('6', '1', { kind: 'closure', homography: null, overlap: null, inliers: 0, evDiff: null });
    const r = judge({ ...a, pairs: [...a.pairs, closure], sweepDeg: 340 }, defaultBudget);
    expect(r.plan!.map((i) => [i.stationNumbers, i.reasons])).toEqual([
      [[2], ['settings-drift']],
      [[4, 5], ['low-overlap']],
      [[5], ['settings-drift']],
      [[6, 1], ['no-closure']],
    ]);
    // 80 degrees from the last station round to the first, where the rest turn 56: one frame, half way.
    expect(r.plan![3].text).toBe('Between stations 6 and 1 (6 and 1), where the turn closes: add one frame, aimed at yaw 320 degrees (the turn does not close).');
  });

  it('keeps weak findings as optional items, apart from what must be reshot', () => {
    const r = judge(singles(5, { pairs: { '1-2': { overlap: 0.25 }, '3-4': { overlap: 0.1 } } }), defaultBudget);
    expect(r.plan!.map((i) => [i.stationNumbers, i.optional])).toEqual([[[1, 2], true], [[3, 4], false]]);
    expect(r.plan![0].text).toMatch(/\(overlap 25 %\)\.$/);
  });

  it('begins with the files that could not be read, to copy again or reshoot, and leaves out what asks for nothing', () => {
    const skipped = [
      { file: 'IMG_0009.JPG', code: 'unreadable' as const, reason: 'damaged or cut short: copy it from the card again' },
      { file: 'IMG_0010.JPG', code: 'unreadable' as const, reason: 'empty file (0 bytes): copy it from the card again' },
      { file: 'IMG_0003_copy.JPG', code: 'duplicate' as const, reason: 'the same picture as IMG_0003.JPG: left out' },
      { file: 'pipe.jpg', code: 'not-a-file' as const, reason: 'it is not a regular file (a pipe, a device or a socket): not read' },
    ];
    const plan = judge({ ...singles(4), skipped }, defaultBudget).plan!;
    expect(plan).toHaveLength(1);
    expect(plan[0]).toMatchObject({ action: 'copy-again', optional: false, files: ['IMG_0009.JPG', 'IMG_0010.JPG'], stationIndices: [] });
    expect(plan[0].text).toBe('IMG_0009 and IMG_0010: could not be read (damaged or cut short; empty file (0 bytes)). Copy them from the card again; if the card\'s own copy is bad, reshoot them.');
  });

  it('is built again when the report is judged again against another budget', () => {
    const r = judge(singles(5, { pairs: { '3-4': { overlap: 0.25 } } }), defaultBudget);
    expect(r.plan!.map((i) => i.optional)).toEqual([true]);
    const stricter = rejudge(r, resolveBudget({ reshootOverlap: 0.3, weakOverlap: 0.4 }));
    expect(stricter.plan!.map((i) => [i.stationNumbers, i.optional])).toEqual([[[3, 4], false]]);
    expect(rejudge(r, resolveBudget({ reshootOverlap: 0.1, weakOverlap: 0.2 })).plan).toEqual([]);
  });

  it('turns a hole between no two stations into an item after the stations, aimed at it', () => {
    const r = judge(singles(4), defaultBudget);
    const hole: CoverageHole = { code: 'coverage-hole', verdict: 'reshoot', yawDeg: 0, pitchDeg: 80, widthDeg: 360, heightDeg: 20, pole: 'zenith', advice: 'the sky straight up is not covered above pitch +70 degrees: add a frame aimed straight up', between: null };
    const plan = reshootPlan({ ...r, holes: [hole] });
    expect(plan).toHaveLength(1);
    expect(plan[0]).toMatchObject({ action: 'fill-hole', reasons: ['coverage-hole'], aim: [{ yawDeg: 0, pitchDeg: 90 }], optional: false });
    expect(plan[0].text).toBe('The zenith: the sky straight up is not covered above pitch +70 degrees: add a frame aimed straight up.');
  });

  it('merges a hole between two stations with their failed pair into one item, aimed at the hole', () => {
    const r = judge(singles(4), defaultBudget);
    const hole: CoverageHole = { code: 'coverage-hole', verdict: 'reshoot', yawDeg: 70, pitchDeg: 12, widthDeg: 9, heightDeg: 30, pole: null, advice: 'nothing covers about 9° x 30° at yaw 70°, pitch +12 degrees (between stations 3 and 4): add a frame aimed there', between: [2, 3] };
    const pairs = r.pairs.map((p) => (p.a === '3' ? { ...p, homography: null, overlap: null, inliers: 0, verdict: 'reshoot' as const, reasons: ['coverage-hole' as const], advice: [hole.advice] } : p));
    const plan = reshootPlan({ ...r, pairs, holes: [hole] });
    expect(plan).toHaveLength(1);
    expect(plan[0]).toMatchObject({ action: 'add-stations', stationIndices: [2, 3], reasons: ['coverage-hole'], aim: [{ yawDeg: 70, pitchDeg: 12 }] });
    expect(plan[0].text).toBe('Between stations 3 and 4 (3 and 4): add one frame, aimed at yaw 70 degrees (nothing covers the scene between them).');
  });

  it('gives each sequence of a card its own plan, and the card one plan of them all, each item saying its sequence', () => {
    const r = judge(cardAnalysis, defaultBudget);
    // Sequence 1: 15 % overlap between its 2nd and 3rd frames (reshoot); sequence 3: 25 % between its 1st and 2nd (weak).
    expect(r.sequences!.map((q) => (q.plan ?? []).map((i) => [i.stationNumbers, i.optional]))).toEqual([[[[2, 3], false]], [], [[[1, 2], true]]]);
    expect(r.plan!.map((i) => [i.sequence, i.stationIndices, i.stationNumbers])).toEqual([[1, [1, 2], [2, 3]], [3, [6, 7], [1, 2]]]);
    expect(r.plan!.map((i) => r.stations[i.stationIndices[0]].frames[0])).toEqual(['S1_02.jpg', 'S3_01.jpg']);
    expect(r.plan![1].text).toMatch(/^Sequence 3, between stations 1 and 2 \(S3_01 and S3_02\): add one frame/);
    // The sequence alone, as the app shows it, keeps its own numbering and no sequence.
    expect(sequenceReport(r, 3).plan!.map((i) => [i.sequence, i.stationIndices])).toEqual([[null, [0, 1]]]);
  });

  it('validates against the published schema (JSON Schema 2020-12 via ajv)', () => {
    const schema = JSON.parse(readFileSync(join(projectRoot, 'schema/report.schema.json'), 'utf8'));
    const validate = new Ajv2020.default({ allErrors: true, strict: false }).compile(schema);
    const r = JSON.parse(JSON.stringify(judge(cardAnalysis, defaultBudget)));
    expect(validate(r), JSON.stringify(validate.errors)).toBe(true);
    // And a plan item that lacks its text does not.
    r.plan[0].text = undefined;
    delete r.plan[0].text;
    expect(validate(r)).toBe(false);
  });
});
