// The coverage map: footprints checked against the demo generator's pinhole camera (an independent
// implementation of the same model, src/core/demo/camera.ts: pixelDirection), holes where a turn lacks a
// frame and nowhere else, and the SVG's structure. Holes in every row with where to aim (the gap's
// width checked against the same pinhole model), and the poles only when a frame reaches toward
// them or a full sphere is declared, on hand-made geometry (cheap; the demo generator's two-row
// sets are in test/main/sequence-geometry.test.ts).
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import Ajv2020 from 'ajv/dist/2020.js';
import { describe, expect, it } from 'vitest';
import { cameraModel, directionAngles, pixelDirection } from '../../../src/core/demo/camera.js';
import { coverageHoles, coverageMap, coverageMapSvg, holeShare } from '../../../src/core/sequence/coverage-map.js';
import type { Analysis, Report } from '../../../src/core/sequence/report.js';
import { defaultBudget } from '../../../src/core/sequence/report.js';
import { judge, rejudge } from '../../../src/core/sequence/verdicts.js';
import { resolveBudget } from '../../../src/core/sequence/budget.js';
import { createRandom } from '../../../src/core/numeric/random.js';
import { projectRoot } from '../../helpers/cli.js';

const W = 3000, H = 2000, f = (35 / 36) * W;

interface Placed { yawDeg: number; pitchDeg: number; rollDeg: number }

/** The measurements of a set with one frame per station, placed at the given poses, and its pairs. */
function analysisOf(poses: Placed[], options: { focalPx?: number; pairs?: Analysis['pairs'] } = {}): Analysis {
  const names = poses.map((_, k) => `F${k}.JPG`);
  const settings = { exposureTime: null, fNumber: null, iso: null, evBias: null, focalLength: 35, focalLength35: 35, whiteBalance: null, make: null, model: null };
  return {
    folder: '/card',
    frames: names.map((file) => ({ file, width: W, height: H, captureTime: null, settings, sharpness: 1, keypoints: 1000 })),
    stations: names.map((file, index) => ({ index, frames: [file], reference: file, evOffsets: [0], groupedBy: 'single' as const })),
    pairs: options.pairs ?? [],
    skipped: [],
    sweepDeg: null,
    geometry: {
      focalPx: options.focalPx ?? f, focalFrom: 'exif', poses: poses.map((p, station) => ({ station, ...p })), unplaced: [],
      horizontalDeg: 0, verticalDeg: 0, gaps: [], closure: null, rmsPx: 0,
      rows: [...new Set(poses.map((p) => p.pitchDeg))].sort((a, b) => a - b).map((pitchDeg) => ({ pitchDeg, stations: poses.flatMap((p, k) => (p.pitchDeg === pitchDeg ? [k] : [])) })),
    },
  };
}

/** The same, judged with the default budget. */
function reportOf(poses: Placed[]): Report {
  return judge(analysisOf(poses), defaultBudget);
}

const wrap = (d: number): number => ((((d + 180) % 360) + 360) % 360) - 180;

describe('the coverage map', () => {
  it('outlines each frame where the pinhole camera model puts its corners', () => {
    const pose = { yawDeg: 30, pitchDeg: 12, rollDeg: 4 };
    const map = coverageMap(reportOf([{ yawDeg: 0, pitchDeg: 0, rollDeg: 0 }, pose]))!;
    const camera = cameraModel(W, H, 35);
    const fp = map.footprints[1];
    // The outline starts at the top-left corner of the frame and goes along the top edge.
    for (const [k, u, v] of [[0, -0.5, -0.5], [24, W - 0.5, -0.5], [48, W - 0.5, H - 0.5], [72, -0.5, H - 0.5]] as const) {
      const [yaw, elevation] = directionAngles(...pixelDirection(camera, pose, u, v));
      expect(Math.abs(wrap(fp.outline[k][0] - (yaw * 180) / Math.PI)), `corner ${k} yaw`).toBeLessThan(1e-6);
      expect(Math.abs(fp.outline[k][1] - (elevation * 180) / Math.PI), `corner ${k} pitch`).toBeLessThan(1e-6);
    }
  });

  it('finds no hole in a full turn of 12 frames 30 degrees apart', () => {
    const map = coverageMap(reportOf(Array.from({ length: 12 }, (_, k) => ({ yawDeg: wrap(30 * k), pitchDeg: 0, rollDeg: 0 }))))!;
    expect(map.holes).toEqual([]);
  });

  it('hatches the stretch a missing frame leaves, and only there', () => {
    const map = coverageMap(reportOf(Array.from({ length: 11 }, (_, k) => ({ yawDeg: wrap(30 * k), pitchDeg: 0, rollDeg: 0 }))))!;
    expect(map.holes.length).toBeGreaterThan(0);
    // Frames reach 27.2 degrees either side of their centre at the horizon: 300 + 27.2 to 360 - 27.2.
    for (const h of map.holes) {
      expect(h.yawFromDeg).toBeGreaterThanOrEqual(-34);
      expect(h.yawToDeg).toBeLessThanOrEqual(-26);
    }
    expect(holeShare(map)).toBeGreaterThan(0.01);
    const svg = coverageMapSvg(reportOf(Array.from({ length: 11 }, (_, k) => ({ yawDeg: wrap(30 * k), pitchDeg: 0, rollDeg: 0 }))))!;
    expect(svg.startsWith('<svg xmlns="http://www.w3.org/2000/svg"')).toBe(true);
    expect(svg.match(/class="hole"/g)!.length).toBe(map.holes.length);
    expect(svg.match(/class="footprint"/g)!.length).toBe(3 * 11);
    expect(svg).toContain('not covered');
  });

  it('finds the band two rows too far apart leave between them', () => {
    // Frames 37.8 degrees tall at pitch 0 and 45: nothing sees pitch 18.9 to 26.1.
    const rows = [0, 45].flatMap((pitch) => Array.from({ length: 12 }, (_, k) => ({ yawDeg: wrap(30 * k), pitchDeg: pitch, rollDeg: 0 })));
    // (The upper row's frames dip lower at their sides, where they are tilted most.)
    const map = coverageMap(reportOf(rows))!;
    const between = map.holes.filter((h) => h.pitchToDeg <= 60);
    expect(between.length).toBeGreaterThan(0);
    expect(between.every((h) => h.pitchFromDeg >= 18 && h.pitchToDeg <= 26)).toBe(true);
    // Whole rows of cells: the band runs all the way round.
    const row20 = map.holes.filter((h) => h.pitchFromDeg === 20);
    expect(row20.reduce((s, h) => s + h.yawToDeg - h.yawFromDeg, 0)).toBe(360);
  });

  it('counts a missing zenith in a set that reaches up to it', () => {
    // Rows at 0, 30 and 60 degrees reach 78.9 degrees: the cap above is a hole.
    const rows = [0, 30, 60].flatMap((pitch) => Array.from({ length: 12 }, (_, k) => ({ yawDeg: wrap(30 * k), pitchDeg: pitch, rollDeg: 0 })));
    const map = coverageMap(reportOf(rows))!;
    expect(map.band.toDeg).toBe(90);
    expect(map.holes.some((h) => h.pitchFromDeg >= 85)).toBe(true);
    expect(map.holes.every((h) => h.pitchFromDeg >= 75)).toBe(true);
  });

  it('says where to aim for a frame missing from the upper of two rows', () => {
    // Rows of 8 at pitch 0 and 30, 45 degrees apart; the upper frame at yaw 90 is missing.
    const rows = [0, 30].flatMap((pitch) => Array.from({ length: 8 }, (_, k) => ({ yawDeg: wrap(45 * k), pitchDeg: pitch, rollDeg: 0 })));
    const report = reportOf(rows.filter((p) => !(p.pitchDeg === 30 && p.yawDeg === 90)));
    const holes = coverageHoles(report);
    expect(holes).toHaveLength(1);
    const h = holes[0];
    expect(h.verdict).toBe('reshoot');
    expect(h.pole).toBeNull();
    expect(Math.abs(h.yawDeg - 90)).toBeLessThan(5);
    expect(h.pitchDeg).toBeGreaterThan(20);
    expect(h.pitchDeg).toBeLessThan(45);
    // The upper row's neighbours of the gap are stations 10 and 11 (counting from 1).
    expect(h.advice).toMatch(/between stations 10 and 11/);
    expect(report.holes).toEqual(holes);
    expect(report.verdict).toBe('reshoot');
  });

  it('names the band between rows too far apart, notes the zenith they do not reach, and leaves a single sweep alone', () => {
    const apart = [0, 45].flatMap((pitch) => Array.from({ length: 12 }, (_, k) => ({ yawDeg: wrap(30 * k), pitchDeg: pitch, rollDeg: 0 })));
    const report = reportOf(apart);
    expect(report.holes!.some((h) => h.widthDeg === 360 && /all the way round/.test(h.advice))).toBe(true);
    // No frame is aimed above 45 degrees: the open sky is a note, not a hole.
    expect(report.holes!.some((h) => h.pole !== null)).toBe(false);
    expect(report.coverageNotes!.map((n) => n.pole)).toEqual(['zenith', 'nadir']);
    const sweep = Array.from({ length: 11 }, (_, k) => ({ yawDeg: wrap(30 * k), pitchDeg: 0, rollDeg: 0 }));
    expect(coverageHoles(reportOf(sweep))).toEqual([]);
    expect(reportOf(sweep).coverageNotes).toEqual([]);
  });
});

// Two rows at -20 and +20 degrees of 8 frames 45 degrees apart, through a 24 mm lens on a full
// frame sensor (3000 x 2000, landscape): 73.7 x 53.1 degrees a frame, so the rows overlap by
// about 13 degrees at yaw 0 and each frame its neighbour by about 29 degrees.
const wide = (24 / 36) * W;
const twoRows = (): Placed[] => [-20, 20].flatMap((pitch) => Array.from({ length: 8 }, (_, k) => ({ yawDeg: wrap(45 * k), pitchDeg: pitch, rollDeg: 0 })));

/** Neighbour pairs between stations next to each other in a row, in shooting order (the last to the first as closure). */
function rowPairs(poses: Placed[], failed: (a: Placed, b: Placed) => boolean): Analysis['pairs'] {
  const pairs: Analysis['pairs'][number][] = [];
  const rows = [...new Set(poses.map((p) => p.pitchDeg))];
  for (const pitch of rows) {
    const ks = poses.flatMap((p, k) => (p.pitchDeg === pitch ? [k] : []));
    ks.forEach((k, i) => {
      const j = ks[(i + 1) % ks.length];
      const bad = failed(poses[k], poses[j]);
      pairs.push({
        a: `F${k}.JPG`, b: `F${j}.JPG`, kind: i === ks.length - 1 ? 'closure' : 'neighbour',
        matches: bad ? 12 : 400, inliers: bad ? 0 : 220, matchesInOverlap: bad ? 0 : 300,
        overlap: bad ? null : 0.35, homography: bad ? null : [1, 0, 0, 0, 1, 0, 0, 0, 1], evDiff: bad ? null : 0, rmsError: bad ? null : 0.4, shiftPx: null,
      });
    });
  }
  return pairs;
}

/** Yaw where an edge column (x) of a frame at `pose` crosses `pitchDeg`, by the demo generator's pinhole camera (src/core/demo/camera.ts), an independent model. */
function edgeYawAt(pose: Placed, x: number, pitchDeg: number): number {
  const camera = cameraModel(W, H, 24);
  let best = { d: Infinity, yaw: NaN };
  for (let y = -0.5; y <= H - 0.5; y += 0.5) {
    const [yaw, elevation] = directionAngles(...pixelDirection(camera, pose, x, y));
    const d = Math.abs((elevation * 180) / Math.PI - pitchDeg);
    if (d < best.d) best = { d, yaw: (yaw * 180) / Math.PI };
  }
  return best.yaw;
}

describe('holes in every row, and the poles only when asked or approached', () => {
  it('finds nothing to flag in a complete two-row set at +-20 degrees, and notes the open poles', () => {
    const poses = twoRows();
    const report = judge(analysisOf(poses, { focalPx: wide, pairs: rowPairs(poses, () => false) }), defaultBudget);
    expect(report.holes).toEqual([]);
    expect(report.verdict).toBe('ok');
    expect(report.pairs.every((p) => p.reasons.length === 0)).toBe(true);
    const notes = report.coverageNotes!;
    expect(notes.map((n) => n.pole)).toEqual(['zenith', 'nadir']);
    // The open cap starts at the upper row's top edge: between its corners' pitch and its middle's
    // (26.6 degrees above the row: half of 53.1), by the pinhole camera model.
    const camera = cameraModel(W, H, 24);
    const top = (x: number): number => (directionAngles(...pixelDirection(camera, poses[8], x, -0.5))[1] * 180) / Math.PI;
    expect(notes[0].pitchDeg).toBeGreaterThan(top(-0.5) - 1);
    expect(notes[0].pitchDeg).toBeLessThan(top((W - 1) / 2) + 1);
    expect(notes[1].pitchDeg).toBeCloseTo(-notes[0].pitchDeg, 0);
    expect(notes[0].text).toMatch(/full sphere/);
  });

  it('locates a frame missing from the upper row, where the pair either side failed, as one hole', () => {
    const all = twoRows();
    const missing = all.find((p) => p.pitchDeg === 20 && p.yawDeg === 135)!;
    const poses = all.filter((p) => p !== missing);
    const across = (a: Placed, b: Placed): boolean => a.pitchDeg === 20 && a.yawDeg === 90 && Math.abs(b.yawDeg) === 180;
    const report = judge(analysisOf(poses, { focalPx: wide, pairs: rowPairs(poses, across) }), defaultBudget);
    expect(report.holes).toHaveLength(1);
    const h = report.holes![0];
    expect(Math.abs(wrap(h.yawDeg - missing.yawDeg))).toBeLessThan(2);
    expect(Math.abs(h.pitchDeg - missing.pitchDeg)).toBeLessThan(2);
    expect(h.verdict).toBe('reshoot');
    expect(h.pole).toBeNull();
    // The gap along the row's pitch: from the right edge of the frame at yaw 90 to the left edge of the one at 180.
    const gap = edgeYawAt({ yawDeg: 180, pitchDeg: 20, rollDeg: 0 }, -0.5, 20) + 360 - edgeYawAt({ yawDeg: 90, pitchDeg: 20, rollDeg: 0 }, W - 0.5, 20);
    expect(Math.abs(h.widthDeg - (wrap(gap) + 360) % 360)).toBeLessThan(1.5);
    // Stations 11 and 12 (counting from 1; the frames at yaw 90 and 180) either side of it; where to aim, in words.
    expect(h.between).toEqual([10, 11]);
    expect(h.advice).toMatch(/between stations 11 and 12/);
    expect(h.advice).toMatch(/add a frame aimed at yaw 135°, pitch \+20°/);
    // One cause, one flag: the failed pair carries the hole, not a vaguer no-match.
    const failed = report.pairs.filter((p) => p.homography === null);
    expect(failed).toHaveLength(1);
    expect(failed[0].reasons).toEqual(['coverage-hole']);
    expect(failed[0].advice).toEqual([h.advice]);
    expect(report.verdict).toBe('reshoot');
    expect(report.counts.reshoot).toBe(1);
    // The new fields (between, coverageNotes, budget.fullSphere) as the published schema says (JSON Schema 2020-12 via ajv).
    const validate = new Ajv2020.default({ allErrors: true, strict: false }).compile(JSON.parse(readFileSync(join(projectRoot, 'schema/report.schema.json'), 'utf8')));
    const written = JSON.parse(JSON.stringify(report));
    expect(written.coverageNotes).toHaveLength(2);
    expect(validate(written), JSON.stringify(validate.errors)).toBe(true);
  });

  it('reshoots a gap too narrow to trust on the geometry alone when the frames either side failed to match', () => {
    // The upper row's frame at 90 and the next one set 1 degree further apart than they reach
    // along pitch 20 (half a frame's yaw there from the pinhole camera model of src/core/demo/camera.ts).
    const half = edgeYawAt({ yawDeg: 0, pitchDeg: 20, rollDeg: 0 }, W - 0.5, 20);
    const next = 90 + 2 * half + 1;
    const upper = [0, 45, 90, ...Array.from({ length: 5 }, (_, k) => next + ((360 - next) / 5) * k)].map((y) => ({ yawDeg: wrap(y), pitchDeg: 20, rollDeg: 0 }));
    const poses = [...twoRows().slice(0, 8), ...upper];
    const across = (a: Placed): boolean => a.pitchDeg === 20 && a.yawDeg === 90;
    const geometryOnly = judge(analysisOf(poses, { focalPx: wide }), defaultBudget);
    expect(geometryOnly.holes).toHaveLength(1);
    expect(geometryOnly.holes![0].widthDeg).toBeLessThan(2);
    expect(geometryOnly.holes![0].verdict).toBe('weak');
    const failed = judge(analysisOf(poses, { focalPx: wide, pairs: rowPairs(poses, across) }), defaultBudget);
    expect(failed.holes![0].verdict).toBe('reshoot');
    const pair = failed.pairs.find((p) => p.homography === null)!;
    expect([pair.verdict, pair.reasons]).toEqual(['reshoot', ['coverage-hole']]);
  });

  it('flags the zenith of a set reaching up to frames at pitch 65, and only notes its nadir', () => {
    // 35 mm lens: rows at 0 and 30 of 12 frames, and 6 frames at 65 degrees, whose tops reach 84.
    const poses = [
      ...[0, 30].flatMap((pitch) => Array.from({ length: 12 }, (_, k) => ({ yawDeg: wrap(30 * k), pitchDeg: pitch, rollDeg: 0 }))),
      ...Array.from({ length: 6 }, (_, k) => ({ yawDeg: wrap(60 * k), pitchDeg: 65, rollDeg: 0 })),
    ];
    const report = reportOf(poses);
    const zenith = report.holes!.filter((h) => h.pole === 'zenith');
    expect(zenith).toHaveLength(1);
    expect(zenith[0].verdict).toBe('reshoot');
    expect(zenith[0].advice).toMatch(/straight up/);
    expect(report.holes!.some((h) => h.pole === 'nadir')).toBe(false);
    expect(report.coverageNotes!.map((n) => n.pole)).toEqual(['nadir']);
  });

  it('flags both poles of the +-20 set once a full sphere is declared, without analysing again', () => {
    const poses = twoRows();
    const plain = judge(analysisOf(poses, { focalPx: wide, pairs: rowPairs(poses, () => false) }), defaultBudget);
    const sphere = rejudge(plain, resolveBudget({ fullSphere: true }));
    expect(sphere.budget.fullSphere).toBe(true);
    expect(sphere.holes!.map((h) => h.pole).sort()).toEqual(['nadir', 'zenith']);
    expect(sphere.holes!.every((h) => h.verdict === 'reshoot')).toBe(true);
    expect(sphere.coverageNotes).toEqual([]);
    expect(sphere.verdict).toBe('reshoot');
    // And back: the notes again, verdict ok.
    const back = rejudge(sphere, resolveBudget({ fullSphere: false }));
    expect(back.holes).toEqual([]);
    expect(back.coverageNotes!.map((n) => n.pole)).toEqual(['zenith', 'nadir']);
    expect(back.verdict).toBe('ok');
  });

  it('leaves a set of two rows that turns only part of the way alone', () => {
    // Rows of 4 frames 45 degrees apart, the upper one started 3 degrees later by hand.
    const poses = [
      ...Array.from({ length: 4 }, (_, k) => ({ yawDeg: 45 * k, pitchDeg: -20, rollDeg: 0 })),
      ...Array.from({ length: 4 }, (_, k) => ({ yawDeg: 3 + 45 * k, pitchDeg: 20, rollDeg: 0 })),
    ];
    const report = judge(analysisOf(poses, { focalPx: wide }), defaultBudget);
    expect(report.holes).toEqual([]);
    expect(report.verdict).toBe('ok');
  });

  it('finds nothing in complete two-row sets shot by hand, whose frames scatter in yaw, pitch and roll', () => {
    // Hand-held rows scatter by a few degrees (common practice): yaw +-4, pitch +-3, roll +-2, seeded.
    for (let seed = 1; seed <= 8; seed++) {
      const random = createRandom(seed);
      const u = (): number => 2 * random.next() - 1;
      const poses = twoRows().map((p) => ({ yawDeg: wrap(p.yawDeg + 4 * u()), pitchDeg: p.pitchDeg + 3 * u(), rollDeg: 2 * u() }));
      const analysis = analysisOf(poses, { focalPx: wide });
      // Rows as sequence-geometry.ts groups them: by pitch, each row's mean.
      const rows = [poses.slice(0, 8), poses.slice(8)].map((r, k) => ({ pitchDeg: r.reduce((t, p) => t + p.pitchDeg, 0) / 8, stations: r.map((_, i) => 8 * k + i) }));
      const report = judge({ ...analysis, geometry: { ...analysis.geometry!, rows } }, defaultBudget);
      expect(report.holes, `seed ${seed}`).toEqual([]);
      expect(report.verdict).toBe('ok');
    }
  });

  it('says a station that could not be placed may be the frame for a gap, and only weakly flags it', () => {
    const all = twoRows();
    const poses = all.filter((p) => !(p.pitchDeg === 20 && p.yawDeg === 135));
    const analysis = analysisOf(all, { focalPx: wide });
    const g = analysis.geometry!;
    // Station 11 (from 0: the upper frame at yaw 135) was shot but matched nothing, so it has no pose.
    const placed = { ...g, poses: g.poses.filter((p) => p.station !== 11), unplaced: [11], rows: g.rows.map((r) => ({ ...r, stations: r.stations.filter((s) => s !== 11) })) };
    const report = judge({ ...analysis, geometry: placed }, defaultBudget);
    expect(poses).toHaveLength(15);
    expect(report.holes).toHaveLength(1);
    expect(report.holes![0].verdict).toBe('weak');
    expect(report.holes![0].between).toEqual([10, 12]);
    expect(report.holes![0].advice).toMatch(/station 12, shot next to station 11, could not be placed/);
    // The chain broken at the gap: the four upper stations after it (from 0: 11 to 14, the yaw 135
    // frame being gone) not placed either. Their stretch is not called missing frames.
    const rest = analysisOf(poses, { focalPx: wide });
    const broken = { ...rest.geometry!, poses: rest.geometry!.poses.filter((p) => p.station < 11), unplaced: [11, 12, 13, 14], rows: rest.geometry!.rows.map((r) => ({ ...r, stations: r.stations.filter((s) => s < 11) })) };
    const chain = judge({ ...rest, geometry: broken }, defaultBudget);
    expect(chain.holes!.length).toBeGreaterThan(0);
    expect(chain.holes!.every((h) => h.verdict === 'weak' && /could not be placed/.test(h.advice))).toBe(true);
  });

  it('calls an upper row a frame short of the lower one weak, with where to aim, in a set that turns only part of the way', () => {
    const poses = [
      ...Array.from({ length: 5 }, (_, k) => ({ yawDeg: 45 * k, pitchDeg: -20, rollDeg: 0 })),
      ...Array.from({ length: 4 }, (_, k) => ({ yawDeg: 45 * k, pitchDeg: 20, rollDeg: 0 })),
    ];
    const report = judge(analysisOf(poses, { focalPx: wide }), defaultBudget);
    expect(report.holes).toHaveLength(1);
    const h = report.holes![0];
    expect(h.verdict).toBe('weak');
    expect(h.between).toBeNull();
    expect(h.pitchDeg).toBe(20);
    // The missing frame would be aimed at yaw 180: the piece runs from where the frame at 135 ends
    // (about 175) to where the lower row's frame at 180 does (about 220).
    expect(Math.abs(wrap(h.yawDeg - 180))).toBeLessThan(25);
    expect(h.advice).toMatch(/stops about \d+° short of the others .* add a frame aimed at yaw -?\d+°, pitch \+20°, or crop/);
  });

  it('takes fullSphere as a declaration in the budget, and says what it expected', () => {
    expect(defaultBudget.fullSphere).toBe(false);
    expect(resolveBudget({ fullSphere: true }).fullSphere).toBe(true);
    expect(resolveBudget({ fullSphere: 'true' }).fullSphere).toBe(true);
    expect(() => resolveBudget({ fullSphere: 'yes' })).toThrow(/Expected true or false for fullSphere but received "yes"/);
    expect(() => resolveBudget({ fullSphere: 1 })).toThrow(/Expected true or false for fullSphere/);
  });
});

describe('problems marked in place on the exported map', () => {
  // A single turn like the demo shoot's: 12 stations, one step of 51 degrees where the others are
  // about 30 (frames 54 degrees wide: 6 % overlap there, as the pair's measure says).
  const yaws = [0, 30, 60, 111, 140, 169, 198, 227, 256, 285, 314, 343].map(wrap);
  const sweepPairs = (overlapOf: (k: number) => number | null): Analysis['pairs'] =>
    yaws.map((_, k) => {
      const j = (k + 1) % yaws.length, o = overlapOf(k);
      return {
        a: `F${k}.JPG`, b: `F${j}.JPG`, kind: j === 0 ? 'closure' : 'neighbour',
        matches: o === null ? 10 : 400, inliers: o === null ? 0 : 220, matchesInOverlap: o === null ? 0 : 300,
        overlap: o, homography: o === null ? null : [1, 0, 0, 0, 1, 0, 0, 0, 1], evDiff: o === null ? null : 0, rmsError: o === null ? null : 0.4, shiftPx: null,
      };
    });
  const sweep = (overlapOf: (k: number) => number | null): Report => judge(analysisOf(yaws.map((yawDeg) => ({ yawDeg, pitchDeg: 0, rollDeg: 0 })), { pairs: sweepPairs(overlapOf) }), defaultBudget);
  const attrs = (svg: string, cls: string): Record<string, string>[] =>
    [...svg.matchAll(new RegExp(`<[a-z]+ class="${cls}"([^>]*)>`, 'g'))].map((m) => Object.fromEntries([...m[1].matchAll(/([\w-]+)="([^"]*)"/g)].map((a) => [a[1], a[2]])));

  it('draws a low-overlap link between its stations in the reshoot colour, dashed on a dark casing, with its overlap and a legend entry', () => {
    const report = sweep((k) => (k === 2 ? 0.06 : 0.45));
    expect(report.pairs.find((p) => p.a === 'F2.JPG')!.reasons).toEqual(['low-overlap']);
    const svg = coverageMapSvg(report)!;
    const marks = attrs(svg, 'link-mark');
    expect(marks).toHaveLength(1);
    const m = marks[0];
    expect(m['data-link']).toBe('F2.JPG|F3.JPG');
    expect([m['data-code'], m['data-verdict'], m.stroke]).toEqual(['low-overlap', 'reshoot', '#D55E00']);
    // Not colour alone: a dash pattern, a dark casing under it, the overlap in words, a legend entry.
    expect(m['stroke-dasharray']).toMatch(/^\d+ \d+$/);
    expect(attrs(svg, 'link-casing')).toHaveLength(1);
    expect(svg).toMatch(/class="link-words"[^>]*>6 %<\/text>/);
    expect(svg).toContain('link with too little overlap (dashed, its overlap beside it), reshoot');
    // From station 3's centre toward station 4's, 2 px a degree: yaw 60 and 111 at x = 480 and 582, less 10 px at each end.
    expect(Number(m.x1)).toBeCloseTo(490, 0);
    expect(Number(m.x2)).toBeCloseTo(572, 0);
  });

  it('marks nothing on a clean turn, and dots a link that did not match', () => {
    const clean = coverageMapSvg(sweep(() => 0.45))!;
    expect(clean).not.toMatch(/class="(link-mark|link-casing|link-words|hole-mark|aim-mark)"/);
    expect(clean).not.toContain('link with');
    expect(clean).not.toContain('hole to fill');
    const failed = sweep((k) => (k === 6 ? null : 0.45));
    expect(failed.pairs.find((p) => p.a === 'F6.JPG')!.reasons).toContain('no-match');
    const svg = coverageMapSvg(failed)!;
    const marks = attrs(svg, 'link-mark');
    expect(marks.map((x) => [x['data-link'], x['data-code']])).toEqual([['F6.JPG|F7.JPG', 'no-match']]);
    expect(marks[0]['stroke-dasharray']).not.toBe(attrs(coverageMapSvg(sweep((k) => (k === 2 ? 0.06 : 0.45)))!, 'link-mark')[0]['stroke-dasharray']);
    expect(svg).toMatch(/class="link-words"[^>]*>no match<\/text>/);
    expect(svg).toContain('link that did not match (dotted)');
  });

  it('outlines a coverage hole with a cross where to aim, and leaves a complete set of rows unmarked', () => {
    const all = twoRows();
    const missing = all.find((p) => p.pitchDeg === 20 && p.yawDeg === 135)!;
    const poses = all.filter((p) => p !== missing);
    const across = (a: Placed, b: Placed): boolean => a.pitchDeg === 20 && a.yawDeg === 90 && Math.abs(b.yawDeg) === 180;
    const report = judge(analysisOf(poses, { focalPx: wide, pairs: rowPairs(poses, across) }), defaultBudget);
    const svg = coverageMapSvg(report)!;
    const outline = attrs(svg, 'hole-mark');
    expect(outline).toHaveLength(1);
    expect([outline[0]['data-verdict'], outline[0].stroke, outline[0].fill]).toEqual(['reshoot', '#D55E00', 'none']);
    expect(outline[0]['stroke-dasharray']).toBeTruthy();
    // The cross sits where the hole's advice says to aim: yaw 135, pitch +20 (x = 630, y = 28 + 70 x 2).
    const cross = attrs(svg, 'aim-mark');
    expect(cross).toHaveLength(1);
    const [cx, cy] = /^M ([\d.]+) ([\d.]+)/.exec(cross[0].d)!.slice(1).map(Number);
    expect(cx + 7).toBeCloseTo(x135(report), 0);
    expect(cy).toBeCloseTo(28 + (90 - report.holes![0].pitchDeg) * 2, 0);
    expect(svg).toContain('hole to fill, reshoot (dashed outline; + where to aim)');
    // The failed pair is the hole (one cause, one flag): no link mark of its own.
    expect(attrs(svg, 'link-mark')).toHaveLength(0);

    const complete = coverageMapSvg(judge(analysisOf(all, { focalPx: wide, pairs: rowPairs(all, () => false) }), defaultBudget))!;
    expect(complete).not.toMatch(/class="(link-mark|hole-mark|aim-mark)"/);
  });
});

/** x on the map (2 px a degree) of the hole's yaw, which the advice gives as where to aim. */
const x135 = (report: Report): number => (report.holes![0].yawDeg + 180) * 2;
