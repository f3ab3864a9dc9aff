// Grouping frames into stations from EXIF (exposure bias and time pattern, CIPA DC-008 tags) and,
// without EXIF, from content. Camera behaviour assumed here is common practice: auto-exposure
// bracketing records the bias per frame and fires a bracket within a second; turning the head takes
// longer.
import { describe, expect, it } from 'vitest';
import type { FrameSettings } from '../../../src/core/sequence/report.js';
import { groupStations, modalPattern, patternOf } from '../../../src/core/sequence/stations.js';

const base: FrameSettings = { exposureTime: 1 / 250, fNumber: 8, iso: 100, evBias: 0, focalLength: 35, focalLength35: 35, whiteBalance: '1', make: null, model: null };

function aeb(pattern: number[][], gapMs = 4000, innerMs = 400): { settings: FrameSettings; captureMs: number }[] {
  const out: { settings: FrameSettings; captureMs: number }[] = [];
  let t = 0;
  for (const station of pattern) {
    station.forEach((bias, k) => {
      out.push({ settings: { ...base, evBias: bias, exposureTime: base.exposureTime! * 2 ** bias }, captureMs: t });
      if (k < station.length - 1) t += innerMs;
    });
    t += gapMs;
  }
  return out;
}

const members = (groups: { members: number[] }[]): number[][] => groups.map((g) => g.members);

describe('stations from EXIF', () => {
  it('groups auto-exposure brackets and picks the 0 EV frame as reference', () => {
    const g = groupStations(aeb([[0, -2, 2], [0, -2, 2], [0, -2, 2]]));
    expect(members(g)).toEqual([[0, 1, 2], [3, 4, 5], [6, 7, 8]]);
    expect(g.map((s) => s.reference)).toEqual([0, 3, 6]);
    expect(g[0].offsets).toEqual([0, -2, 2]);
    expect(g[0].groupedBy).toBe('exif');
  });

  it('finds an incomplete bracket whatever frame is missing', () => {
    // Missing the +2 frame: the repeated 0 starts the next station.
    expect(members(groupStations(aeb([[0, -2, 2], [0, -2], [0, -2, 2]])))).toEqual([[0, 1, 2], [3, 4], [5, 6, 7]]);
    // Missing the 0 frame: only the time gap separates [-2, +2] from the next station.
    const g = groupStations(aeb([[0, -2, 2], [-2, 2], [0, -2, 2]]));
    expect(members(g)).toEqual([[0, 1, 2], [3, 4], [5, 6, 7]]);
    const patterns = g.map((s) => patternOf(s.offsets));
    expect(modalPattern(patterns)).toBe(patternOf([0, -2, 2]));
    expect(patterns[1]).not.toBe(modalPattern(patterns));
  });

  it('uses the exposure time when the bias is not recorded (manual brackets)', () => {
    const frames = aeb([[0, -1, 1], [0, -1, 1]]).map((f) => ({ ...f, settings: { ...f.settings, evBias: null } }));
    const g = groupStations(frames);
    expect(members(g)).toEqual([[0, 1, 2], [3, 4, 5]]);
    // Reference: the middle exposure.
    expect(g.map((s) => s.reference)).toEqual([0, 3]);
  });

  // A hand-held pan with auto exposure: every frame metered, one came out 1.3 EV brighter, with no
  // exposure bias recorded and no repeat of that change (the case of issue 15).
  const pan = (modes: (number | null)[] = []): { settings: FrameSettings; captureMs: number; exposureMode: number | null }[] =>
    [0, 0, 0, 1.3, 0, 0].map((ev, k) => ({ settings: { ...base, exposureTime: base.exposureTime! * 2 ** ev }, captureMs: 2000 * k, exposureMode: modes[k] ?? null }));

  it('takes a lone exposure change without bias and without a repeat for auto exposure, not a bracket', () => {
    expect(members(groupStations(pan()))).toEqual([[0], [1], [2], [3], [4], [5]]);
    // ExposureMode 0 (auto exposure, CIPA DC-008) says so outright.
    expect(members(groupStations(pan([0, 0, 0, 0, 0, 0])))).toEqual([[0], [1], [2], [3], [4], [5]]);
  });

  it('keeps a bracket the camera says it fired (ExposureMode 2) or that repeats', () => {
    expect(members(groupStations(pan([null, null, 2, 2, null, null])))).toEqual([[0], [1], [2, 3], [4], [5]]);
    // Manual brackets by shutter time, one station short of a frame: the pattern recurs, so all stay brackets.
    const manual = aeb([[0, -1, 1], [0, -1], [0, -1, 1]]).map((f) => ({ ...f, settings: { ...f.settings, evBias: null }, exposureMode: 1 }));
    expect(members(groupStations(manual))).toEqual([[0, 1, 2], [3, 4], [5, 6, 7]]);
    // Every frame metered automatically: exposure changes are the scene's, not brackets.
    const metered = aeb([[0, -1, 1], [0, -1, 1]]).map((f) => ({ ...f, settings: { ...f.settings, evBias: null }, exposureMode: 0 }));
    expect(members(groupStations(metered))).toEqual([[0], [1], [2], [3], [4], [5]]);
  });

  it('makes every frame its own station when nothing is bracketed', () => {
    const frames = aeb([[0], [0], [0], [0]]);
    expect(members(groupStations(frames))).toEqual([[0], [1], [2], [3]]);
    expect(groupStations(frames)[0].groupedBy).toBe('single');
  });
});

describe('stations from content', () => {
  it('follows the links between consecutive frames when EXIF has no exposure data', () => {
    const none: FrameSettings = { ...base, exposureTime: null, evBias: null, fNumber: null, iso: null };
    const frames = Array.from({ length: 6 }, () => ({ settings: none, captureMs: null }));
    const g = groupStations(frames, [true, true, false, true, false]);
    expect(members(g)).toEqual([[0, 1, 2], [3, 4], [5]]);
    expect(g[0].groupedBy).toBe('content');
  });
});
