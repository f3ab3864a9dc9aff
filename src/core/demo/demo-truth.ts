/**
 * The ground truth of a demo shoot (docs/demo-truth.md): the plan's frames, stations and planted
 * problems, and for every pair of frames that overlap the exact homography, overlap and EV
 * difference.
 */
import { rotationHomography } from './camera.js';
import type { DemoCamera, DemoPlan, PlannedFrame, PlannedProblem, PlannedStation } from './demo-plan.js';
import { demoCameraModel } from './demo-plan.js';
import { overlapRegions } from '../geometry/overlap.js';

export const demoTruthSchema = 'seamscout-demo-truth/1';
export const demoTruthFile = 'seamscout-truth.json';

export type DemoPairKind = 'neighbour' | 'closure' | 'bracket' | 'other';

/** A frame as the truth file records it: the plan's own fields, without its render-only ones. */
export type DemoTruthFrame = Pick<
  PlannedFrame,
  | 'file' | 'station' | 'bracketIndex' | 'evBias' | 'exposureOffsetEv' | 'yawDeg' | 'pitchDeg' | 'rollDeg'
  | 'focalLengthMm' | 'exposureTime' | 'fNumber' | 'iso' | 'captureTime' | 'blurPx'
>;

export interface DemoTruthPair {
  readonly a: string;
  readonly b: string;
  readonly kind: DemoPairKind;
  /** Full-resolution pixels of a to b, row-major, H[8] = 1. */
  readonly homography: number[];
  readonly overlap: number;
  /** b minus a in EV (exposure offsets, exact): positive when b is brighter. */
  readonly evDiff: number;
}

export interface DemoTruth {
  readonly schema: typeof demoTruthSchema;
  readonly seed: number;
  readonly clean: boolean;
  readonly fullTurn: boolean;
  readonly camera: DemoCamera;
  readonly frames: DemoTruthFrame[];
  readonly stations: PlannedStation[];
  readonly pairs: DemoTruthPair[];
  readonly problems: PlannedProblem[];
}

function pairKind(plan: DemoPlan, a: PlannedFrame, b: PlannedFrame): DemoPairKind {
  if (a.station === b.station) return 'bracket';
  // In a set of rows, neighbours and the closure are counted within each row.
  const n = plan.stations.length / plan.rows;
  if (Math.floor(a.station / n) !== Math.floor(b.station / n)) return 'other';
  const lo = Math.min(a.station, b.station) % n, hi = Math.max(a.station, b.station) % n;
  if (hi - lo === 1) return 'neighbour';
  if (plan.fullTurn && lo === 0 && hi === n - 1) return 'closure';
  return 'other';
}

/** The homography of one pair of planned frames, a -> b at full resolution, H[8] = 1. */
export function plannedHomography(plan: DemoPlan, a: PlannedFrame, b: PlannedFrame): Float64Array {
  // One pose (a station's bracket): exactly the identity, not a product that rounds near it.
  if (a.yawDeg === b.yawDeg && a.pitchDeg === b.pitchDeg && a.rollDeg === b.rollDeg) return Float64Array.of(1, 0, 0, 0, 1, 0, 0, 0, 1);
  const camera = demoCameraModel(plan.camera.width, plan.camera.height);
  return rotationHomography(camera, a, camera, b);
}

/** Every pair (a before b in shooting order) whose frames overlap. */
export function demoPairs(plan: DemoPlan): DemoTruthPair[] {
  const { width, height } = plan.camera;
  const pairs: DemoTruthPair[] = [];
  const f = plan.frames;
  for (let i = 0; i < f.length; i++) {
    for (let j = i + 1; j < f.length; j++) {
      const h = plannedHomography(plan, f[i], f[j]);
      const overlap = overlapRegions(h, width, height, width, height).overlap;
      if (!(overlap > 0)) continue;
      if (!(h[8] > 0)) throw new RangeError(`Expected frames less than 90 degrees apart for pair ${f[i].file}, ${f[j].file} but received H[8] = ${h[8]}`);
      pairs.push({
        a: f[i].file,
        b: f[j].file,
        kind: pairKind(plan, f[i], f[j]),
        homography: Array.from(h),
        overlap,
        evDiff: f[j].exposureOffsetEv - f[i].exposureOffsetEv,
      });
    }
  }
  return pairs;
}

/** The truth file's content for a plan. */
export function demoTruth(plan: DemoPlan): DemoTruth {
  return {
    schema: demoTruthSchema,
    seed: plan.seed,
    clean: plan.clean,
    fullTurn: plan.fullTurn,
    camera: { ...plan.camera },
    frames: plan.frames.map((f) => ({
      file: f.file, station: f.station, bracketIndex: f.bracketIndex, evBias: f.evBias, exposureOffsetEv: f.exposureOffsetEv,
      yawDeg: f.yawDeg, pitchDeg: f.pitchDeg, rollDeg: f.rollDeg, focalLengthMm: f.focalLengthMm,
      exposureTime: f.exposureTime, fNumber: f.fNumber, iso: f.iso, captureTime: f.captureTime, blurPx: f.blurPx,
    })),
    stations: plan.stations.map((s) => ({ index: s.index, frames: [...s.frames], reference: s.reference })),
    pairs: demoPairs(plan),
    problems: plan.problems.map((p) => ({ ...p, frames: [...p.frames], stations: [...p.stations] })),
  };
}
