/**
 * A card's frames, in shooting order, cut into sequences by what EXIF says: a pause far longer than
 * the sequence's own rhythm, or a change of camera, lens, focal length or orientation. This is
 * evidence only; content (whether the frames either side overlap) is judged elsewhere and may merge
 * a pause back or split where EXIF saw nothing.
 */
import type { SequenceSplit } from './report.js';
import { median } from '../numeric/median.js';

export interface SplitFrame {
  readonly file: string;
  /** Capture time, ms. */
  readonly captureMs: number | null;
  /** Make and model, as written. */
  readonly camera: string | null;
  /** EXIF LensModel when there is one. */
  readonly lens: string | null;
  readonly focalLengthMm: number | null;
  /** From the frame's size after EXIF rotation. */
  readonly orientation: 'landscape' | 'portrait' | null;
}

/** Frames `start` to `end` (exclusive) of the input, and why they are apart from the frames before. */
export interface SequenceSegment {
  readonly start: number;
  readonly end: number;
  readonly splitBy: readonly SequenceSplit[];
}

export interface SplitParams {
  /**
   * A pause is a gap this many times the rhythm. Our own: an order of magnitude; the steps of one
   * sequence vary by a factor of two or three (a hand-held pan at 1-3 s), and a hesitation (a
   * passer-by, re-levelling) stays within a few steps. A longer wait inside a turn is still called
   * a pause here: the content step merges it back when the frames either side overlap.
   */
  readonly pauseFactor: number;
  /**
   * No gap shorter than this is a pause, whatever the rhythm. Our own: with timestamps to the whole
   * second and bracket gaps of tenths, the rhythm can read near zero; half a minute is longer than
   * any step of a turn shot by hand or on a tripod at daylight shutter speeds.
   */
  readonly minPauseMs: number;
  /**
   * A gap longer than this is a pause even against a slow rhythm, and never counts toward a rhythm.
   * Our own: even a 30 s exposure with in-camera long-exposure noise reduction takes about a minute
   * per frame (memory), so no step of a sequence takes a quarter of an hour.
   */
  readonly longestStepMs: number;
  /**
   * Gaps up to this long can be the gaps inside a bracket. Common practice (memory): cameras fire a
   * bracket at several frames a second at daylight shutter speeds.
   */
  readonly bracketGapMs: number;
  /**
   * How many known gaps on each side of a gap make its rhythm. Our own: enough to hold two or more
   * station steps of brackets up to seven frames, few enough to stay within one sequence.
   */
  readonly rhythmWindow: number;
  /**
   * A focal length that differs by more than this share is another focal length. Our own: a locked
   * focal length is written identically on every frame, so any difference is a moved zoom; zoom
   * lenses report it in steps, the finest of which (at the long end of a tele zoom) are about 2.5 %
   * apart (memory). 2 % also matches the settings-drift check in verdicts.ts, so a sequence never
   * holds two focal lengths that check would call drift.
   */
  readonly focalTolerance: number;
}

export const defaultSplitParams: SplitParams = {
  pauseFactor: 10,
  minPauseMs: 30_000,
  longestStepMs: 15 * 60_000,
  bracketGapMs: 1_000,
  rhythmWindow: 16,
  focalTolerance: 0.02,
};

/** Fewer station steps than this in a window are hesitations, not a rhythm. Our own. */
const minStepsForRhythm = 2;

function checkParams(p: SplitParams): void {
  const want = (ok: boolean, what: string, name: string, v: unknown): void => {
    if (!ok) throw new RangeError(`Expected ${what} for ${name} but received ${String(v)}`);
  };
  want(Number.isFinite(p.pauseFactor) && p.pauseFactor > 1, 'a number above 1', 'pauseFactor', p.pauseFactor);
  want(Number.isFinite(p.minPauseMs) && p.minPauseMs >= 0, 'a non-negative number', 'minPauseMs', p.minPauseMs);
  want(Number.isFinite(p.longestStepMs) && p.longestStepMs > 0, 'a positive number', 'longestStepMs', p.longestStepMs);
  want(Number.isFinite(p.bracketGapMs) && p.bracketGapMs >= 0, 'a non-negative number', 'bracketGapMs', p.bracketGapMs);
  want(Number.isInteger(p.rhythmWindow) && p.rhythmWindow >= 1, 'a positive integer', 'rhythmWindow', p.rhythmWindow);
  want(Number.isFinite(p.focalTolerance) && p.focalTolerance >= 0, 'a non-negative number', 'focalTolerance', p.focalTolerance);
}

/** Camera and lens names as written can differ in case, padding and trailing NULs between frames of one camera. */
const nameKey = (s: string): string => s.replace(/\0/g, '').trim().replace(/\s+/g, ' ').toLowerCase();

/** Attribute evidence between frame i - 1 and frame i, against the last value known before frame i. */
function attributeSplits(frames: readonly SplitFrame[], tolerance: number): SequenceSplit[][] {
  const out: SequenceSplit[][] = frames.map(() => []);
  let camera: string | null = null, lens: string | null = null, focal: number | null = null;
  let orientation: 'landscape' | 'portrait' | null = null;
  frames.forEach((f, i) => {
    const cam = f.camera !== null && nameKey(f.camera) !== '' ? f.camera : null;
    if (cam !== null) {
      if (camera !== null && nameKey(camera) !== nameKey(cam)) out[i].push({ by: 'camera', from: camera, to: cam });
      camera = cam;
    }
    const len = f.lens !== null && nameKey(f.lens) !== '' ? f.lens : null;
    if (len !== null) {
      if (lens !== null && nameKey(lens) !== nameKey(len)) out[i].push({ by: 'lens', from: lens, to: len });
      lens = len;
    }
    const mm = f.focalLengthMm !== null && Number.isFinite(f.focalLengthMm) && f.focalLengthMm > 0 ? f.focalLengthMm : null;
    if (mm !== null) {
      if (focal !== null && Math.abs(mm - focal) > tolerance * Math.min(mm, focal)) out[i].push({ by: 'focal-length', fromMm: focal, toMm: mm });
      focal = mm;
    }
    if (f.orientation !== null) {
      if (orientation !== null && orientation !== f.orientation) out[i].push({ by: 'orientation', from: orientation, to: f.orientation });
      orientation = f.orientation;
    }
  });
  return out;
}

/**
 * The rhythm of a stretch of gaps: the typical step between stations. Where most gaps are short
 * (inside brackets) and at least two stand well above them, the steps are those; otherwise (a pan
 * of single frames, with perhaps a hesitation) the median gap.
 */
function rhythmOf(gaps: readonly number[], p: SplitParams): number | null {
  // One gap is no rhythm: beside a lone frame it is the pause before the next one.
  if (gaps.length < minStepsForRhythm) return null;
  const m = median(gaps);
  // Most gaps longer than a bracket's: one frame a station, and the typical gap is the step. Looking
  // for steps above it would take the few pauses a window reaches across (the next sequence, the
  // single shots after it) for the rhythm.
  if (m > p.bracketGapMs) return m;
  const cut = Math.max(2 * m, p.bracketGapMs);
  const steps = gaps.filter((g) => g > cut);
  return steps.length >= minStepsForRhythm ? median(steps) : m;
}

/**
 * Splits frames in shooting order into sequences by EXIF evidence. Each split lists every kind of
 * evidence that applies there. A gap is a pause when it is longer than `pauseFactor` times the
 * rhythm on either side of it (the larger), and longer than `minPauseMs`; or longer than
 * `longestStepMs`. The rhythm on a side is taken from the gaps next to it among frames of the same
 * camera, lens, focal length and orientation, so that each sequence is measured by its own steps.
 * Frames without a capture time give no pause evidence, nor does a gap without another gap beside
 * it to measure a rhythm from (a card of two frames).
 */
export function splitByEvidence(frames: readonly SplitFrame[], params: Partial<SplitParams> = {}): SequenceSegment[] {
  if (!Array.isArray(frames)) throw new TypeError(`Expected an array for frames but received ${typeof frames}`);
  const p: SplitParams = { ...defaultSplitParams, ...params };
  checkParams(p);
  const n = frames.length;
  if (n === 0) return [];
  for (let i = 0; i < n; i++) {
    const t = frames[i].captureMs;
    if (t !== null && !Number.isFinite(t)) throw new RangeError(`Expected a finite number or null for frames[${i}].captureMs but received ${String(t)}`);
  }

  const evidence = attributeSplits(frames, p.focalTolerance);
  // Stretches of one camera, lens, focal length and orientation: a rhythm is measured within one.
  const stretch = new Int32Array(n);
  for (let i = 1; i < n; i++) stretch[i] = stretch[i - 1] + (evidence[i].length ? 1 : 0);

  // gap[i]: from frame i to frame i + 1, in ms; NaN where a time is missing or runs backwards.
  const gap = new Float64Array(Math.max(0, n - 1));
  for (let i = 0; i + 1 < n; i++) {
    const a = frames[i].captureMs, b = frames[i + 1].captureMs;
    gap[i] = a !== null && b !== null && b >= a ? b - a : NaN;
  }
  const usable = (j: number): boolean => !Number.isNaN(gap[j]) && gap[j] <= p.longestStepMs;

  for (let i = 0; i + 1 < n; i++) {
    const g = gap[i];
    if (Number.isNaN(g)) continue;
    const left: number[] = [];
    for (let j = i - 1; j >= 0 && left.length < p.rhythmWindow && stretch[j] === stretch[i]; j--) if (usable(j)) left.push(gap[j]);
    const right: number[] = [];
    for (let j = i + 1; j + 1 < n && right.length < p.rhythmWindow && stretch[j + 1] === stretch[i + 1]; j++) if (usable(j)) right.push(gap[j]);
    const sides = [rhythmOf(left, p), rhythmOf(right, p)].filter((r): r is number => r !== null);
    if (sides.length === 0) continue;
    const rhythm = Math.max(...sides);
    const pause = g > p.longestStepMs || (g > p.minPauseMs && g > p.pauseFactor * rhythm);
    if (pause) evidence[i + 1].unshift({ by: 'pause', seconds: g / 1000, rhythmSeconds: rhythm / 1000 });
  }

  const segments: SequenceSegment[] = [];
  let start = 0;
  for (let i = 1; i <= n; i++) {
    if (i < n && evidence[i].length === 0) continue;
    segments.push({ start, end: i, splitBy: start === 0 ? [] : evidence[start] });
    start = i;
  }
  return segments;
}
