// The verdict rules as lists (src/core/sequence/verdict-rules.ts): every flag code of the report schema has a
// rule that raises it, names are unique in each list, and a list's order is the order of the reasons
// in the report.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import type { Analysis, FlagCode, FrameMeasure, FrameSettings, PairMeasure, StationMeasure } from '../../../src/core/sequence/report.js';
import { defaultBudget } from '../../../src/core/sequence/report.js';
import { cardRules, frameRules, pairRules, sequenceRules, stationRules } from '../../../src/core/sequence/verdict-rules.js';
import { judge } from '../../../src/core/sequence/verdicts.js';
import { reshootPlan } from '../../../src/core/sequence/reshoot-plan.js';
import { projectRoot } from '../../helpers/cli.js';

const schema = (): { $defs: { flag: { enum: string[] } }; properties: { folderProblems: { items: { properties: { code: { enum: string[] } } } } } } =>
  JSON.parse(readFileSync(join(projectRoot, 'schema/report.schema.json'), 'utf8'));

/** The codes a list may raise, in the list's order, each once. */
const listOrder = (rules: readonly { codes: readonly FlagCode[] }[]): FlagCode[] => [...new Set(rules.flatMap((r) => r.codes))];

const settings: FrameSettings = { exposureTime: 1 / 250, fNumber: 8, iso: 100, evBias: 0, focalLength: 35, focalLength35: 35, whiteBalance: '0', make: null, model: null };
const frame = (file: string, extra: Partial<FrameMeasure> = {}): FrameMeasure => ({ file, width: 3000, height: 2000, captureTime: null, settings, sharpness: 2, keypoints: 1500, ...extra });
const pair = (a: string, b: string, extra: Partial<PairMeasure> = {}): PairMeasure => ({
  a, b, kind: 'neighbour', matches: 300, inliers: 200, matchesInOverlap: 250, overlap: 0.45, homography: [1, 0, 1500, 0, 1, 0, 0, 0, 1], evDiff: 0.05, rmsError: 0.8, shiftPx: null, ...extra,
});

describe('verdict rule lists', () => {
  it('names each rule once in its list', () => {
    for (const rules of [pairRules, stationRules, frameRules, sequenceRules, cardRules]) {
      const names = rules.map((r) => r.name);
      expect(new Set(names).size).toBe(names.length);
      expect(rules.every((r) => r.codes.length > 0)).toBe(true);
    }
  });

  it('has a rule for every flag code of the report schema, and no code outside it', () => {
    const raised = new Set([...pairRules, ...stationRules, ...frameRules].flatMap((r) => r.codes));
    expect([...raised].sort()).toEqual([...schema().$defs.flag.enum].sort());
  });

  it('has a rule for every folder problem code of the report schema, and no code outside it', () => {
    const raised = new Set([...sequenceRules, ...cardRules].flatMap((r) => r.codes));
    expect([...raised].sort()).toEqual([...schema().properties.folderProblems.items.properties.code.enum].sort());
  });

  it('gives a pair its reasons in the order of the pair rules', () => {
    const flawed = pair('2', '3', { overlap: 0.25, inliers: 5, parallax: true, misfit: 0.2, moved: [{ x: 100, y: 100, width: 50, height: 50 }], evDiff: 1.2 });
    const frames = ['1', '2', '3', '4'].map((f) => frame(f));
    const analysis: Analysis = {
      folder: '/card', frames,
      stations: frames.map((f, i) => ({ index: i, frames: [f.file], reference: f.file, evOffsets: [0], groupedBy: 'single' })),
      pairs: [pair('1', '2'), flawed, pair('3', '4')], skipped: [], sweepDeg: null, geometry: null,
    };
    const reasons = judge(analysis, defaultBudget).pairs[1].reasons;
    expect(reasons).toEqual(['low-overlap', 'few-inliers', 'parallax', 'movement', 'exposure-jump']);
    expect(reasons).toEqual(listOrder(pairRules).filter((c) => reasons.includes(c)));
  });

  it('gives a station and a frame their reasons in the order of their rules', () => {
    // Four stations of a three-frame bracket; station 3 lacks its +2 EV frame, its reference is
    // shot at another aperture, and its -2 EV frame is another size and moved against the reference.
    const offsets = [-2, 0, 2];
    const stations: StationMeasure[] = [0, 1, 2, 3].map((s) => {
      const n = s === 2 ? 2 : 3;
      return { index: s, frames: offsets.slice(0, n).map((_, k) => `S${s}_${k}`), reference: `S${s}_1`, evOffsets: offsets.slice(0, n), groupedBy: 'exif' };
    });
    const frames = stations.flatMap((s) => s.frames.map((file) => frame(file, file === 'S2_1' ? { settings: { ...settings, fNumber: 11 } } : file === 'S2_0' ? { width: 2000, height: 1500 } : {})));
    const pairs = [
      ...stations.flatMap((s) => s.frames.filter((f) => f !== s.reference).map((f) => pair(s.reference, f, { kind: 'bracket', shiftPx: f === 'S2_0' ? 6 : 0.5, evDiff: null }))),
      ...[0, 1, 2].map((s) => pair(`S${s}_1`, `S${s + 1}_1`)),
    ];
    const r = judge({ folder: '/card', frames, stations, pairs, skipped: [], sweepDeg: null, geometry: null }, defaultBudget);
    const station = r.stations[2].reasons, shifted = r.frames.find((f) => f.file === 'S2_0')!.reasons;
    expect(station).toEqual(['incomplete-bracket', 'settings-drift', 'bracket-drift']);
    expect(station).toEqual(listOrder(stationRules).filter((c) => station.includes(c)));
    expect(shifted).toEqual(['incomplete-bracket', 'settings-drift', 'bracket-drift', 'size-mismatch']);
    expect(shifted).toEqual(listOrder(frameRules).filter((c) => shifted.includes(c)));
    expect(r.stations.filter((_, i) => i !== 2).every((s) => s.reasons.length === 0)).toBe(true);
  });

  it('says an incomplete bracket of stations grouped by content (no EXIF offsets) by its count, without naming an offset', () => {
    // Frames without EXIF exposure data are grouped into stations by their content, so their
    // offsets are unknown (null). A station of two frames among stations of three is still short
    // of a frame; which offset it lacks cannot be said. This once threw ("Expected a finite
    // number for ev but received NaN") and the command printed no report.
    const stations: StationMeasure[] = [0, 1, 2, 3].map((s) => {
      const n = s === 2 ? 2 : 3;
      return { index: s, frames: Array.from({ length: n }, (_, k) => `S${s}_${k}`), reference: `S${s}_0`, evOffsets: Array.from({ length: n }, () => null), groupedBy: 'content' };
    });
    const frames = stations.flatMap((s) => s.frames.map((file) => frame(file)));
    const pairs = [
      ...stations.flatMap((s) => s.frames.slice(1).map((f) => pair(s.reference, f, { kind: 'bracket', shiftPx: 0.5, evDiff: null }))),
      ...[0, 1, 2].map((s) => pair(`S${s}_0`, `S${s + 1}_0`)),
    ];
    const analysis: Analysis = { folder: '/card', frames, stations, pairs, skipped: [], sweepDeg: null, geometry: null };
    const r = judge(analysis, defaultBudget);
    expect(r.stations.map((s) => s.reasons)).toEqual([[], [], ['incomplete-bracket'], []]);
    const advice = r.stations[2].advice.join(' ');
    expect(advice).toContain('station 3 has 2 of 3 bracket frames: reshoot the station');
    expect(advice).not.toMatch(/missing|NaN/);
    expect(reshootPlan(r).map((item) => item.text).join(' ')).toContain('it has 2 of 3 bracket frames');
  });
});
