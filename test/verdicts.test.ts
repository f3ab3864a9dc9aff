// Verdicts against the match budget. Default thresholds (overlap 20 % reshoot / 30 % weak,
// exposure within 0.5 EV) are common practice for panoramas; the tests check the rules as stated
// in report.ts, and that a new budget re-judges without re-analysis.
import { describe, expect, it } from 'vitest';
import { resolveBudget } from '../src/core/budget.js';
import type { Analysis, FrameMeasure, FrameSettings, PairMeasure } from '../src/core/report.js';
import { defaultBudget } from '../src/core/report.js';
import { judge, rejudge } from '../src/core/verdicts.js';

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
  it('flags a frame far less sharp than the sequence', () => {
    const frames = ['1', '2', '3', '4', '5'].map((f) => frame(f, { sharpness: f === '3' ? 0.9 : 2 + Number(f) / 10 }));
    const r = judge(sequence([pair('1', '2'), pair('2', '3'), pair('3', '4'), pair('4', '5')], frames), defaultBudget);
    expect(r.frames.filter((f) => f.flags.includes('blurred')).map((f) => f.file)).toEqual(['3']);
  });

  it('flags settings that changed between stations', () => {
    const frames = ['1', '2', '3', '4'].map((f) => frame(f, f === '3' ? { settings: { ...settings, iso: 400 } } : {}));
    const r = judge(sequence([pair('1', '2'), pair('2', '3'), pair('3', '4')], frames), defaultBudget);
    const drifted = r.frames.filter((f) => f.flags.includes('settings-drift'));
    expect(drifted.map((f) => f.file)).toEqual(['3']);
    expect(drifted[0].advice[0]).toMatch(/ISO 400 instead of 100/);
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
    expect(r.stations[1].advice[0]).toMatch(/2 of 3 bracket frames \(missing \+2\.0 EV\)/);
    expect(r.frames.find((f) => f.file === '3b')!.flags).toEqual(['bracket-drift']);
    expect(r.frames.find((f) => f.file === '1b')!.flags).toEqual([]);
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
