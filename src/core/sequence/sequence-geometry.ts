/**
 * The geometry of a whole sequence shot from one place: each station's rotation, the focal length
 * and the lens's radial distortion (rotations.ts, lens-bundle.ts), then what the frames cover
 * (coverage.ts) and whether a full turn closes, judged under the refined lens.
 */
import { circleCoverage, intervalCoverageDeg } from '../geometry/coverage.js';
import type { RadialDistortion } from '../geometry/lens.js';
import { tiePointUnitPx, undistortRadius } from '../geometry/lens.js';
import type { BundleResult } from '../geometry/lens-bundle.js';
import { bundleAdjust, linkRotation } from '../geometry/lens-bundle.js';
import type { SequenceGeometry } from './report.js';
import type { FrameSize, Rotation, RotationLink } from '../geometry/rotations.js';
import { chainTree, focalFromHomography, rotationAngleOf, stationPoses } from '../geometry/rotations.js';
import { multiply, transpose } from '../numeric/matrix3.js';
import { median } from '../numeric/median.js';

export interface GeometryInput {
  /** Size of each station's reference frame at full resolution, by station. */
  readonly sizes: readonly FrameSize[];
  /** Focal length in full-resolution pixels from EXIF, or null when the files do not say. */
  readonly exifFocalPx: number | null;
  /** The EXIF 35 mm equivalent it came from, mm, to report beside the refined value. */
  readonly exifFocal35mm?: number | null;
  /** Matched pairs between stations (neighbours, and any others), not the closure pair. */
  readonly links: readonly RotationLink[];
  /** The closure pair (last station to first), when it was matched. */
  readonly closure?: RotationLink | null;
}

/** A closing turn must meet itself within this many degrees (common practice: a pair matched wrongly is off by far more). */
export const maxMisclosureDeg = 2;


/**
 * How far the EXIF focal length may be off, relative (a soft prior, not a constant): the 35 mm
 * equivalent is written rounded to the millimetre, and a crop factor or focus breathing moves it by
 * a few per cent more (common practice).
 */
export const exifFocalRelativeSd = 0.05;

/**
 * The closure pair's lens is taken as the neighbours' too when it leaves their tie points' rms at
 * most this share above their own fit's (our own threshold, see solveSequence).
 */
const closedRmsAllowance = 0.05;

/** k2 is tried only when k1 alone leaves tie points this far off (pixels, typical pair), and kept when it helps. */
function poorK1FitPx(longSidePx: number): number {
  return 0.5 * tiePointUnitPx(longSidePx);
}

/** Field of view across a side of `sidePx` pixels at focal length `focalPx` through the lens, degrees. */
export function lensFieldOfViewDeg(sidePx: number, focalPx: number, d: RadialDistortion): number {
  const r = undistortRadius(sidePx / (2 * focalPx), d.k1, d.k2);
  return (2 * Math.atan(Number.isFinite(r) ? r : sidePx / (2 * focalPx)) * 180) / Math.PI;
}

/**
 * Levenberg-Marquardt rounds: a chain through a strongly distorting lens starts several degrees off
 * at its far end and needs a few dozen to settle (measured: about 40 at k1 = -0.15).
 */
const bundleIterations = 100;

const typicalRms = (fit: BundleResult): number => {
  const finite = fit.linkRmsPx.filter((r) => Number.isFinite(r));
  return finite.length ? median(finite) : 0;
};

/**
 * Rotations, focal length and k1 (and k2, when k1 alone leaves a poor fit) over the links: the
 * bundle adjustment with the EXIF focal length as a prior.
 */
function fitLens(initial: readonly (Rotation | null)[], links: readonly RotationLink[], f0: number, input: GeometryInput, longSide: number, k1 = 0): { fit: BundleResult; terms: 1 | 2 } {
  const focalPrior = input.exifFocalPx !== null ? { focalPx: input.exifFocalPx, relativeSd: exifFocalRelativeSd } : null;
  const one = bundleAdjust(initial, links, f0, input.sizes, { refineFocal: true, focalPrior, distortionTerms: 1, distortion: { k1, k2: 0 }, maxIterations: bundleIterations });
  if (typicalRms(one) <= poorK1FitPx(longSide)) return { fit: one, terms: 1 };
  const two = bundleAdjust(one.rotations, links, one.focalPx, input.sizes, { refineFocal: true, focalPrior, distortionTerms: 2, distortion: one.distortion, maxIterations: bundleIterations });
  // Kept only when it does markedly better (a tenth less error on the typical pair).
  return typicalRms(two) < 0.9 * typicalRms(one) ? { fit: two, terms: 2 } : { fit: one, terms: 1 };
}

/** The refined model of a sequence: rotations, lens and how the closure pair agrees with the chain. */
export interface SequenceSolution {
  readonly fit: BundleResult;
  readonly terms: 1 | 2;
  /** The links that took part (the closure pair's only when the turn closes). */
  readonly links: readonly RotationLink[];
  readonly misclosureDeg: number | null;
  readonly closes: boolean;
}

/**
 * Chains the rotations from a starting focal length (EXIF, else the homographies'), refines them
 * with the lens over the links' tie points, then judges the closure pair: the lens refined with it,
 * the chain of links refined again under that lens without it, and the two compared. The result is
 * the fit with the closure pair when the turn closes, else the fit without it. Null when no focal
 * length can be had.
 */
export function solveSequence(input: GeometryInput): SequenceSolution | null {
  const n = input.sizes.length;
  if (n === 0) return null;
  let focal = input.exifFocalPx;
  if (focal === null) {
    const found = input.links.map((l) => focalFromHomography(l.homography, input.sizes[l.i], input.sizes[l.j])).filter((f): f is number => f !== null);
    if (found.length === 0) return null;
    focal = median(found);
  }
  const longSide = Math.max(...input.sizes.map((s) => Math.max(s.width, s.height)));
  const { rotations: chained, tree } = chainTree(n, input.links, focal, input.sizes);
  // A pinhole chain through a distorting lens can miss itself by tens of degrees round a loop (a
  // full turn, two rows tied together): the lens is first fitted along the spanning tree alone,
  // which has no loop to miss, and the loops join from there. The closure pair stays out of both.
  let first = fitLens(chained, tree, focal, input, longSide);
  if (tree.length < input.links.length) first = fitLens(first.fit.rotations, input.links, first.fit.focalPx, input, longSide, first.fit.distortion.k1);
  const c = input.closure ?? null;
  if (!c || !first.fit.rotations[c.i] || !first.fit.rotations[c.j]) return { fit: first.fit, terms: first.terms, links: input.links, misclosureDeg: null, closes: false };
  // Along an open chain the focal length and the distortion trade against each other, and a focal
  // length a few tenths of a per cent off turns every step a little: over a full turn, a degree or
  // so. The closure pair is what pins them down. So the lens is refined with it taking part, and
  // the chain of neighbours is then refined again under that lens, without it, and compared with
  // what the closure pair's own tie points show. But a wrong closure pair would also be absorbed
  // that way, into a focal length the neighbours do not support (a relative change of the focal
  // length turns a full turn by about that share of 360 degrees): that shift counts as misclosure.
  const focalPrior = input.exifFocalPx !== null ? { focalPx: input.exifFocalPx, relativeSd: exifFocalRelativeSd } : null;
  const all = [...input.links, c];
  const closed = bundleAdjust(first.fit.rotations, all, first.fit.focalPx, input.sizes, { refineFocal: true, focalPrior, distortionTerms: first.terms, distortion: first.fit.distortion, maxIterations: bundleIterations });
  const chainMiss = (lens: BundleResult): { deg: number; rmsPx: number } | null => {
    const chain = bundleAdjust(lens.rotations, input.links, lens.focalPx, input.sizes, { refineFocal: false, distortionTerms: 0, distortion: lens.distortion, maxIterations: bundleIterations });
    const measured = linkRotation(c, input.sizes, lens.focalPx, lens.distortion);
    if (!measured || !chain.rotations[c.i] || !chain.rotations[c.j]) return null;
    return { deg: rotationAngleOf(multiply(measured, transpose(multiply(chain.rotations[c.j]!, transpose(chain.rotations[c.i]!))))), rmsPx: chain.rmsPx };
  };
  const underClosed = chainMiss(closed);
  const absorbedDeg = 360 * Math.abs(Math.log(closed.focalPx / first.fit.focalPx));
  // The neighbours alone pin the focal length only as well as their tie points' spread and noise
  // allow: through a strong barrel lens at a wide field, f and k1 trade against each other along
  // the chain, and real tie points (clustered on what has texture, some pairs soft) leave it a per
  // cent or so loose (measured: 1180 px against 1167 px true at k1 = -0.15, 28 mm, the neighbours'
  // rms 0.766 px there and 0.782 px under the true lens). A focal length the closure pair moves is
  // then absorbed only where the neighbours fit it markedly worse than their own: a closure pair 3
  // degrees off raises their rms by 17 % (0.3 px noise), the true lens raised it by 2 % there.
  const neighboursAgree = underClosed !== null && underClosed.rmsPx <= (1 + closedRmsAllowance) * first.fit.rmsPx;
  const closes = underClosed !== null && underClosed.deg <= maxMisclosureDeg && (absorbedDeg <= maxMisclosureDeg || neighboursAgree);
  // Not closing: how far the chain misses under the neighbours' own lens, the closure left out.
  const misclosureDeg = closes ? underClosed.deg : underClosed === null ? null : Math.max(underClosed.deg, chainMiss(first.fit)?.deg ?? underClosed.deg);
  return closes ? { fit: closed, terms: first.terms, links: all, misclosureDeg, closes } : { fit: first.fit, terms: first.terms, links: input.links, misclosureDeg, closes };
}

/** Rotations, coverage and closure of a sequence; null when no focal length can be had or fewer than one link. */
export function sequenceGeometry(input: GeometryInput): SequenceGeometry | null {
  const solved = solveSequence(input);
  if (!solved) return null;
  const { fit, terms, links, misclosureDeg, closes } = solved;
  const c = input.closure ?? null;
  const longSide = Math.max(...input.sizes.map((s) => Math.max(s.width, s.height)));
  const rotations: (Rotation | null)[] = fit.rotations;
  const poses = stationPoses(rotations);
  const lens = fit.distortion;

  const placed = poses.map((p, s) => ({ p, s })).filter((x) => x.p !== null);
  const hfov = placed.map(({ s }) => lensFieldOfViewDeg(input.sizes[s].width, fit.focalPx, lens));
  const vfov = placed.map(({ s }) => lensFieldOfViewDeg(input.sizes[s].height, fit.focalPx, lens));
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
  const linkFits = links.map((l, k) => ({ stations: [l.i, l.j] as [number, number], rmsPx: fit.linkRmsPx[k] })).filter((x) => Number.isFinite(x.rmsPx));
  return {
    focalPx: fit.focalPx,
    focalFrom: input.exifFocalPx !== null ? 'exif' : 'homographies',
    exifFocalPx: input.exifFocalPx,
    exifFocal35mm: input.exifFocal35mm ?? null,
    focal35mm: (36 * fit.focalPx) / longSide,
    distortion: { k1: lens.k1, k2: terms === 2 ? lens.k2 : 0, terms },
    typicalRmsPx: typicalRms(fit),
    linkFits,
    poses: placed.map(({ p, s }) => ({ station: s, yawDeg: p!.yawDeg, pitchDeg: p!.pitchDeg, rollDeg: p!.rollDeg })),
    unplaced: poses.map((p, s) => (p ? -1 : s)).filter((s) => s >= 0),
    horizontalDeg: horizon.coveredDeg,
    verticalDeg: intervalCoverageDeg(placed.map(({ p }) => p!.pitchDeg), vfov),
    gaps: horizon.gaps.map((g) => ({ fromYawDeg: g.fromDeg, toYawDeg: g.toDeg })),
    closure: c === null ? null : { misclosureDeg, closes },
    rmsPx: fit.rmsPx,
    rows,
  };
}
