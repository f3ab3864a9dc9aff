/**
 * The check's policy, apart from its scheduling: which frames form a station by their content,
 * which closure pairs are tried and kept, how pairs are named once the set shows rows, and which
 * further pairs of reference frames are candidates. Pure: indices and numbers in, decisions out.
 */
import type { PairKind } from './report.js';
import { cornerShift } from '../pair/pair-analysis.js';
import { median } from '../numeric/median.js';
import { focalPxFrom35mm } from '../geometry/sweep.js';
import { circleCoverage } from '../geometry/coverage.js';
import type { StationGroup } from './stations.js';

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

/** A pair the check plans, by the frames' indices in shooting order. */
export interface PlanPair {
  readonly i: number;
  readonly j: number;
  readonly kind: PairKind;
}

/**
 * The pairs a station brings once it is final: each bracket frame with its reference, in the order
 * of the members, then the neighbour pair from the previous station's reference (null for the
 * first station).
 */
export function stationPairs(members: readonly number[], reference: number, previousReference: number | null): PlanPair[] {
  const pairs: PlanPair[] = members.filter((m) => m !== reference).map((m) => ({ i: reference, j: m, kind: 'bracket' as const }));
  if (previousReference !== null) pairs.push({ i: previousReference, j: reference, kind: 'neighbour' });
  return pairs;
}

/** An EXIF group as far as it is still in play: its frames, its reference and each frame's offset from the reference, EV (null: unknown). */
export interface SettledStation {
  readonly members: number[];
  readonly reference: number;
  readonly offsets: (number | null)[];
}

/**
 * The frames of an EXIF group still in play (a frame left out or not decoded is not), its
 * reference (the planned one; the member nearest 0 EV when that one is out) and their offsets
 * from that reference.
 */
export function settleStation(group: Pick<StationGroup, 'members' | 'reference' | 'offsets'>, inPlay: (frame: number) => boolean): SettledStation {
  const offsetOf = (m: number): number | null => group.offsets[group.members.indexOf(m)];
  const members = group.members.filter(inPlay);
  let reference = group.reference;
  if (!inPlay(reference) && members.length > 0) {
    const off = (m: number): number => Math.abs(offsetOf(m) ?? 0);
    reference = members.reduce((best, m) => (off(m) < off(best) ? m : best), members[0]);
  }
  const base = offsetOf(reference);
  const offsets = members.map((m) => {
    const o = offsetOf(m);
    return o === null || base === null ? null : o - base;
  });
  return { members, reference, offsets };
}

/** A station as it is finalised. */
export interface StationPlan extends SettledStation {
  readonly groupedBy: StationGroup['groupedBy'];
}

/**
 * A settled group once its content is known: the members that show another view than the
 * reference (never the reference itself) become stations of their own (offset 0, or null when
 * unknown), the rest stay one station; all in shooting order of their first frame.
 */
export function splitStation(settled: SettledStation, apart: readonly number[], groupedBy: StationGroup['groupedBy']): StationPlan[] {
  const offsetOf = (m: number): number | null => settled.offsets[settled.members.indexOf(m)];
  const kept = settled.members.filter((m) => !apart.includes(m));
  return [
    { members: kept, reference: settled.reference, offsets: kept.map(offsetOf), groupedBy: kept.length === 1 ? 'single' as const : groupedBy },
    ...apart.map((m) => ({ members: [m], reference: m, offsets: [offsetOf(m) === null ? null : 0], groupedBy: 'single' as const })),
  ].sort((p, q) => p.members[0] - q.members[0]);
}

/** Each station's row (-1: in none), from the rows of the geometry. */
export function rowOfStations(rows: readonly { readonly stations: readonly number[] }[], stationCount: number): Int32Array {
  const rowOf = new Int32Array(stationCount).fill(-1);
  rows.forEach((r, k) => r.stations.forEach((s) => (rowOf[s] = k)));
  return rowOf;
}

/** A row's closure pair to try: its last station to its first (stations' indices), and how much of the horizon the row covers. */
export interface RowClosure {
  readonly last: number;
  readonly first: number;
  readonly coveredDeg: number;
}

/**
 * The rows of a set shot in rows that get a closure pair of their own: three stations or more that
 * come most of the way round, by the stations' yaw (poses) and each station's horizontal field of
 * view (by station index), in the order of the rows.
 */
export function rowClosures(rows: readonly { readonly stations: readonly number[] }[], poses: readonly { readonly station: number; readonly yawDeg: number }[], hfovDeg: readonly number[]): RowClosure[] {
  const yawOf = new Map(poses.map((p) => [p.station, p.yawDeg]));
  const closures: RowClosure[] = [];
  for (const r of rows) {
    if (r.stations.length < 3) continue;
    const covered = circleCoverage(r.stations.map((s) => yawOf.get(s)!), r.stations.map((s) => hfovDeg[s])).coveredDeg;
    if (tryRowClosure(r.stations.length, covered)) closures.push({ last: r.stations[r.stations.length - 1], first: r.stations[0], coveredDeg: covered });
  }
  return closures;
}
