/**
 * The check's policy, apart from its scheduling: which frames form a station by their content,
 * which closure pairs are tried and kept, how pairs are named once the set shows rows, and which
 * further pairs of reference frames are candidates. Pure: indices and numbers in, decisions out.
 */
import type { PairKind } from './report.js';
import { cornerShift } from './pair-analysis.js';
import { median } from './median.js';
import { focalPxFrom35mm } from './sweep.js';

/** Frames covering this much of the horizon may have been meant as a full turn: the closure pair is tried (common practice). */
export const nearFullTurnDeg = 300;
/** Frames covering this much were a full turn for certain: a closure pair without a model is reported. */
export const closingTurnDeg = 330;

/**
 * A bracket frame sees its reference's view, moved at most by a hand-held wobble; a frame of a
 * station overlapping its would-be reference by less than this shows another view (common practice).
 */
export const bracketMinOverlap = 0.8;

/** Without EXIF, consecutive frames are one pose when no corner moves by more than this part of the frame width (common practice). */
export const sameViewMaxShiftFraction = 0.05;
/** ... and another exposure when their brightness differs by more than this, EV (common practice). */
export const bracketMinEvDiff = 0.3;

/**
 * The content-grouping rule for frames without EXIF exposure data: two consecutive frames are
 * brackets of one station when the full-resolution homography between them (null: no model) moves
 * no corner far and their exposures differ.
 */
export function sameViewOtherExposure(h: Float64Array | null, width: number, height: number, evDiff: number | null): boolean {
  return h !== null && cornerShift(h, width, height) < sameViewMaxShiftFraction * width && evDiff !== null && Math.abs(evDiff) > bracketMinEvDiff;
}

/** A bracket pair (of an EXIF station) that matched with far less overlap than one pose gives: its frame shows another view. */
export function showsAnotherView(pair: { readonly homography: unknown; readonly overlap: number | null }): boolean {
  return pair.homography !== null && pair.overlap !== null && pair.overlap < bracketMinOverlap;
}

/** Whether the whole-turn closure pair is tried: three stations or more, and a chain that covers most of a turn (or whose geometry is unknown). */
export function tryTurnClosure(stations: number, chainDeg: number | null): boolean {
  return stations >= 3 && (chainDeg === null || chainDeg >= nearFullTurnDeg);
}

/** Whether a tried closure pair goes into the report: it matched, or the turn should close. */
export function keepClosure(matched: boolean, coveredDeg: number | null): boolean {
  return matched || (coveredDeg !== null && coveredDeg >= closingTurnDeg);
}

/** Whether a row of stations gets a closure pair of its own: three stations or more that come most of the way round. */
export function tryRowClosure(rowStations: number, coveredDeg: number): boolean {
  return rowStations >= 3 && coveredDeg >= nearFullTurnDeg;
}

/** Whether the turns measured (with an estimate for the failed pairs and a frame's width) come to most of a turn. */
export function mayHaveClosed(turnedDeg: number): boolean {
  return turnedDeg >= nearFullTurnDeg;
}

/** A pair's kind once the set shows rows (row index per end): a step between rows is no neighbour or closure pair. */
export function kindInRows(kind: PairKind, rowA: number, rowB: number): PairKind {
  return (kind === 'neighbour' || kind === 'closure') && rowA !== rowB ? 'other' : kind;
}

/**
 * Every pair of reference frames (given in station order) that is not a pair of neighbouring
 * stations and not already planned (in either order), in station order: the candidates for pairs
 * across rows or for --all-pairs, before screening.
 */
export function otherReferencePairs(references: readonly number[], planned: readonly { readonly i: number; readonly j: number }[]): [number, number][] {
  const known = new Set(planned.map((p) => `${p.i}:${p.j}`));
  const others: [number, number][] = [];
  for (let x = 0; x < references.length; x++)
    for (let y = x + 2; y < references.length; y++) {
      const a = references[x], b = references[y];
      if (!known.has(`${a}:${b}`) && !known.has(`${b}:${a}`)) others.push([a, b]);
    }
  return others;
}

/**
 * How far the camera turned over a chain with gaps: the turns measured, the typical (median) turn
 * for each pair that failed, and one frame's field of view for the frame at the end.
 */
export function estimatedTurnDeg(turnsDeg: readonly number[], failedPairs: number, frameFovDeg: number): number {
  return turnsDeg.reduce((t, x) => t + x, 0) + failedPairs * (turnsDeg.length ? median(turnsDeg) : 0) + frameFovDeg;
}

/** One focal length for the set from EXIF: the median 35 mm equivalent, only where every station's reference has one; in pixels of a width x height frame. */
export function sequenceExifFocal(focal35PerStation: readonly (number | null)[], width: number, height: number): { exifFocal35mm: number | null; exifFocalPx: number | null } {
  const exifFocal35mm = focal35PerStation.every((f) => f) ? median(focal35PerStation as number[]) : null;
  const exifFocalPx = exifFocal35mm !== null ? focalPxFrom35mm(exifFocal35mm, width, height) : null;
  return { exifFocal35mm, exifFocalPx };
}
