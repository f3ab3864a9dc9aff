// Verdicts against the match budget. Default thresholds (overlap 20 % reshoot / 30 % weak,
// exposure within 0.5 EV) are common practice for panoramas; the tests check the rules as stated
// in report.ts, and that a new budget re-judges without re-analysis.
import { describe, expect, it } from 'vitest';
import { resolveBudget } from '../../../src/core/sequence/budget.js';
import type { Analysis, FrameMeasure, FrameSettings, PairMeasure, SharpnessByDirection } from '../../../src/core/sequence/report.js';
import { defaultBudget } from '../../../src/core/sequence/report.js';
import { judge, rejudge } from '../../../src/core/sequence/verdicts.js';

const settings: FrameSettings = { exposureTime: 1 / 250, fNumber: 8, iso: 100, evBias: 0, focalLength: 35, focalLength35: 35, whiteBalance: '0', make: null, model: null };
const frame = (file: string, extra: Partial<FrameMeasure> = {}): FrameMeasure => ({ file, width: 3000, height: 2000, captureTime: null, settings, sharpness: 2, keypoints: 1500, ...extra });
const pair = (a: string, b: string, extra: Partial<PairMeasure> = {}): PairMeasure => ({
  a, b, kind: 'neighbour', matches: 300, inliers: 200, matchesInOverlap: 250, overlap: 0.45, homography: [1, 0, 1500, 0, 1, 0, 0, 0, 1], evDiff: 0.05, rmsError: 0.8, shiftPx: null, ...extra,
});

function sequence(pairs: PairMeasure[], frames?: FrameMeasure[]): Analysis {
  const names = [...new Set(pairs.flatMap((p) => [p.a, p.b]))];
  const fs = frames ?? names.map((n) => frame(n));
  return {
    folder: '/card',
    frames: fs,
    stations: fs.map((f, i) => ({ index: i, frames: [f.file], reference: f.file, evOffsets: [0], groupedBy: 'single' })),
    pairs,
    skipped: [],
    sweepDeg: null,
    geometry: null,
  };
}

describe('pair verdicts', () => {
  it('passes a good sequence with no flag at all', () => {
    const r = judge(sequence([pair('1', '2'), pair('2', '3'), pair('3', '4')]), defaultBudget);
    expect(r.verdict).toBe('ok');
    expect(r.pairs.every((p) => p.reasons.length === 0)).toBe(true);
    expect(r.frames.every((f) => f.flags.length === 0)).toBe(true);
  });

  it('grades overlap: under 20 % reshoot, under 30 % weak, with advice naming the frames', () => {
    const r = judge(sequence([pair('1', '2', { overlap: 0.08 }), pair('2', '3', { overlap: 0.25 }), pair('3', '4')]), defaultBudget);
    expect(r.pairs.map((p) => p.verdict)).toEqual(['reshoot', 'weak', 'ok']);
    expect(r.pairs[0].reasons).toEqual(['low-overlap']);
    expect(r.pairs[0].advice[0]).toMatch(/8 %.*1 and 2.*add a frame between them/);
    expect(r.verdict).toBe('reshoot');
    expect(r.counts.reshoot).toBe(1);
    expect(r.counts.weak).toBe(1);
  });

  it('flags an exposure jump beyond the budget, and an unmatched pair', () => {
    const r = judge(sequence([pair('1', '2', { evDiff: 1.3 }), pair('2', '3', { homography: null, overlap: null, inliers: 0, evDiff: null }), pair('3', '4', { evDiff: -0.7 })]), defaultBudget);
    expect(r.pairs[0].reasons).toEqual(['exposure-jump']);
    expect(r.pairs[0].verdict).toBe('reshoot');
    expect(r.pairs[0].advice[0]).toMatch(/\+1\.3 EV.*lock exposure/);
    expect(r.pairs[1].reasons).toEqual(['no-match']);
    expect(r.pairs[2].verdict).toBe('weak');
  });

  it('reshoots an exposure jump under twice the budget when EXIF shows that frame exposed unlike the rest; from the light alone it stays weak', () => {
    // 0.7 EV: over the 0.5 EV budget, under twice it. Shutter 1/160 s against 1/250 s is 0.64 EV (APEX, ISO 2720).
    const pairs = [pair('1', '2'), pair('2', '3', { evDiff: 0.7 }), pair('3', '4', { evDiff: -0.7 }), pair('4', '5')];
    const byCamera = judge(sequence(pairs, ['1', '2', '3', '4', '5'].map((f) => frame(f, f === '3' ? { settings: { ...settings, exposureTime: 1 / 160 } } : {}))), defaultBudget);
    expect(byCamera.pairs.map((p) => p.verdict)).toEqual(['ok', 'reshoot', 'reshoot', 'ok']);
    expect(byCamera.plan!.map((i) => [i.stationNumbers, i.optional, i.reasons])).toEqual([[[3], false, ['exposure-jump']]]);
    const byLight = judge(sequence(pairs), defaultBudget);
    expect(byLight.pairs.map((p) => p.verdict)).toEqual(['ok', 'weak', 'weak', 'ok']);
  });

  it('re-judges against a new budget without re-analysis', () => {
    const r = judge(sequence([pair('1', '2', { overlap: 0.25 }), pair('2', '3', { inliers: 30 })]), defaultBudget);
    expect(r.pairs.map((p) => p.verdict)).toEqual(['weak', 'ok']);
    const stricter = rejudge(r, resolveBudget({ weakOverlap: 0.2, reshootOverlap: 0.1, minInliers: 50 }));
    expect(stricter.pairs.map((p) => p.verdict)).toEqual(['ok', 'weak']);
    expect(stricter.pairs[1].reasons).toEqual(['few-inliers']);
    // The measurements themselves are untouched.
    expect(stricter.pairs.map((p) => p.overlap)).toEqual(r.pairs.map((p) => p.overlap));
  });
});

describe('frame and station verdicts', () => {
  it('falls back to the whole frame against the sequence, only as weak, where no pair compared the frames (a report from before shared-content sharpness)', () => {
    const frames = ['1', '2', '3', '4', '5'].map((f) => frame(f, { sharpness: f === '3' ? 0.9 : 2 + Number(f) / 10 }));
    const r = judge(sequence([pair('1', '2'), pair('2', '3'), pair('3', '4'), pair('4', '5')], frames), defaultBudget);
    const blurred = r.frames.filter((f) => f.flags.includes('blurred'));
    expect(blurred.map((f) => f.file)).toEqual(['3']);
    expect(blurred[0].verdict).toBe('weak');
    expect(blurred[0].advice[0]).toMatch(/could not compare with a neighbour.*41 % of the sequence's typical/);
  });

  it('flags settings that changed between stations', () => {
    const frames = ['1', '2', '3', '4'].map((f) => frame(f, f === '3' ? { settings: { ...settings, iso: 400 } } : {}));
    const r = judge(sequence([pair('1', '2'), pair('2', '3'), pair('3', '4')], frames), defaultBudget);
    const drifted = r.frames.filter((f) => f.flags.includes('settings-drift'));
    expect(drifted.map((f) => f.file)).toEqual(['3']);
    expect(drifted[0].advice[0]).toMatch(/ISO 400 instead of 100/);
  });

  it('writes drifted settings as a person would, never with floating-point noise (issue 16)', () => {
    // EXIF RATIONALs (CIPA DC-008): a zoom at 62/3 mm, 1/3 s, and an f-number from the APEX aperture value 5.
    const base = { ...settings, focalLength: 20 };
    const odd = { ...base, focalLength: 62 / 3, exposureTime: 1 / 3, fNumber: Math.SQRT2 ** 5 };
    const frames = ['1', '2', '3', '4'].map((f) => frame(f, { settings: f === '3' ? odd : base }));
    const r = judge(sequence([pair('1', '2'), pair('2', '3'), pair('3', '4')], frames), defaultBudget);
    const drift = r.frames.filter((f) => f.flags.includes('settings-drift'));
    expect(drift.map((f) => f.file)).toEqual(['3']);
    expect(drift[0].advice[0]).toBe('aperture f/5.7 instead of f/8, shutter 1/3 s instead of 1/250 s, focal length 20.7 mm instead of 20 mm at 3 (station 3): lock these settings for the whole sequence');
  });

  it('gives an exposure jump one flag: the shutter change behind it is not also settings drift, another aperture still is', () => {
    const bright = { ...settings, exposureTime: 1 / 100 };
    const frames = ['1', '2', '3', '4'].map((f) => frame(f, f === '3' ? { settings: bright } : {}));
    const pairs = [pair('1', '2'), pair('2', '3', { evDiff: 1.3 }), pair('3', '4', { evDiff: -1.3 })];
    const r = judge(sequence(pairs, frames), defaultBudget);
    expect(r.pairs.map((p) => p.reasons)).toEqual([[], ['exposure-jump'], ['exposure-jump']]);
    expect(r.frames.flatMap((f) => f.flags)).toEqual([]);
    const alsoAperture = ['1', '2', '3', '4'].map((f) => frame(f, f === '3' ? { settings: { ...bright, fNumber: 4 } } : {}));
    const r2 = judge(sequence(pairs, alsoAperture), defaultBudget);
    const drift = r2.frames.filter((f) => f.flags.includes('settings-drift'));
    expect(drift.map((f) => f.file)).toEqual(['3']);
    expect(drift[0].advice[0]).toMatch(/aperture f\/4 instead of f\/8/);
    expect(drift[0].advice[0]).not.toMatch(/shutter/);
  });

  it('lists copies and files from outside the sequence without making the card weak; an unreadable frame does', () => {
    const base = sequence([pair('1', '2'), pair('2', '3')]);
    const listed = judge({ ...base, skipped: [
      { file: 'copy of 2.jpg', code: 'duplicate', reason: 'the same picture as 2: left out' },
      { file: 'phone.jpg', code: 'not-in-sequence', reason: 'another camera' },
    ] }, defaultBudget);
    expect(listed.verdict).toBe('ok');
    expect(listed.skipped).toHaveLength(2);
    const broken = judge({ ...base, skipped: [{ file: '4.jpg', code: 'unreadable', reason: 'damaged or cut short' }] }, defaultBudget);
    expect(broken.verdict).toBe('weak');
  });

  it('flags an incomplete bracket and a drifted bracket frame', () => {
    const frames = ['1a', '1b', '1c', '2a', '2b', '3a', '3b', '3c'].map((f) => frame(f));
    const analysis: Analysis = {
      folder: '/card',
      frames,
      stations: [
        { index: 0, frames: ['1a', '1b', '1c'], reference: '1a', evOffsets: [0, -2, 2], groupedBy: 'exif' },
        { index: 1, frames: ['2a', '2b'], reference: '2a', evOffsets: [0, -2], groupedBy: 'exif' },
        { index: 2, frames: ['3a', '3b', '3c'], reference: '3a', evOffsets: [0, -2, 2], groupedBy: 'exif' },
      ],
      pairs: [
        pair('1a', '1b', { kind: 'bracket', shiftPx: 0.5 }),
        pair('3a', '3b', { kind: 'bracket', shiftPx: 14 }),
        pair('1a', '2a'),
        pair('2a', '3a'),
      ],
      skipped: [],
      sweepDeg: null,
      geometry: null,
    };
    const r = judge(analysis, defaultBudget);
    expect(r.stations.map((s) => s.flags)).toEqual([[], ['incomplete-bracket'], ['bracket-drift']]);
    expect(r.stations[1].advice[0]).toMatch(/2 of 3 bracket frames \(missing \+2 EV\)/);
    expect(r.frames.find((f) => f.file === '3b')!.flags).toEqual(['bracket-drift']);
    expect(r.frames.find((f) => f.file === '1b')!.flags).toEqual([]);
  });
});

/** b's sharpness over a's per direction, as analysePair measures it on the content both see. */
const sharp = (horizontal: number, vertical = horizontal, fallingDiagonal = horizontal, risingDiagonal = horizontal): Partial<PairMeasure> => {
  const d: SharpnessByDirection = { horizontal, vertical, fallingDiagonal, risingDiagonal };
  return { sharpnessByDirection: d, sharpnessRatio: Math.exp((Math.log(horizontal) + Math.log(vertical) + Math.log(fallingDiagonal) + Math.log(risingDiagonal)) / 4), sharpnessBlocks: 200 };
};
const inverse = (p: Partial<PairMeasure>): Partial<PairMeasure> => {
  const d = p.sharpnessByDirection!;
  return sharp(1 / d.horizontal, 1 / d.vertical, 1 / d.fallingDiagonal, 1 / d.risingDiagonal);
};
const blurredFiles = (a: Analysis, budget = defaultBudget): string[] => judge(a, budget).frames.filter((f) => f.flags.includes('blurred')).map((f) => f.file);

describe('blur judged on the content frames share', () => {
  // Frame 3 sees mostly sky: its whole-frame sharpness is low, but on what it shares with its
  // neighbours it is as sharp as they are.
  const skyFrames = ['1', '2', '3', '4', '5'].map((f) => frame(f, { sharpness: f === '3' ? 0.6 : 2 }));
  const even = sharp(1.02, 0.97, 1.05, 0.99);

  it('does not flag a frame that sees more sky, however low its whole-frame sharpness', () => {
    const r = judge(sequence([pair('1', '2', even), pair('2', '3', even), pair('3', '4', inverse(even)), pair('4', '5', even)], skyFrames), defaultBudget);
    expect(r.frames.every((f) => f.flags.length === 0)).toBe(true);
    expect(r.verdict).toBe('ok');
  });

  it('flags a frame less sharp than both neighbours, says how much and the direction of motion blur', () => {
    // 3 is b of (2, 3) and a of (3, 4): smeared along the horizontal, 30 % and 35 % as sharp there.
    const smear = sharp(0.3, 0.9, 0.5, 0.55);
    const r = judge(sequence([pair('1', '2', even), pair('2', '3', smear), pair('3', '4', inverse(sharp(0.35, 0.95, 0.5, 0.5))), pair('4', '5', even)], skyFrames), defaultBudget);
    const flagged = r.frames.filter((f) => f.flags.includes('blurred'));
    expect(flagged.map((f) => f.file)).toEqual(['3']);
    expect(flagged[0].verdict).toBe('reshoot');
    expect(flagged[0].advice[0]).toMatch(/^3 is blurred along the horizontal: on the content it shares with 2 and 4 it is 35 % as sharp; camera shake or panning/);
  });

  it('says no direction for blur that takes every direction alike', () => {
    const soft = sharp(0.4, 0.42, 0.45, 0.41);
    const r = judge(sequence([pair('1', '2', even), pair('2', '3', soft), pair('3', '4', inverse(soft)), pair('4', '5', even)], skyFrames), defaultBudget);
    const advice = r.frames.find((f) => f.file === '3')!.advice[0];
    expect(advice).toMatch(/3 is blurred: .* 40 % as sharp, in every direction alike/);
    expect(advice).not.toMatch(/along/);
  });

  it('needs both neighbours to agree, and one is enough at the end of a pan', () => {
    // 3 softer than 2 but as sharp as 4 (and 4 as 5): 2 is the odd one out, not 3.
    expect(blurredFiles(sequence([pair('1', '2', even), pair('2', '3', sharp(0.5)), pair('3', '4', even), pair('4', '5', even)], skyFrames))).toEqual([]);
    // 1 has a single neighbour, and it is much sharper.
    expect(blurredFiles(sequence([pair('1', '2', sharp(2.5)), pair('2', '3', even), pair('3', '4', even), pair('4', '5', even)], skyFrames))).toEqual(['1']);
    // A closure pair is a neighbour too: 1 is then compared with 5 as well, which is no sharper.
    const turn = sequence([pair('1', '2', sharp(2.5)), pair('2', '3', even), pair('3', '4', even), pair('4', '5', even), pair('5', '1', { ...even, kind: 'closure' })], skyFrames);
    expect(blurredFiles(turn)).toEqual([]);
  });

  it('looks past a neighbour just as soft: two blurred frames in a row are both flagged', () => {
    const r = sequence([pair('1', '2', even), pair('2', '3', sharp(0.4)), pair('3', '4', even), pair('4', '5', sharp(2.4)), pair('5', '6', even)], [...skyFrames, frame('6')]);
    expect(blurredFiles(r)).toEqual(['3', '4']);
    // But not past a neighbour markedly softer still: 3 is sharper than 4 there.
    const r2 = sequence([pair('1', '2', even), pair('2', '3', sharp(0.6)), pair('3', '4', sharp(0.3)), pair('4', '5', sharp(5)), pair('5', '6', even)], [...skyFrames, frame('6')]);
    expect(blurredFiles(r2)).toEqual(['4']);
  });

  it('judges a bracket frame against its reference only, and with it when the reference is blurred', () => {
    const frames = ['1a', '1b', '2a', '2b', '2c', '3a', '3b'].map((f) => frame(f, { sharpness: f === '2b' ? 0.3 : 2 }));
    const analysis = (p2b: Partial<PairMeasure>, p2c: Partial<PairMeasure>, ref: Partial<PairMeasure>): Analysis => ({
      folder: '/card',
      frames,
      stations: [
        { index: 0, frames: ['1a', '1b'], reference: '1a', evOffsets: [0, -2], groupedBy: 'exif' },
        { index: 1, frames: ['2a', '2b', '2c'], reference: '2a', evOffsets: [0, -2, 2], groupedBy: 'exif' },
        { index: 2, frames: ['3a', '3b'], reference: '3a', evOffsets: [0, -2], groupedBy: 'exif' },
      ],
      pairs: [
        pair('1a', '1b', { kind: 'bracket', shiftPx: 0.5, ...even }),
        pair('2a', '2b', { kind: 'bracket', shiftPx: 0.5, ...p2b }),
        pair('2a', '2c', { kind: 'bracket', shiftPx: 0.5, ...p2c }),
        pair('3a', '3b', { kind: 'bracket', shiftPx: 0.5, ...even }),
        pair('1a', '2a', ref),
        pair('2a', '3a', inverse(ref)),
      ],
      skipped: [],
      sweepDeg: null,
      geometry: null,
    });
    // 2b shaken against its sharp reference: flagged, and only it (its low whole-frame value plays no part).
    const shaken = judge(analysis(sharp(0.25, 0.8, 0.4, 0.4), even, even), defaultBudget);
    expect(shaken.frames.filter((f) => f.flags.includes('blurred')).map((f) => f.file)).toEqual(['2b']);
    expect(shaken.frames.find((f) => f.file === '2b')!.advice.find((a) => a.includes('blurred'))).toMatch(/^2b is blurred along the horizontal: on the content it shares with 2a it is 25 % as sharp/);
    // The reference shaken, its bracket frames sharp (they read sharper than it): only 2a.
    expect(blurredFiles(analysis(sharp(2.5), sharp(2.4), sharp(0.4)))).toEqual(['2a']);
    // The whole station shaken: 2b and 2c as soft as their blurred reference are blurred too.
    const station = judge(analysis(even, even, sharp(0.4)), defaultBudget);
    expect(station.frames.filter((f) => f.flags.includes('blurred')).map((f) => f.file)).toEqual(['2a', '2b', '2c']);
    expect(station.frames.find((f) => f.file === '2c')!.advice.find((a) => a.includes('blurred'))).toMatch(/like its reference 2a, it is 39 % as sharp as 1a and 3a on the content they share/);
  });

  it('says nothing where the shared content is too flat to tell, and could not compare only where nothing registered', () => {
    const flat: Partial<PairMeasure> = { sharpnessByDirection: null, sharpnessRatio: null, sharpnessBlocks: null };
    expect(blurredFiles(sequence([pair('1', '2', even), pair('2', '3', flat), pair('3', '4', flat), pair('4', '5', even)], skyFrames))).toEqual([]);
    const unmatched: Partial<PairMeasure> = { ...flat, homography: null, overlap: null, inliers: 0, evDiff: null };
    const r = judge(sequence([pair('1', '2', even), pair('2', '3', unmatched), pair('3', '4', unmatched), pair('4', '5', even)], skyFrames), defaultBudget);
    const f3 = r.frames.find((f) => f.file === '3')!;
    expect(f3.flags).toEqual(['blurred']);
    expect(f3.advice.find((a) => a.includes('blurred'))).toMatch(/could not compare with a neighbour on the content both see: over the whole frame its sharpness is 30 % of the sequence's typical/);
    expect(r.frames.filter((f) => f.flags.includes('blurred')).map((f) => f.file)).toEqual(['3']);
  });

  it('re-judges against another threshold without re-analysis', () => {
    const r = judge(sequence([pair('1', '2', even), pair('2', '3', sharp(0.5)), pair('3', '4', inverse(sharp(0.5))), pair('4', '5', even)], skyFrames), defaultBudget);
    expect(r.frames.filter((f) => f.flags.includes('blurred')).map((f) => f.file)).toEqual(['3']);
    expect(rejudge(r, resolveBudget({ minSharpnessRatio: 0.4 })).frames.every((f) => !f.flags.includes('blurred'))).toBe(true);
    expect(rejudge(r, resolveBudget({ minSharpnessRatio: 0.4 })).pairs[1].sharpnessByDirection).toEqual(r.pairs[1].sharpnessByDirection);
  });
});

describe('the budget', () => {
  it('rejects values out of range with a message naming the setting', () => {
    expect(() => resolveBudget({ weakOverlap: 2 })).toThrow(/Expected a number from 0 to 1 for weakOverlap but received 2/);
    expect(() => resolveBudget({ minInliers: 'many' })).toThrow(/minInliers/);
    expect(() => resolveBudget({ overlap: 0.1 })).toThrow(/Expected one of/);
    expect(resolveBudget({ minInliers: '30' }).minInliers).toBe(30);
  });
});
