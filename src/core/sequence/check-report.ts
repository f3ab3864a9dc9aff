/**
 * Report assembly for a check: a measured pair, a frame and the stations as the report has them,
 * from analyses already mapped to full resolution. Pure: the check in src/main gathers the inputs.
 */
import type { PairAnalysis } from '../pair/pair-analysis.js';
import { analysisToFull } from '../image/resolution.js';
import type { FrameMeasure, FrameSettings, PairKind, PairMeasure, StationMeasure } from './report.js';

/** What the report keeps of a decoded frame. */
export interface FrameSummary {
  readonly fullWidth: number;
  readonly fullHeight: number;
  readonly anWidth: number;
  readonly anHeight: number;
  readonly keypoints: number;
  readonly sharpness: number;
  readonly fingerprint: string;
}

/** A station as the check plans it: frame indices, its reference frame and EV offsets. */
export interface PlannedStation {
  readonly members: number[];
  readonly reference: number;
  readonly offsets: (number | null)[];
  readonly groupedBy: StationMeasure['groupedBy'];
}

/** The full-resolution facts of a pair beside its analysis: the model and scale, the bracket shift, an overlap predicted from the turn. */
export interface PairAtFullResolution {
  readonly homography: Float64Array | null;
  /** Analysis pixels to full-resolution pixels. */
  readonly scale: number;
  readonly shiftPx: number | null;
  /** Present when the pair found no model and the turn predicted its overlap. */
  readonly predictedOverlap?: number;
}

/** One measured pair as the report has it. */
export function pairMeasure(a: string, b: string, kind: PairKind, r: PairAnalysis, full: PairAtFullResolution): PairMeasure {
  const { scale } = full;
  return {
    a,
    b,
    kind,
    matches: r.matches,
    inliers: r.inliers,
    matchesInOverlap: r.matchesInOverlap,
    overlap: r.overlap,
    homography: full.homography ? Array.from(full.homography) : null,
    evDiff: r.evDiff,
    rmsError: r.rmsError === null ? null : r.rmsError * scale,
    shiftPx: full.shiftPx,
    moved: r.moved?.map((m) => ({ x: m.x * scale, y: m.y * scale, width: m.width * scale, height: m.height * scale })) ?? null,
    misfit: r.misfit,
    parallax: r.parallax,
    ...(r.homography === null && full.predictedOverlap !== undefined ? { predictedOverlap: full.predictedOverlap } : {}),
    sharpnessRatio: r.sharpness?.ratio ?? null,
    sharpnessByDirection: r.sharpness ? { horizontal: r.sharpness.byDirection[0], vertical: r.sharpness.byDirection[2], fallingDiagonal: r.sharpness.byDirection[1], risingDiagonal: r.sharpness.byDirection[3] } : null,
    sharpnessBlocks: r.sharpness?.blocks ?? null,
  };
}

/** One frame as the report has it. */
export function frameMeasure(file: string, summary: FrameSummary, exif: { readonly captureTime: string | null; readonly settings: FrameSettings }): FrameMeasure {
  return {
    file,
    width: summary.fullWidth,
    height: summary.fullHeight,
    captureTime: exif.captureTime,
    settings: exif.settings,
    sharpness: summary.sharpness,
    keypoints: summary.keypoints,
    fingerprint: summary.fingerprint,
  };
}

/** The stations as the report has them, frames named. */
export function stationMeasures(stations: readonly PlannedStation[], name: (k: number) => string): StationMeasure[] {
  return stations.map((st, s) => ({
    index: s,
    frames: st.members.map(name),
    reference: name(st.reference),
    evOffsets: st.offsets,
    groupedBy: st.groupedBy,
  }));
}

/** Skips found while decoding, in shooting order (k) whichever decode finished first, after the skips found before decoding. */
export function skipsInOrder<S>(before: readonly S[], decodeSkips: readonly { readonly k: number; readonly skip: S }[]): S[] {
  return [...before, ...[...decodeSkips].sort((p, q) => p.k - q.k).map((d) => d.skip)];
}

/** Tie points xa, ya, xb, yb from analysis pixels of each frame to its full-resolution pixels (pixel centres at integers). */
export function tiePointsAtFullResolution(tiePoints: Float32Array, a: FrameSummary, b: FrameSummary): Float64Array {
  const fa = analysisToFull(a.fullWidth, a.fullHeight, a.anWidth, a.anHeight);
  const fb = analysisToFull(b.fullWidth, b.fullHeight, b.anWidth, b.anHeight);
  const points = new Float64Array(tiePoints.length);
  for (let k = 0; k < tiePoints.length; k += 4) {
    points[k] = fa[0] * tiePoints[k] + fa[2];
    points[k + 1] = fa[4] * tiePoints[k + 1] + fa[5];
    points[k + 2] = fb[0] * tiePoints[k + 2] + fb[2];
    points[k + 3] = fb[4] * tiePoints[k + 3] + fb[5];
  }
  return points;
}
