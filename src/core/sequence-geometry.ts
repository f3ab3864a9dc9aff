/**
 * The geometry of a whole sequence shot from one place: each station's rotation and the focal
 * length (rotations.ts), then what the frames cover (coverage.ts) and whether a full turn closes.
 */
import { circleCoverage, fieldOfViewDeg, intervalCoverageDeg } from './coverage.js';
import type { SequenceGeometry } from './report.js';
import type { FrameSize, Rotation, RotationLink } from './rotations.js';
import { chainRotations, focalFromHomography, mul3, refineRotations, relativeRotation, rotationAngleOf, stationPoses, transpose3 } from './rotations.js';
import { median } from './median.js';

export interface GeometryInput {
  /** Size of each station's reference frame at full resolution, by station. */
  readonly sizes: readonly FrameSize[];
  /** Focal length in full-resolution pixels from EXIF, or null when the files do not say. */
  readonly exifFocalPx: number | null;
  /** Matched pairs between stations (neighbours, and any others), not the closure pair. */
  readonly links: readonly RotationLink[];
  /** The closure pair (last station to first), when it was matched. */
  readonly closure?: RotationLink | null;
}

/** A closing turn must meet itself within this many degrees (common practice: a pair matched wrongly is off by far more). */
export const maxMisclosureDeg = 2;


/** Rotations, coverage and closure of a sequence; null when no focal length can be had or fewer than one link. */
export function sequenceGeometry(input: GeometryInput): SequenceGeometry | null {
  const n = input.sizes.length;
  if (n === 0) return null;
  let focal = input.exifFocalPx;
  if (focal === null) {
    const found = input.links.map((l) => focalFromHomography(l.homography, input.sizes[l.i], input.sizes[l.j])).filter((f): f is number => f !== null);
    if (found.length === 0) return null;
    focal = median(found);
  }
  const chained = chainRotations(n, input.links, focal, input.sizes);

  // How far the chain misses itself against the closure pair, before the closure takes part.
  let misclosureDeg: number | null = null;
  const c = input.closure ?? null;
  if (c && chained[c.i] && chained[c.j]) {
    const measured = relativeRotation(c.homography, focal, input.sizes[c.i], input.sizes[c.j]);
    if (measured) misclosureDeg = rotationAngleOf(mul3(measured, transpose3(mul3(chained[c.j]!, transpose3(chained[c.i]!)))));
  }
  const closes = misclosureDeg !== null && misclosureDeg <= maxMisclosureDeg;
  const links = closes ? [...input.links, c!] : input.links;
  const refined = refineRotations(chained, links, focal, input.sizes, input.exifFocalPx !== null);
  const rotations: (Rotation | null)[] = refined.rotations;
  const poses = stationPoses(rotations);

  const placed = poses.map((p, s) => ({ p, s })).filter((x) => x.p !== null);
  const hfov = placed.map(({ s }) => fieldOfViewDeg(input.sizes[s].width, refined.focalPx));
  const vfov = placed.map(({ s }) => fieldOfViewDeg(input.sizes[s].height, refined.focalPx));
  const horizon = circleCoverage(placed.map(({ p }) => p!.yawDeg), hfov);
  // Rows: stations whose pitches lie within a quarter of a frame's height (at least 5 degrees) of the next.
  const byPitch = placed.map(({ p, s }, k) => ({ s, pitch: p!.pitchDeg, v: vfov[k] })).sort((a, b) => a.pitch - b.pitch);
  const rows: { pitchDeg: number; stations: number[] }[] = [];
  let current: typeof byPitch = [];
  const close = (): void => {
    if (current.length) rows.push({ pitchDeg: current.reduce((t, x) => t + x.pitch, 0) / current.length, stations: current.map((x) => x.s).sort((a, b) => a - b) });
    current = [];
  };
  for (const x of byPitch) {
    if (current.length && x.pitch - current[current.length - 1].pitch > Math.max(5, 0.25 * x.v)) close();
    current.push(x);
  }
  close();
  return {
    focalPx: refined.focalPx,
    focalFrom: input.exifFocalPx !== null ? 'exif' : 'homographies',
    poses: placed.map(({ p, s }) => ({ station: s, yawDeg: p!.yawDeg, pitchDeg: p!.pitchDeg, rollDeg: p!.rollDeg })),
    unplaced: poses.map((p, s) => (p ? -1 : s)).filter((s) => s >= 0),
    horizontalDeg: horizon.coveredDeg,
    verticalDeg: intervalCoverageDeg(placed.map(({ p }) => p!.pitchDeg), vfov),
    gaps: horizon.gaps.map((g) => ({ fromYawDeg: g.fromDeg, toYawDeg: g.toDeg })),
    closure: c === null ? null : { misclosureDeg, closes },
    rmsPx: refined.rmsPx,
    rows,
  };
}
