/**
 * The plan of a demo shoot: every frame's file name, station, bracket, pose, exposure and capture
 * time, and the problems planted in it. Pure and deterministic from its options.
 */
import type { CameraModel, Pose } from './camera.js';
import { cameraModel, rotationHomography, worldToCamera } from './camera.js';
import type { NearPost } from './render.js';
import type { RadialDistortion } from '../geometry/lens.js';
import { overlapRegions } from '../geometry/overlap.js';
import { createRandom } from '../numeric/random.js';

export type DemoProblemCode = 'low-overlap' | 'exposure-jump' | 'blurred' | 'incomplete-bracket' | 'bracket-drift' | 'movement';

export interface DemoPlanOptions {
  /** Camera positions in the sweep. */
  readonly stations: number;
  readonly width: number;
  readonly height: number;
  readonly seed: number;
  /** No planted problems. */
  readonly clean: boolean;
  /**
   * A figure standing in the overlap of the middle station and the next, in the middle station's
   * frames only (it walked off before the next was shot): a planted movement problem.
   */
  readonly visitor?: boolean;
  /**
   * Pitch of each row in degrees, lowest first, for a set shot in rows: `stations` stations in each
   * row, a full turn per row, shot row after row (clean sets only). Default: one row at the horizon.
   */
  readonly rows?: readonly number[];
  /** Ten striped posts 3 m from the camera: near things among the far scene. */
  readonly posts?: boolean;
  /**
   * How far in front of the pivot the lens's entrance pupil sits, metres (0: the camera turns about
   * its centre). Off centre, the posts shift against the distant scene between stations: parallax.
   */
  readonly pivotOffsetM?: number;
  /** Radial distortion of the lens (lens.ts: Brown's model, focal-normalised radius); none by default. */
  readonly distortion?: RadialDistortion;
  /**
   * The focal length the EXIF tags claim, mm, when it is not the one rendered (cameras round it;
   * a lens may not report it right); by default the true one.
   */
  readonly exifFocalLengthMm?: number;
  /** Exposure biases of each station's bracket, EV, one of them 0 (clean sets only); default demoBracket. [0]: one frame a station. */
  readonly bracket?: readonly number[];
}

/** A figure in the scene, as the directions it covers, degrees (yaw as the poses'). */
export interface Visitor {
  readonly yawDeg: number;
  readonly pitchDeg: number;
  readonly widthDeg: number;
  readonly heightDeg: number;
}

export const defaultDemoPlanOptions: DemoPlanOptions = { stations: 12, width: 3000, height: 2000, seed: 1, clean: false };

/** The invented camera: no real make or model. */
export const demoMake = 'Seamscout';
export const demoModel = 'Virtual Survey Camera';
export const demoFocalLengthMm = 35;
export const demoSensorWidthMm = 36;
/** Bracket exposure biases in EV, in shooting order (the reference frame is the 0 EV one). */
export const demoBracket: readonly number[] = [-2, 0, 2];
/** The metered exposure: 1/250 s at f/8, ISO 100 (brackets vary the shutter). */
export const demoBaseExposureTime = 1 / 250;
export const demoFNumber = 8;
export const demoIso = 100;
/** Neighbour overlap the sweep aims at (common practice: 30-50 %). */
export const demoTargetOverlap = 0.45;
/** The fewest stations that leave room for the five planted problems (on different stations, none first or last). */
export const demoMinStationsWithProblems = 8;
export const demoMaxStations = 200;
/** Pixel limits of a demo frame. */
export const demoMinSide = 64;
export const demoMaxSide = 12000;
export const demoMaxPixels = 100_000_000;

/** One planned frame. Angles in degrees, times in seconds, capture time as local wall-clock time. */
export interface PlannedFrame extends Pose {
  /** SSC_0001.JPG onwards, in shooting order. */
  readonly file: string;
  /** Index in shooting order, from 0. */
  readonly index: number;
  /** Station index, from 0. */
  readonly station: number;
  /** Position in the bracket sequence (0: -2 EV, 1: 0 EV, 2: +2 EV). */
  readonly bracketIndex: number;
  /** The bracket's exposure bias (the EXIF ExposureBiasValue). */
  readonly evBias: number;
  /** Exposure relative to the metered 1/250 s at f/8 in EV: the bias plus any exposure jump (exact). */
  readonly exposureOffsetEv: number;
  readonly focalLengthMm: number;
  readonly exposureTime: number;
  readonly fNumber: number;
  readonly iso: number;
  /** ISO 8601 local date and time with milliseconds, no zone: 2026-06-20T19:12:04.400. */
  readonly captureTime: string;
  /** Horizontal motion blur in pixels (0 for none). */
  readonly blurPx: number;
  /** Seed of this frame's sensor noise. */
  readonly noiseSeed: number;
  /** A figure in this frame that the next station's frames do not show. */
  readonly visitor?: Visitor;
  /** Where the camera's centre is, metres, when it is off the pivot (world frame, y up). */
  readonly centre?: readonly [number, number, number];
}

export interface PlannedStation {
  readonly index: number;
  readonly frames: readonly string[];
  /** The 0 EV frame. */
  readonly reference: string;
}

export interface PlannedProblem {
  readonly code: DemoProblemCode;
  readonly frames: readonly string[];
  /** Station indices, from 0 as `PlannedStation.index`. */
  readonly stations: readonly number[];
  /** For a person: stations numbered from 1, as the check's output numbers them. */
  readonly detail: string;
}

export interface DemoCamera {
  readonly make: string;
  readonly model: string;
  readonly sensorWidthMm: number;
  readonly sensorHeightMm: number;
  readonly width: number;
  readonly height: number;
  readonly focalLengthMm: number;
  /** The lens's radial distortion, when it has any. */
  readonly distortion?: RadialDistortion;
  /** The focal length written to EXIF, mm, when it differs from the true one. */
  readonly exifFocalLengthMm?: number;
}

export interface DemoPlan {
  readonly seed: number;
  readonly clean: boolean;
  /** Near posts in the scene (none unless asked for). */
  readonly posts: readonly NearPost[];
  /** Rows of stations (1 for a single sweep); stations are numbered row after row. */
  readonly rows: number;
  /** True when the sweep's steps add up to 360 degrees (the last station overlaps the first). */
  readonly fullTurn: boolean;
  readonly camera: DemoCamera;
  readonly frames: readonly PlannedFrame[];
  readonly stations: readonly PlannedStation[];
  readonly problems: readonly PlannedProblem[];
}

/** Checks demo options, throwing "Expected X for name but received Y". */
export function expectDemoPlanOptions(o: DemoPlanOptions): void {
  const whole = (v: number, lo: number, hi: number, name: string): void => {
    if (!Number.isInteger(v) || v < lo || v > hi) throw new RangeError(`Expected a whole number from ${lo} to ${hi} for ${name} but received ${v}`);
  };
  whole(o.width, demoMinSide, demoMaxSide, 'width');
  whole(o.height, demoMinSide, demoMaxSide, 'height');
  if (o.width * o.height > demoMaxPixels) throw new RangeError(`Expected at most ${demoMaxPixels} pixels for size but received ${o.width}x${o.height}`);
  whole(o.seed, 0, 0xffffffff, 'seed');
  whole(o.stations, o.clean ? 2 : demoMinStationsWithProblems, demoMaxStations, o.clean ? 'stations' : 'stations (with planted problems)');
  const rows = o.rows ?? [0];
  if (rows.length === 0 || rows.some((p) => !(Math.abs(p) <= 80))) throw new RangeError(`Expected one or more row pitches between -80 and 80 degrees for rows but received ${JSON.stringify(o.rows)}`);
  if (rows.length > 1 && !o.clean) throw new RangeError('Expected clean: true for a set shot in rows but received clean: false');
  const d = o.distortion;
  if (d !== undefined && !(Number.isFinite(d.k1) && Number.isFinite(d.k2) && Math.abs(d.k1) <= 1 && Math.abs(d.k2) <= 1)) throw new RangeError(`Expected k1 and k2 between -1 and 1 for distortion but received ${JSON.stringify(d)}`);
  if (o.exifFocalLengthMm !== undefined && !(o.exifFocalLengthMm > 0 && o.exifFocalLengthMm < 10_000)) throw new RangeError(`Expected a focal length in mm for exifFocalLengthMm but received ${o.exifFocalLengthMm}`);
  if (o.bracket !== undefined && (!o.clean || !o.bracket.includes(0) || o.bracket.some((b) => !(Math.abs(b) <= 5)))) throw new RangeError(`Expected EV biases from -5 to 5 including 0, on a clean set, for bracket but received ${JSON.stringify(o.bracket)}${o.clean ? '' : ' (clean: false)'}`);
  if (rows.length * o.stations > demoMaxStations) throw new RangeError(`Expected at most ${demoMaxStations} stations in all rows but received ${rows.length * o.stations}`);
}

/** The camera model of a demo shoot of this size. */
export function demoCameraModel(width: number, height: number): CameraModel {
  return cameraModel(width, height, demoFocalLengthMm, demoSensorWidthMm);
}

/** Overlap (as overlap.ts defines it) of two frames of `camera` turned `stepDeg` apart in yaw. */
export function overlapForYawStep(camera: CameraModel, stepDeg: number): number {
  const h = rotationHomography(camera, { yawDeg: 0, pitchDeg: 0, rollDeg: 0 }, camera, { yawDeg: stepDeg, pitchDeg: 0, rollDeg: 0 });
  return overlapRegions(h, camera.width, camera.height, camera.width, camera.height).overlap;
}

/** The yaw step giving `overlap` between neighbours (overlap falls as the step grows), by bisection. */
export function yawStepForOverlap(camera: CameraModel, overlap: number): number {
  let lo = 0, hi = 180;
  for (let i = 0; i < 60; i++) {
    const mid = (lo + hi) / 2;
    if (overlapForYawStep(camera, mid) > overlap) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2;
}

/** A sweep closes the turn when 360 / stations still leaves at least this overlap. */
export const demoMinFullTurnOverlap = 0.35;
/** Overlap of the planted gap. */
export const demoGapOverlap = 0.06;
const jumpEv = 1.3;
const driftYawDeg = 0.3;
const driftPitchDeg = 0.2;
/** Motion blur of the blurred frame at 3000 px width, scaled with the width. */
const blurPxAt3000 = 12;
const bracketIntervalMs = 400;
const stationIntervalMs = 4000;
/** Start of the shoot (invented), as local wall-clock time. */
const startMs = Date.UTC(2026, 5, 20, 19, 12, 0, 0);

function fileName(index: number): string {
  return `SSC_${String(index + 1).padStart(4, '0')}.JPG`;
}

function round(v: number, digits: number): number {
  const k = Math.pow(10, digits);
  return Math.round(v * k) / k;
}

/** Formats local wall-clock milliseconds (kept in a UTC Date) as ISO 8601 without a zone. */
function localIso(ms: number): string {
  return new Date(ms).toISOString().slice(0, 23);
}

function shuffle<T>(items: T[], rnd: ReturnType<typeof createRandom>): T[] {
  for (let i = items.length - 1; i > 0; i--) {
    const j = rnd.int(i + 1);
    [items[i], items[j]] = [items[j], items[i]];
  }
  return items;
}

/**
 * The demo shoot's plan. Yaw steps: 360 / stations when that leaves neighbours at least 35 %
 * overlap (a full turn; about 45 % for the default 12 stations at 35 mm), else the step giving 45 %
 * and a partial sweep. A planted gap (under 10 % overlap) is paid for by shrinking the other steps
 * so a full turn still closes. Pitch and roll wander by under a degree, as on a levelled head.
 */
export function planDemoShoot(options: Partial<DemoPlanOptions> = {}): DemoPlan {
  const o: DemoPlanOptions = { ...defaultDemoPlanOptions, ...options };
  expectDemoPlanOptions(o);
  const camera = demoCameraModel(o.width, o.height);
  const n = o.stations;
  const rnd = createRandom(o.seed ^ 0x00de3050);

  // Where the problems go: the gap between stations gap and gap + 1, the rest on other stations,
  // never the first or the last.
  const at: Partial<Record<DemoProblemCode, number>> = {};
  if (!o.clean) {
    const gap = 1 + rnd.int(n - 3);
    at['low-overlap'] = gap;
    const free = shuffle(Array.from({ length: n - 2 }, (_, i) => i + 1).filter((s) => s !== gap && s !== gap + 1), rnd);
    at['exposure-jump'] = free[0];
    at.blurred = free[1];
    at['incomplete-bracket'] = free[2];
    at['bracket-drift'] = free[3];
  }

  const fullTurn = overlapForYawStep(camera, 360 / n) >= demoMinFullTurnOverlap;
  const gapStep = yawStepForOverlap(camera, demoGapOverlap);
  const steps: number[] = [];
  const regular = fullTurn ? (o.clean ? 360 / n : (360 - gapStep) / (n - 1)) : yawStepForOverlap(camera, demoTargetOverlap);
  for (let s = 0; s < n - 1; s++) steps.push(s === at['low-overlap'] ? gapStep : regular);

  const startYaw = 360 * rnd.next();
  const frames: PlannedFrame[] = [];
  const stations: PlannedStation[] = [];
  let yaw = startYaw;
  let stationMs = startMs;
  const blurPx = Math.max(2, Math.round((blurPxAt3000 * o.width) / 3000));
  const rowPitches = o.rows ?? [0];
  for (let s = 0; s < n * rowPitches.length; s++) {
    const inRow = s % n;
    if (s > 0) {
      // Each row turns once round from the same start.
      yaw = inRow === 0 ? startYaw : yaw + steps[inRow - 1];
      stationMs += stationIntervalMs + Math.round(1200 * (rnd.next() - 0.5));
    }
    // A levelled head, nudged: yaw within a third of a degree, pitch and roll under a degree.
    const pose: Pose = {
      yawDeg: yaw + 0.6 * (rnd.next() - 0.5),
      pitchDeg: rowPitches[Math.floor(s / n)] + Math.max(-0.9, Math.min(0.9, 0.35 * rnd.normal())),
      rollDeg: Math.max(-0.9, Math.min(0.9, 0.3 * rnd.normal())),
    };
    const jump = at['exposure-jump'] === s ? jumpEv : 0;
    const names: string[] = [];
    let reference = '';
    (o.bracket ?? demoBracket).forEach((bias, b) => {
      if (at['incomplete-bracket'] === s && bias === 2) return;
      const drift = at['bracket-drift'] === s && bias === -2;
      const index = frames.length;
      const file = fileName(index);
      const offset = bias + jump;
      frames.push({
        file,
        index,
        station: s,
        bracketIndex: b,
        evBias: bias,
        exposureOffsetEv: offset,
        yawDeg: round((((drift ? pose.yawDeg + driftYawDeg : pose.yawDeg) % 360) + 360) % 360, 6),
        pitchDeg: round(drift ? pose.pitchDeg + driftPitchDeg : pose.pitchDeg, 6),
        rollDeg: round(pose.rollDeg, 6),
        focalLengthMm: demoFocalLengthMm,
        exposureTime: demoBaseExposureTime * Math.pow(2, offset),
        fNumber: demoFNumber,
        iso: demoIso,
        captureTime: localIso(stationMs + b * bracketIntervalMs),
        blurPx: at.blurred === s && bias === 0 ? blurPx : 0,
        noiseSeed: (rnd.next() * 4294967296) >>> 0,
      });
      names.push(file);
      if (bias === 0) reference = file;
    });
    stations.push({ index: s, frames: names, reference });
  }

  const problems: PlannedProblem[] = [];
  const ref = (s: number): PlannedFrame => frames.find((f) => f.station === s && f.evBias === 0)!;
  if (o.visitor && n >= 2) {
    // Between the middle station and the next (the next but one after the planted gap), in the
    // lower half of the frames: about 3 degrees wide and 7 tall, a person at some distance.
    let vs = Math.floor((n - 1) / 2);
    if (at['low-overlap'] === vs && vs + 2 < n) vs++;
    const ya = ref(vs).yawDeg, yb = ref(vs + 1).yawDeg;
    const mid = ya + ((((yb - ya) % 360) + 540) % 360 - 180) / 2;
    const visitor: Visitor = { yawDeg: round((((mid % 360) + 360) % 360), 6), pitchDeg: -6, widthDeg: 3, heightDeg: 7 };
    for (let k = 0; k < frames.length; k++) if (frames[k].station === vs) frames[k] = { ...frames[k], visitor };
    problems.push({
      code: 'movement', frames: [ref(vs).file, ref(vs + 1).file], stations: [vs, vs + 1],
      detail: `A figure stands in the overlap of stations ${vs + 1} and ${vs + 2} (yaw ${round(visitor.yawDeg, 1)} degrees, pitch ${visitor.pitchDeg}) in station ${vs + 1}'s frames only: it walked off before station ${vs + 2} was shot.`,
    });
  }
  const time = (t: number): string => (t >= 1 ? `${round(t, 2)} s` : `1/${round(1 / t, 1)} s`);
  if (!o.clean) {
    const g = at['low-overlap']!;
    const a = ref(g), b = ref(g + 1);
    const h = rotationHomography(camera, a, camera, b);
    const ov = overlapRegions(h, o.width, o.height, o.width, o.height).overlap;
    problems.push({
      code: 'low-overlap', frames: [a.file, b.file], stations: [g, g + 1],
      detail: `Stations ${g + 1} and ${g + 2} overlap by only ${round(100 * ov, 1)} %: the camera turned ${round(gapStep, 1)} degrees between them, against about ${round(regular, 1)} degrees elsewhere.`,
    });
    const j = at['exposure-jump']!;
    const jf = frames.filter((f) => f.station === j);
    problems.push({
      code: 'exposure-jump', frames: jf.map((f) => f.file), stations: [j],
      detail: `Station ${j + 1} is exposed ${jumpEv} EV brighter than the others (auto-exposure jumped): its 0 EV frame took ${time(ref(j).exposureTime)} instead of ${time(demoBaseExposureTime)} at the same aperture and ISO.`,
    });
    const bl = ref(at.blurred!);
    problems.push({
      code: 'blurred', frames: [bl.file], stations: [bl.station],
      detail: `${bl.file} (station ${bl.station + 1}, 0 EV) is smeared by ${bl.blurPx} px of horizontal motion blur.`,
    });
    const ib = at['incomplete-bracket']!;
    problems.push({
      code: 'incomplete-bracket', frames: frames.filter((f) => f.station === ib).map((f) => f.file), stations: [ib],
      detail: `Station ${ib + 1} has ${demoBracket.length - 1} of ${demoBracket.length} bracket frames: the +2 EV frame is missing.`,
    });
    const d = at['bracket-drift']!;
    const df = frames.find((f) => f.station === d && f.evBias === -2)!;
    problems.push({
      code: 'bracket-drift', frames: [df.file, ref(d).file], stations: [d],
      detail: `${df.file} (station ${d + 1}, -2 EV) is turned ${driftYawDeg} degrees in yaw and ${driftPitchDeg} in pitch against the station's 0 EV frame ${ref(d).file} (hand-held).`,
    });
  }

  const posts: NearPost[] = o.posts ? Array.from({ length: 10 }, (_, k) => {
    const a = ((36 * k + 11) * Math.PI) / 180;
    return { x: 3 * Math.sin(a), z: 3 * Math.cos(a), radius: 0.06, bottom: -1.6, top: 0.5 };
  }) : [];
  const offset = o.pivotOffsetM ?? 0;
  if (offset !== 0)
    for (let k = 0; k < frames.length; k++) {
      // The entrance pupil sits `offset` along the optical axis from the pivot.
      const w = worldToCamera(frames[k]);
      frames[k] = { ...frames[k], centre: [offset * w[6], offset * w[7], offset * w[8]] };
    }
  return {
    seed: o.seed,
    clean: o.clean,
    posts,
    rows: rowPitches.length,
    fullTurn,
    camera: {
      make: demoMake, model: demoModel, sensorWidthMm: camera.sensorWidthMm, sensorHeightMm: camera.sensorHeightMm,
      width: o.width, height: o.height, focalLengthMm: demoFocalLengthMm,
      ...(o.distortion && (o.distortion.k1 !== 0 || o.distortion.k2 !== 0) ? { distortion: { k1: o.distortion.k1, k2: o.distortion.k2 } } : {}),
      ...(o.exifFocalLengthMm !== undefined ? { exifFocalLengthMm: o.exifFocalLengthMm } : {}),
    },
    frames,
    stations,
    problems,
  };
}
