// The demo shoot's plan and truth. Sources: neighbour overlap 30-50 % (common practice, photography
// guides); brackets by shutter at fixed aperture and ISO, EV = log2(N^2 / t) (APEX, ISO 2720
// (memory)); the rotating-camera homography (Hartley & Zisserman, Multiple View Geometry, 2nd ed.,
// sec. 8.4.2); overlap as the project defines it (min of the two area shares, src/core/geometry/overlap.ts),
// checked here independently by casting the rays of a pixel grid through the pinhole model.
import { describe, expect, it } from 'vitest';
import type { Pose } from '../../../src/core/demo/camera.js';
import { focalLengthPx, intrinsics, pixelDirection, worldToCamera } from '../../../src/core/demo/camera.js';
import type { DemoPlan, PlannedFrame } from '../../../src/core/demo/demo-plan.js';
import { demoCameraModel, planDemoShoot } from '../../../src/core/demo/demo-plan.js';
import { demoPairs, demoTruth, plannedHomography } from '../../../src/core/demo/demo-truth.js';
import { project } from '../../../src/core/geometry/homography.js';
import { overlapRegions } from '../../../src/core/geometry/overlap.js';

const apexEv = (f: PlannedFrame): number => Math.log2((f.fNumber * f.fNumber) / f.exposureTime);
const refOf = (plan: DemoPlan, station: number): PlannedFrame => plan.frames.find((f) => f.file === plan.stations[station].reference)!;

/** Share of frame a's pixel grid whose rays land inside frame b (pinhole projection x = K R d). */
function rayShare(plan: DemoPlan, a: Pose, b: Pose, step: number): number {
  const cam = demoCameraModel(plan.camera.width, plan.camera.height);
  const k = intrinsics(cam), r = worldToCamera(b);
  let inside = 0, n = 0;
  for (let y = step / 2; y < cam.height; y += step) {
    for (let x = step / 2; x < cam.width; x += step) {
      const d = pixelDirection(cam, a, x, y);
      const c = [0, 1, 2].map((i) => r[3 * i] * d[0] + r[3 * i + 1] * d[1] + r[3 * i + 2] * d[2]);
      const u = (k[0] * c[0]) / c[2] + k[2], v = (k[4] * c[1]) / c[2] + k[5];
      if (c[2] > 0 && u >= -0.5 && u <= cam.width - 0.5 && v >= -0.5 && v <= cam.height - 0.5) inside++;
      n++;
    }
  }
  return inside / n;
}

/** Yaw steps between consecutive stations' reference frames, unwrapped, in degrees. */
function yawSteps(plan: DemoPlan): number[] {
  const steps: number[] = [];
  for (let s = 1; s < plan.stations.length; s++) steps.push((((refOf(plan, s).yawDeg - refOf(plan, s - 1).yawDeg) % 360) + 360) % 360);
  return steps;
}

describe('demo plan, default (12 stations, 3000 x 2000, seed 1)', () => {
  const plan = planDemoShoot();
  const truth = demoTruth(plan);
  const codes = plan.problems.map((p) => p.code);

  it('numbers the frames in shooting order, brackets 0.4 s apart and stations about 4 s apart', () => {
    expect(plan.stations).toHaveLength(12);
    expect(plan.frames).toHaveLength(35);
    plan.frames.forEach((f, i) => expect(f.file).toBe(`SSC_${String(i + 1).padStart(4, '0')}.JPG`));
    const ms = plan.frames.map((f) => Date.parse(`${f.captureTime}Z`));
    for (let i = 1; i < ms.length; i++) {
      const gap = ms[i] - ms[i - 1];
      if (plan.frames[i].station === plan.frames[i - 1].station) expect(gap).toBe(400 * (plan.frames[i].bracketIndex - plan.frames[i - 1].bracketIndex));
      else expect(gap).toBeGreaterThan(2500);
    }
    for (let s = 1; s < 12; s++) {
      const gap = Date.parse(`${refOf(plan, s).captureTime}Z`) - Date.parse(`${refOf(plan, s - 1).captureTime}Z`);
      expect(gap).toBeGreaterThanOrEqual(3400);
      expect(gap).toBeLessThanOrEqual(4600);
    }
    expect(plan.frames[0].captureTime).toMatch(/^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d\.\d{3}$/);
  });

  it('brackets -2 / 0 / +2 EV by shutter at f/8 and ISO 100 around 1/250 s, on a 35 mm lens', () => {
    for (const st of plan.stations) {
      const frames = plan.frames.filter((f) => f.station === st.index);
      const ref = refOf(plan, st.index);
      expect(ref.evBias).toBe(0);
      for (const f of frames) {
        expect(f.fNumber).toBe(8);
        expect(f.iso).toBe(100);
        expect(f.focalLengthMm).toBe(35);
        // APEX: the bracket's exposure values differ from the reference by exactly its bias.
        expect(apexEv(ref) - apexEv(f)).toBeCloseTo(f.evBias, 10);
        expect(f.exposureTime).toBeCloseTo((1 / 250) * Math.pow(2, f.exposureOffsetEv), 12);
      }
    }
    expect(plan.camera).toMatchObject({ make: 'Seamscout', model: 'Virtual Survey Camera', sensorWidthMm: 36, width: 3000, height: 2000, focalLengthMm: 35 });
    expect(plan.camera.sensorHeightMm).toBeCloseTo(24, 10);
  });

  it('closes a full turn with neighbours overlapping about 45 % and keeps pitch and roll within a degree', () => {
    expect(plan.fullTurn).toBe(true);
    const steps = yawSteps(plan);
    const closure = (((refOf(plan, 0).yawDeg - refOf(plan, 11).yawDeg) % 360) + 360) % 360;
    expect(steps.reduce((s, v) => s + v, 0) + closure).toBeCloseTo(360, 6);
    const neighbours = truth.pairs.filter((p) => (p.kind === 'neighbour' || p.kind === 'closure') && plan.stations.some((s) => s.reference === p.a) && plan.stations.some((s) => s.reference === p.b));
    expect(neighbours).toHaveLength(12);
    const gap = plan.problems.find((p) => p.code === 'low-overlap')!;
    for (const p of neighbours) {
      if (p.a === gap.frames[0] && p.b === gap.frames[1]) expect(p.overlap).toBeLessThan(0.1);
      else {
        expect(p.overlap).toBeGreaterThan(0.4);
        expect(p.overlap).toBeLessThan(0.5);
      }
    }
    expect(truth.pairs.some((p) => p.kind === 'closure')).toBe(true);
    for (const f of plan.frames) {
      expect(Math.abs(f.pitchDeg)).toBeLessThan(1.2);
      expect(Math.abs(f.rollDeg)).toBeLessThan(1);
    }
  });

  it('plants the five problems on different stations, none on the first or last', () => {
    expect([...codes].sort()).toEqual(['blurred', 'bracket-drift', 'exposure-jump', 'incomplete-bracket', 'low-overlap']);
    const stations = plan.problems.flatMap((p) => p.stations);
    expect(new Set(stations).size).toBe(stations.length);
    expect(stations).not.toContain(0);
    expect(stations).not.toContain(11);
    for (const p of plan.problems) expect(p.detail.length).toBeGreaterThan(20);
  });

  it('low-overlap: one neighbour pair of reference frames under 10 %, the other steps shrunk to close the turn', () => {
    const p = plan.problems.find((q) => q.code === 'low-overlap')!;
    expect(p.stations[1]).toBe(p.stations[0] + 1);
    expect(p.frames).toEqual([plan.stations[p.stations[0]].reference, plan.stations[p.stations[1]].reference]);
    const pair = truth.pairs.find((q) => q.a === p.frames[0] && q.b === p.frames[1])!;
    expect(pair.kind).toBe('neighbour');
    expect(pair.overlap).toBeGreaterThan(0);
    expect(pair.overlap).toBeLessThan(0.1);
    const steps = yawSteps(plan);
    const big = steps[p.stations[0]];
    for (const [i, s] of steps.entries()) if (i !== p.stations[0]) expect(s).toBeLessThan(big - 15);
    expect(Math.max(...steps.filter((_, i) => i !== p.stations[0]))).toBeLessThan(360 / 12);
  });

  it('exposure-jump: one station 1.3 EV brighter in every frame, in its exposure times and the truth EV differences', () => {
    const p = plan.problems.find((q) => q.code === 'exposure-jump')!;
    const s = p.stations[0];
    const frames = plan.frames.filter((f) => f.station === s);
    expect(p.frames).toEqual(frames.map((f) => f.file));
    for (const f of frames) {
      expect(f.exposureOffsetEv).toBeCloseTo(f.evBias + 1.3, 12);
      // APEX: 1.3 EV more exposure at the same aperture is 2^1.3 times the shutter time.
      expect(f.exposureTime / ((1 / 250) * Math.pow(2, f.evBias))).toBeCloseTo(Math.pow(2, 1.3), 10);
    }
    const before = truth.pairs.find((q) => q.a === plan.stations[s - 1].reference && q.b === plan.stations[s].reference)!;
    const after = truth.pairs.find((q) => q.a === plan.stations[s].reference && q.b === plan.stations[s + 1].reference)!;
    expect(before.evDiff).toBeCloseTo(1.3, 12);
    expect(after.evDiff).toBeCloseTo(-1.3, 12);
  });

  it('blurred: one reference frame with 12 px of horizontal blur at 3000 px, no other frame blurred', () => {
    const p = plan.problems.find((q) => q.code === 'blurred')!;
    const blurred = plan.frames.filter((f) => f.blurPx > 0);
    expect(blurred.map((f) => f.file)).toEqual(p.frames);
    expect(blurred[0].blurPx).toBe(12);
    expect(blurred[0].evBias).toBe(0);
    expect(planDemoShoot({ width: 6000, height: 4000 }).frames.find((f) => f.blurPx > 0)!.blurPx).toBe(24);
  });

  it('incomplete-bracket: one station without its +2 EV frame', () => {
    const p = plan.problems.find((q) => q.code === 'incomplete-bracket')!;
    const frames = plan.frames.filter((f) => f.station === p.stations[0]);
    expect(frames.map((f) => f.evBias)).toEqual([-2, 0]);
    expect(plan.stations.filter((s) => s.frames.length !== 3).map((s) => s.index)).toEqual(p.stations);
  });

  it('bracket-drift: one station whose -2 EV frame is turned 0.3 deg in yaw and 0.2 in pitch against its reference', () => {
    const p = plan.problems.find((q) => q.code === 'bracket-drift')!;
    const s = p.stations[0];
    const drift = plan.frames.find((f) => f.station === s && f.evBias === -2)!;
    const ref = refOf(plan, s);
    expect(drift.yawDeg - ref.yawDeg).toBeCloseTo(0.3, 5);
    expect(drift.pitchDeg - ref.pitchDeg).toBeCloseTo(0.2, 5);
    expect(drift.rollDeg).toBe(ref.rollDeg);
    const pair = truth.pairs.find((q) => q.a === drift.file && q.b === ref.file)!;
    expect(pair.kind).toBe('bracket');
    // 0.3 degrees at f = 2917 px is about 15 px: the truth homography moves the centre by that much.
    const f = focalLengthPx(demoCameraModel(3000, 2000));
    const [x, y] = project(pair.homography, 1499.5, 999.5);
    expect(Math.hypot(x - 1499.5, y - 999.5)).toBeCloseTo(f * Math.hypot(Math.tan(0.3 * (Math.PI / 180)), Math.tan(0.2 * (Math.PI / 180))), -0.5);
    // Every other bracket pair shares one pose: the identity, overlap 1.
    for (const q of truth.pairs.filter((r) => r.kind === 'bracket' && r !== pair && !(r.a === drift.file || r.b === drift.file))) {
      expect(q.homography).toEqual([1, 0, 0, 0, 1, 0, 0, 0, 1]);
      expect(q.overlap).toBeCloseTo(1, 9);
    }
  });
});

describe('demo truth pairs', () => {
  const plan = planDemoShoot({ width: 600, height: 400 });
  const truth = demoTruth(plan);

  it('lists exactly the pairs that overlap, each with the project overlap of its homography', () => {
    let overlapping = 0;
    for (let i = 0; i < plan.frames.length; i++) {
      for (let j = i + 1; j < plan.frames.length; j++) {
        const h = plannedHomography(plan, plan.frames[i], plan.frames[j]);
        if (overlapRegions(h, 600, 400, 600, 400).overlap > 0) overlapping++;
      }
    }
    expect(truth.pairs).toHaveLength(overlapping);
    expect(demoPairs(plan)).toEqual(truth.pairs);
    for (const p of truth.pairs) {
      expect(p.homography[8]).toBe(1);
      expect(p.overlap).toBeGreaterThan(0);
      expect(p.overlap).toBeLessThanOrEqual(1);
    }
  });

  it('agrees with overlap measured by casting rays through both pinhole cameras', () => {
    const byFile = new Map(plan.frames.map((f) => [f.file, f]));
    for (const p of truth.pairs.filter((q) => q.kind !== 'bracket')) {
      const a = byFile.get(p.a)!, b = byFile.get(p.b)!;
      const share = Math.min(rayShare(plan, a, b, 8), rayShare(plan, b, a, 8));
      expect(Math.abs(share - p.overlap)).toBeLessThan(0.015);
    }
  });

  it('labels pairs: brackets within a station, neighbours between consecutive stations, closure from last to first', () => {
    const byFile = new Map(plan.frames.map((f) => [f.file, f]));
    for (const p of truth.pairs) {
      const sa = byFile.get(p.a)!.station, sb = byFile.get(p.b)!.station;
      const expected = sa === sb ? 'bracket' : Math.abs(sa - sb) === 1 ? 'neighbour' : sa === 0 && sb === 11 ? 'closure' : 'other';
      expect(p.kind).toBe(expected);
      expect(p.evDiff).toBeCloseTo(byFile.get(p.b)!.exposureOffsetEv - byFile.get(p.a)!.exposureOffsetEv, 12);
    }
  });
});

describe('demo plan options', () => {
  it('plans a clean shoot without problems: full brackets, no blur, equal steps of 30 degrees', () => {
    const plan = planDemoShoot({ clean: true });
    expect(plan.problems).toEqual([]);
    expect(plan.frames).toHaveLength(36);
    expect(plan.frames.every((f) => f.blurPx === 0 && f.exposureOffsetEv === f.evBias)).toBe(true);
    // 30 degrees give the default camera (54.4 degrees wide) 44 % overlap.
    for (const s of yawSteps(plan)) expect(Math.abs(s - 30)).toBeLessThan(0.7);
    const t = demoTruth(plan);
    for (const p of t.pairs.filter((q) => q.kind === 'neighbour' || q.kind === 'closure')) expect(p.overlap).toBeGreaterThan(0.4);
  });

  it('closes the turn only when there are stations enough, and depends on the seed', () => {
    const few = planDemoShoot({ stations: 8, width: 600, height: 400 });
    expect(few.fullTurn).toBe(false);
    expect(demoTruth(few).pairs.some((p) => p.kind === 'closure')).toBe(false);
    const many = planDemoShoot({ stations: 20, width: 600, height: 400 });
    expect(many.fullTurn).toBe(true);
    expect(many.frames).toHaveLength(59);
    expect(planDemoShoot({ seed: 2 }).frames[0].yawDeg).not.toBe(planDemoShoot({ seed: 1 }).frames[0].yawDeg);
    expect(planDemoShoot({ seed: 5 })).toEqual(planDemoShoot({ seed: 5 }));
  });

  it('rejects options it cannot plan, saying what it expected', () => {
    expect(() => planDemoShoot({ stations: 7 })).toThrow('Expected a whole number from 8 to 200 for stations (with planted problems) but received 7');
    expect(() => planDemoShoot({ stations: 1, clean: true })).toThrow('Expected a whole number from 2 to 200 for stations but received 1');
    expect(() => planDemoShoot({ width: 10 })).toThrow('Expected a whole number from 64 to 12000 for width but received 10');
    expect(() => planDemoShoot({ seed: -1 })).toThrow('for seed but received -1');
  });
});
