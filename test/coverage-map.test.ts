// The coverage map: footprints checked against the demo generator's pinhole camera (an independent
// implementation of the same model, src/core/camera.ts: pixelDirection), holes where a turn lacks a
// frame and nowhere else, and the SVG's structure.
import { describe, expect, it } from 'vitest';
import { cameraModel, directionAngles, pixelDirection } from '../src/core/camera.js';
import { coverageHoles, coverageMap, coverageMapSvg, holeShare } from '../src/core/coverage-map.js';
import type { Report } from '../src/core/report.js';
import { defaultBudget } from '../src/core/report.js';
import { judge } from '../src/core/verdicts.js';

const W = 3000, H = 2000, f = (35 / 36) * W;

/** A report with one frame per station, placed at the given poses. */
function reportOf(poses: { yawDeg: number; pitchDeg: number; rollDeg: number }[]): Report {
  const names = poses.map((_, k) => `F${k}.JPG`);
  const settings = { exposureTime: null, fNumber: null, iso: null, evBias: null, focalLength: 35, focalLength35: 35, whiteBalance: null, make: null, model: null };
  return judge({
    folder: '/card',
    frames: names.map((file) => ({ file, width: W, height: H, captureTime: null, settings, sharpness: 1, keypoints: 1000 })),
    stations: names.map((file, index) => ({ index, frames: [file], reference: file, evOffsets: [0], groupedBy: 'single' as const })),
    pairs: [],
    skipped: [],
    sweepDeg: null,
    geometry: {
      focalPx: f, focalFrom: 'exif', poses: poses.map((p, station) => ({ station, ...p })), unplaced: [],
      horizontalDeg: 0, verticalDeg: 0, gaps: [], closure: null, rmsPx: 0,
      rows: [...new Set(poses.map((p) => p.pitchDeg))].sort((a, b) => a - b).map((pitchDeg) => ({ pitchDeg, stations: poses.flatMap((p, k) => (p.pitchDeg === pitchDeg ? [k] : [])) })),
    },
  }, defaultBudget);
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

  it('names the band between rows too far apart, and the missing zenith, and leaves a single sweep alone', () => {
    const apart = [0, 45].flatMap((pitch) => Array.from({ length: 12 }, (_, k) => ({ yawDeg: wrap(30 * k), pitchDeg: pitch, rollDeg: 0 })));
    const holes = coverageHoles(reportOf(apart));
    expect(holes.some((h) => h.widthDeg === 360 && /all the way round/.test(h.advice))).toBe(true);
    expect(holes.some((h) => h.pole === 'zenith' && /straight up/.test(h.advice))).toBe(true);
    const sweep = Array.from({ length: 11 }, (_, k) => ({ yawDeg: wrap(30 * k), pitchDeg: 0, rollDeg: 0 }));
    expect(coverageHoles(reportOf(sweep))).toEqual([]);
  });
});
