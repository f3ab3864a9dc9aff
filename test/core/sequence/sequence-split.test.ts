// Splitting a card into sequences by EXIF evidence (src/core/sequence/sequence-split.ts). The shooting
// rhythms below are common practice (memory): a camera fires a bracket in tenths of a second,
// a tripod turn takes a few seconds per station, a hand-held pan 1-3 s per frame. The thresholds
// under test are the module's own named constants; these tests check the rules they state.
import { describe, expect, it } from 'vitest';
import type { SplitFrame } from '../../../src/core/sequence/sequence-split.js';
import { splitByEvidence } from '../../../src/core/sequence/sequence-split.js';
import { createRandom } from '../../../src/core/numeric/random.js';

const camera = 'Canon EOS R6';
let counter = 0;
const frame = (captureMs: number | null, extra: Partial<SplitFrame> = {}): SplitFrame => ({
  file: `IMG_${String(++counter).padStart(4, '0')}.JPG`,
  captureMs,
  camera,
  lens: 'RF24-105mm F4 L IS USM',
  focalLengthMm: 20,
  orientation: 'landscape',
  ...extra,
});

/** Frames at the given gaps (seconds) after `startMs`. */
function shoot(startMs: number, gapsS: readonly number[], extra: Partial<SplitFrame> = {}): SplitFrame[] {
  const out = [frame(startMs, extra)];
  let t = startMs;
  for (const g of gapsS) {
    t += g * 1000;
    out.push(frame(t, extra));
  }
  return out;
}

/** Gaps of a bracketed turn: `stations` stations of `bracket` frames. */
const bracketGaps = (stations: number, bracket: number, insideS: number, stepS: number): number[] =>
  Array.from({ length: stations * bracket - 1 }, (_, k) => ((k + 1) % bracket === 0 ? stepS : insideS));

const ends = (frames: SplitFrame[]): number[][] => splitByEvidence(frames).map((s) => [s.start, s.end]);
const lastTime = (fs: SplitFrame[]): number => fs[fs.length - 1].captureMs!;

describe('splitByEvidence: pauses against the sequence\'s own rhythm', () => {
  it('does not take the pauses a window reaches across for the rhythm: two pans at 1.5 s, then two single frames', () => {
    // 10 frames, a 10-minute pause, 12 frames, then single frames about 10 and 5 minutes later: the
    // window after the first pause holds the two later pauses among eleven 1.5 s steps.
    const first = shoot(0, Array(9).fill(1.5));
    const second = shoot(lastTime(first) + 600_000, Array(11).fill(1.5));
    const a = frame(lastTime(second) + 586_000), b = frame(lastTime(second) + 886_000);
    const segs = splitByEvidence([...first, ...second, a, b]);
    expect(segs.map((s) => [s.start, s.end])).toEqual([[0, 10], [10, 22], [22, 23], [23, 24]]);
    expect(segs[1].splitBy).toEqual([{ by: 'pause', seconds: 600, rhythmSeconds: 1.5 }]);
  });

  it('splits three sequences shot ten minutes apart in three, with the evidence of each split', () => {
    const random = createRandom(16);
    const pan = shoot(0, Array.from({ length: 7 }, () => 1 + 2 * random.next()));
    const brackets = shoot(lastTime(pan) + 600_000, bracketGaps(5, 3, 0.3, 4));
    const turn = shoot(lastTime(brackets) + 600_000, Array(11).fill(3), { focalLengthMm: 62 / 3 });
    const segments = splitByEvidence([...pan, ...brackets, ...turn]);
    expect(segments.map((s) => [s.start, s.end])).toEqual([[0, 8], [8, 23], [23, 35]]);
    expect(segments[0].splitBy).toEqual([]);
    expect(segments[1].splitBy).toHaveLength(1);
    const pause = segments[1].splitBy[0];
    expect(pause.by).toBe('pause');
    if (pause.by !== 'pause') return;
    expect(pause.seconds).toBeCloseTo(600, 6);
    // The rhythm it was measured against is the step between stations, not the gap inside a bracket.
    expect(pause.rhythmSeconds).toBeCloseTo(4, 6);
    expect(segments[2].splitBy.map((e) => e.by)).toEqual(['pause', 'focal-length']);
    expect(segments[2].splitBy[1]).toEqual({ by: 'focal-length', fromMm: 20, toMm: 62 / 3 });
  });

  it('keeps a bracketed turn whole: 0.3 s inside brackets, 4 s between stations', () => {
    expect(ends(shoot(0, bracketGaps(12, 3, 0.3, 4)))).toEqual([[0, 36]]);
    // Longer brackets, and a slow tripod turn (25 s per station) between 7-frame brackets.
    expect(ends(shoot(0, bracketGaps(8, 5, 0.25, 6)))).toEqual([[0, 40]]);
    expect(ends(shoot(0, bracketGaps(6, 7, 0.2, 25)))).toEqual([[0, 42]]);
  });

  it('measures a slow turn by its station steps, not its bracket gaps: 45 s per station stays whole, a ten-minute wait splits', () => {
    const gaps = bracketGaps(8, 5, 0.3, 45);
    expect(ends(shoot(0, gaps))).toEqual([[0, 40]]);
    gaps[19] = 600;
    const segments = splitByEvidence(shoot(0, gaps));
    expect(segments.map((s) => [s.start, s.end])).toEqual([[0, 20], [20, 40]]);
    expect(segments[1].splitBy).toEqual([{ by: 'pause', seconds: 600, rhythmSeconds: 45 }]);
  });

  it('keeps a hand-held pan whole at 1-3 s per frame, and through a hesitation of 20 s', () => {
    const random = createRandom(7);
    const gaps = Array.from({ length: 23 }, () => 1 + 2 * random.next());
    expect(ends(shoot(0, gaps))).toEqual([[0, 24]]);
    gaps[11] = 20;
    expect(ends(shoot(0, gaps))).toEqual([[0, 24]]);
  });

  it('splits a turn at a two-minute wait, by pause alone (content merges it back elsewhere)', () => {
    const gaps = bracketGaps(10, 3, 0.3, 4);
    gaps[14] = 120; // after station 5
    const segments = splitByEvidence(shoot(0, gaps));
    expect(segments.map((s) => [s.start, s.end])).toEqual([[0, 15], [15, 30]]);
    expect(segments[1].splitBy).toEqual([{ by: 'pause', seconds: 120, rhythmSeconds: 4 }]);
  });

  it('copes with capture times to the whole second (no sub-second EXIF): brackets at 0 or 1 s stay whole, two minutes split', () => {
    const gaps: number[] = bracketGaps(10, 3, 0, 4).map((g, k) => (g === 0 ? (k % 4 === 0 ? 1 : 0) : k % 2 ? 5 : 4));
    expect(ends(shoot(0, gaps))).toEqual([[0, 30]]);
    gaps[14] = 120;
    expect(ends(shoot(0, gaps))).toEqual([[0, 15], [15, 30]]);
  });

  it('gives no pause evidence where a capture time is missing', () => {
    const a = shoot(0, Array(5).fill(2));
    const b = shoot(lastTime(a) + 600_000, Array(5).fill(2));
    // The first frame after the wait has no time: no gap is known across the wait.
    const withHole = [...a, { ...b[0], captureMs: null }, ...b.slice(1)];
    expect(ends(withHole)).toEqual([[0, 12]]);
    // No times at all: nothing but the settings can split.
    const none = [...a, ...b].map((f) => ({ ...f, captureMs: null }));
    expect(ends(none)).toEqual([[0, 12]]);
    expect(ends([...none.slice(0, 6), ...none.slice(6).map((f) => ({ ...f, orientation: 'portrait' as const }))])).toEqual([[0, 6], [6, 12]]);
    // With the times, the same frames split at the wait.
    expect(ends([...a, ...b])).toEqual([[0, 6], [6, 12]]);
  });
});

describe('splitByEvidence: a change of camera, lens, focal length or orientation', () => {
  it('splits where the camera changes, even with no pause, and not on case or padding of the name', () => {
    const a = shoot(0, Array(5).fill(2));
    const b = shoot(lastTime(a) + 2000, Array(5).fill(2), { camera: 'NIKON Z 6_2', lens: null });
    const segments = splitByEvidence([...a, ...b]);
    expect(segments.map((s) => [s.start, s.end])).toEqual([[0, 6], [6, 12]]);
    expect(segments[1].splitBy).toEqual([{ by: 'camera', from: camera, to: 'NIKON Z 6_2' }]);
    const padded = b.map((f) => ({ ...f, camera: ' canon eos r6\0', lens: 'RF24-105mm F4 L IS USM' }));
    expect(ends([...a, ...padded])).toEqual([[0, 12]]);
  });

  it('splits where the orientation changes', () => {
    const a = shoot(0, Array(7).fill(3));
    const b = shoot(lastTime(a) + 3000, Array(7).fill(3), { orientation: 'portrait' });
    const segments = splitByEvidence([...a, ...b]);
    expect(segments.map((s) => [s.start, s.end])).toEqual([[0, 8], [8, 16]]);
    expect(segments[1].splitBy).toEqual([{ by: 'orientation', from: 'landscape', to: 'portrait' }]);
  });

  it('splits where the lens or the focal length changes, and not within the tolerance of a written focal length', () => {
    const a = shoot(0, Array(5).fill(2));
    const lens = shoot(lastTime(a) + 2000, Array(5).fill(2), { lens: 'RF15-35mm F2.8 L IS USM' });
    expect(splitByEvidence([...a, ...lens])[1].splitBy).toEqual([{ by: 'lens', from: 'RF24-105mm F4 L IS USM', to: 'RF15-35mm F2.8 L IS USM' }]);
    // 20 -> 20.3 mm is 1.5 %, under the 2 % tolerance; 20 -> 20.7 mm is 3.5 % (the zoom step).
    expect(ends([...a, ...shoot(lastTime(a) + 2000, Array(5).fill(2), { focalLengthMm: 20.3 })])).toEqual([[0, 12]]);
    expect(ends([...a, ...shoot(lastTime(a) + 2000, Array(5).fill(2), { focalLengthMm: 20.7 })])).toEqual([[0, 6], [6, 12]]);
  });

  it('takes a frame that lacks a setting as no evidence, comparing with the last frame that has it', () => {
    const fs = shoot(0, Array(9).fill(2));
    fs[4] = { ...fs[4], camera: null, lens: null, focalLengthMm: null, orientation: null };
    expect(ends(fs)).toEqual([[0, 10]]);
    fs[5] = { ...fs[5], focalLengthMm: 35 };
    const segments = splitByEvidence(fs);
    expect(segments.map((s) => [s.start, s.end])).toEqual([[0, 5], [5, 6], [6, 10]]);
    expect(segments[1].splitBy).toEqual([{ by: 'focal-length', fromMm: 20, toMm: 35 }]);
    expect(segments[2].splitBy).toEqual([{ by: 'focal-length', fromMm: 35, toMm: 20 }]);
  });

  it('records every kind of evidence at one split', () => {
    const a = shoot(0, Array(5).fill(2));
    const b = shoot(lastTime(a) + 300_000, Array(5).fill(2), { camera: 'FUJIFILM X-T5', lens: 'XF16mmF2.8 R WR', focalLengthMm: 16, orientation: 'portrait' });
    const [, second] = splitByEvidence([...a, ...b]);
    expect(second.start).toBe(6);
    expect(second.splitBy.map((e) => e.by)).toEqual(['pause', 'camera', 'lens', 'focal-length', 'orientation']);
  });
});

describe('splitByEvidence: arguments', () => {
  it('returns nothing for no frames, one sequence for one frame', () => {
    expect(splitByEvidence([])).toEqual([]);
    expect(splitByEvidence([frame(0)])).toEqual([{ start: 0, end: 1, splitBy: [] }]);
  });

  it('rejects bad parameters and times in the project\'s words', () => {
    expect(() => splitByEvidence([frame(0)], { pauseFactor: 0.5 })).toThrow('Expected a number above 1 for pauseFactor but received 0.5');
    expect(() => splitByEvidence([frame(Number.NaN)])).toThrow('Expected a finite number or null for frames[0].captureMs but received NaN');
  });
});
