/**
 * The checks `judge` (verdicts.ts) applies, one named rule each, in one list per level: pairs,
 * stations, frames, a sequence as a whole and a card of sequences. A new check is one rule added to
 * its level's list; the list's order is the order of the reasons and advice in the report.
 */

import type { Analysis, CoverageHole, FlagCode, FolderCode, FolderProblem, FrameMeasure, FrameSettings, MatchBudget, PairKind, PairMeasure, ReportPair, StationMeasure, Verdict } from './report.js';
import { lensMisfitLimitPx } from '../geometry/lens.js';
import { missingOffsets, modalPattern, patternOf } from './stations.js';
import { blurredFrames } from './blur-verdict.js';
import { degrees, fNumber, isoSpeed, millimetres, percent as pct, shutterTime, signedEv } from './number-words.js';

/** One flag a rule raises: its code, what it weighs and what to do about it. */
export interface Flag {
  readonly code: FlagCode;
  readonly verdict: Verdict;
  readonly advice: string;
}

/** What every rule of one sequence may read: its measurements, the budget, and lookups made once. */
export interface SequenceFacts {
  readonly analysis: Analysis;
  readonly budget: MatchBudget;
  /** The station each file belongs to. */
  readonly stationOf: ReadonlyMap<string, StationMeasure>;
  readonly settingsOf: ReadonlyMap<string, FrameSettings>;
  /** Settings of the stations' reference frames (those known), in station order. */
  readonly refs: readonly FrameSettings[];
  readonly frameSize: (file: string) => { width: number; height: number } | null;
  /** The coverage hole between a pair's stations, if one was located there. */
  readonly holeOf: (p: PairMeasure) => CoverageHole | null;
}

/** Station rules read the pairs as judged, as a bracket frame's drift is its station's too. */
export interface StationFacts extends SequenceFacts {
  readonly pairs: readonly ReportPair[];
}

/** Frame rules read the stations' flags as well, by the rule that raised them. */
export interface FrameFacts extends StationFacts {
  /** The flags a station rule raised on the stations that hold the file, in station order. */
  readonly stationFlags: (file: string, rule: string) => readonly Flag[];
}

/**
 * A named check. `prepare` runs once a sequence, for what the check needs of the whole sequence, and
 * returns the check of one item, which sees the codes the rules before it raised on that item.
 */
export interface Rule<T, F> {
  /** Unique in its list. */
  readonly name: string;
  /** Every code it may raise. */
  readonly codes: readonly FlagCode[];
  /** When it raises a flag, that is the item's only flag and later rules are not asked: one cause, one flag. */
  readonly alone?: boolean;
  readonly prepare: (facts: F) => (item: T, before: readonly FlagCode[]) => readonly Flag[];
}

export interface PairRule extends Rule<PairMeasure, SequenceFacts> {
  /** The kinds of pair it judges. */
  readonly kinds: readonly PairKind[];
}
export type StationRule = Rule<StationMeasure, StationFacts>;
export type FrameRule = Rule<FrameMeasure, FrameFacts>;

const none: readonly Flag[] = [];
const stationPairs: readonly PairKind[] = ['neighbour', 'closure'];

/** A check of a pair between stations that has a model; an unmatched pair is judged by `unmatched` alone. */
const ifMatched = (check: (p: PairMeasure) => readonly Flag[]) => (p: PairMeasure): readonly Flag[] => (p.homography === null ? none : check(p));

const between = (p: PairMeasure): string => `${p.a} and ${p.b}`;

function mode<T>(xs: T[]): T | null {
  const counts = new Map<T, number>();
  for (const x of xs) counts.set(x, (counts.get(x) ?? 0) + 1);
  let best: T | null = null, n = 0;
  for (const [x, c] of counts) if (c > n) [best, n] = [x, c];
  return best;
}

interface ModalSettings {
  fNumber: number | null;
  iso: number | null;
  exposureTime: number | null;
  focalLength: number | null;
  whiteBalance: string | null;
}

const modalOf = (refs: readonly FrameSettings[]): ModalSettings => ({
  fNumber: mode(refs.map((s) => s.fNumber).filter((v): v is number => v !== null)),
  iso: mode(refs.map((s) => s.iso).filter((v): v is number => v !== null)),
  exposureTime: mode(refs.map((s) => s.exposureTime).filter((v): v is number => v !== null)),
  focalLength: mode(refs.map((s) => s.focalLength).filter((v): v is number => v !== null)),
  whiteBalance: mode(refs.map((s) => s.whiteBalance).filter((v): v is string => v !== null)),
});

/** "in the lower left" and the like: where a region's middle lies among the frame's thirds. */
function whereIn(m: { x: number; y: number; width: number; height: number }, size: { width: number; height: number } | null): string {
  if (!size) return 'in part';
  const col = Math.min(2, Math.floor((3 * (m.x + m.width / 2)) / size.width));
  const row = Math.min(2, Math.floor((3 * (m.y + m.height / 2)) / size.height));
  const v = ['upper', 'middle', 'lower'][row], h = ['left', 'centre', 'right'][col];
  return row === 1 && col === 1 ? 'in the middle' : row === 1 ? `at the ${h}` : col === 1 ? `in the ${v} middle` : `in the ${v} ${h}`;
}

/**
 * Pairs whose tie points do not fit the sequence's refined rotations, focal length and distortion,
 * when that is true of the typical pair (a single pair off is its own matter: parallax, movement or
 * a wrong match), with one piece of advice for them all; null when the fit is good.
 */
function lensMisfit(analysis: Analysis, stationOf: ReadonlyMap<string, StationMeasure>): { pairs: Map<string, number>; advice: string } | null {
  const g = analysis.geometry;
  if (!g || g.typicalRmsPx === undefined || !g.linkFits || analysis.frames.length === 0) return null;
  const longSide = Math.max(...analysis.frames.map((f) => Math.max(f.width, f.height)));
  const limit = lensMisfitLimitPx(longSide);
  if (!(g.typicalRmsPx > limit)) return null;
  const reference = new Map(analysis.stations.map((s) => [s.index, s.reference]));
  const pairs = new Map<string, number>();
  for (const l of g.linkFits) {
    const a = reference.get(l.stations[0]), b = reference.get(l.stations[1]);
    if (a !== undefined && b !== undefined && stationOf.has(a) && l.rmsPx > limit) pairs.set(`${a}:${b}`, l.rmsPx);
  }
  const exif = g.exifFocal35mm ? ` against ${millimetres(g.exifFocal35mm)} in EXIF` : '';
  const focal = g.focal35mm !== undefined ? `focal length ${millimetres(g.focal35mm)} (35 mm equivalent)${exif}` : 'focal length';
  const advice = `the frames do not fit one lens turning about one point: with the ${focal} and the lens distortion refined, matching points still miss by ${g.typicalRmsPx.toFixed(1)} px on a typical pair (a good fit stays under ${limit.toFixed(1)} px); the zoom or focus may have changed, the lens may be a fisheye, or the camera moved between frames: lock zoom and focus, turn about the lens and reshoot`;
  return { pairs, advice };
}

/**
 * Settings of a station's reference frame that differ from the sequence's. With `exposureJumped`
 * (a pair into the station already carries an exposure jump) shutter and ISO are left out: they are
 * how the jump came about, and one cause gets one flag.
 */
function settingsDrift(ref: FrameSettings, modal: ModalSettings, exposureJumped = false): string[] {
  const out: string[] = [];
  const stops = (a: number, b: number): number => Math.abs(Math.log2(a / b));
  if (ref.fNumber !== null && modal.fNumber !== null && stops(ref.fNumber * ref.fNumber, modal.fNumber * modal.fNumber) > 0.3) out.push(`aperture ${fNumber(ref.fNumber)} instead of ${fNumber(modal.fNumber)}`);
  if (!exposureJumped && ref.iso !== null && modal.iso !== null && stops(ref.iso, modal.iso) > 0.3) out.push(`${isoSpeed(ref.iso)} instead of ${Math.round(modal.iso)}`);
  if (!exposureJumped && ref.exposureTime !== null && modal.exposureTime !== null && stops(ref.exposureTime, modal.exposureTime) > 0.3) out.push(`shutter ${shutterTime(ref.exposureTime)} instead of ${shutterTime(modal.exposureTime)}`);
  if (ref.focalLength !== null && modal.focalLength !== null && Math.abs(ref.focalLength - modal.focalLength) > 0.02 * modal.focalLength) out.push(`focal length ${millimetres(ref.focalLength)} instead of ${millimetres(modal.focalLength)}`);
  if (ref.whiteBalance !== null && modal.whiteBalance !== null && ref.whiteBalance !== modal.whiteBalance) out.push(`white balance ${ref.whiteBalance} instead of ${modal.whiteBalance}`);
  return out;
}

// ---- Pairs -------------------------------------------------------------------------------------

/**
 * A pair that failed because nothing lies between its frames: its card says so with the hole's own
 * words (a listed advice appears once), not a vaguer no-match.
 */
export const coverageHole: PairRule = {
  name: 'coverage-hole', codes: ['coverage-hole'], kinds: stationPairs, alone: true,
  prepare: (facts) => (p) => {
    if (p.homography !== null) return none;
    const hole = facts.holeOf(p);
    return hole ? [{ code: 'coverage-hole', verdict: hole.verdict, advice: hole.advice }] : none;
  },
};

/** A pair between stations with no model: the turn does not close, or the frames do not match. */
export const unmatched: PairRule = {
  name: 'unmatched', codes: ['no-closure', 'no-match'], kinds: stationPairs,
  prepare: ({ analysis, budget }) => (p) => {
    if (p.homography !== null) return none;
    if (p.kind === 'closure') {
      const gap = analysis.geometry ? Math.max(0, ...analysis.geometry.gaps.map((g) => g.toYawDeg - g.fromYawDeg)) : 0;
      const deg = Math.round(gap);
      const missing = gap >= 0.5 ? `about ${degrees(deg)} of the turn ${deg === 1 ? 'is' : 'are'} not covered; ` : '';
      return [{ code: 'no-closure', verdict: analysis.sweepDeg !== null && analysis.sweepDeg >= 330 ? 'reshoot' : 'weak', advice: `the turn does not close between ${between(p)}: ${missing}add a frame between them` }];
    }
    if (p.predictedOverlap != null) {
      return [{ code: 'no-match', verdict: 'reshoot', advice: `no reliable match between ${between(p)}: overlap about ${pct(p.predictedOverlap)}, predicted from the turn between them; add a frame between them${p.predictedOverlap >= budget.weakOverlap ? ', or aim the overlap at more detail' : ''}` }];
    }
    return [{ code: 'no-match', verdict: 'reshoot', advice: `no reliable match between ${between(p)}: add a frame between them, or aim the overlap at more detail` }];
  },
};

/** A closure pair that matched, while the chain of neighbours does not close on it. */
export const closureMisses: PairRule = {
  name: 'closure-misses', codes: ['no-closure'], kinds: stationPairs,
  prepare: ({ analysis }) => ifMatched((p) => {
    const closure = analysis.geometry?.closure;
    if (p.kind !== 'closure' || !closure || closure.closes) return none;
    const off = closure.misclosureDeg === null ? '' : ` ${degrees(closure.misclosureDeg)}`;
    return [{ code: 'no-closure', verdict: 'weak', advice: `the turn comes round between ${between(p)} but misses the chain of neighbours by${off || ' too much'}: a pair may be matched wrongly, or the camera moved off its pivot; check the pairs before reshooting` }];
  }),
};

export const lowOverlap: PairRule = {
  name: 'low-overlap', codes: ['low-overlap'], kinds: stationPairs,
  prepare: ({ budget }) => ifMatched((p) => {
    const overlap = p.overlap ?? 0;
    if (overlap < budget.reshootOverlap) return [{ code: 'low-overlap', verdict: 'reshoot', advice: `overlap is only ${pct(overlap)} between ${between(p)}: add a frame between them` }];
    if (overlap < budget.weakOverlap) return [{ code: 'low-overlap', verdict: 'weak', advice: `overlap is ${pct(overlap)} between ${between(p)}: aim for 30-50 %, or add a frame between them` }];
    return none;
  }),
};

export const fewInliers: PairRule = {
  name: 'few-inliers', codes: ['few-inliers'], kinds: stationPairs,
  prepare: ({ budget }) => ifMatched((p) => {
    if (p.inliers < budget.minInliers / 2) return [{ code: 'few-inliers', verdict: 'reshoot', advice: `only ${p.inliers} matching points between ${between(p)}: add a frame between them` }];
    if (p.inliers < budget.minInliers) return [{ code: 'few-inliers', verdict: 'weak', advice: `only ${p.inliers} matching points between ${between(p)}: more overlap or more detail in it would help` }];
    return none;
  }),
};

export const parallax: PairRule = {
  name: 'parallax', codes: ['parallax'], kinds: stationPairs,
  prepare: () => ifMatched((p) =>
    p.parallax
      ? [{ code: 'parallax', verdict: 'weak', advice: `near and far things do not line up together in the overlap between ${between(p)} (${pct(p.misfit ?? 0)} of it off): the camera moved off its pivot; turn it about the lens's entrance pupil (common practice) and reshoot if the seam crosses near things` }]
      : none),
};

/** One flag for each region that moved, saying where in the first frame it lies. */
export const movement: PairRule = {
  name: 'movement', codes: ['movement'], kinds: stationPairs,
  prepare: ({ frameSize }) => ifMatched((p) =>
    (p.moved ?? []).map((m): Flag => ({ code: 'movement', verdict: 'weak', advice: `something moved between ${between(p)}, ${whereIn(m, frameSize(p.a))} of ${p.a}: a person, a wave or a branch there will ghost or be cut at the seam; reshoot one of them once it has passed` }))),
};

export const exposureJump: PairRule = {
  name: 'exposure-jump', codes: ['exposure-jump'], kinds: stationPairs,
  prepare: ({ analysis, budget, settingsOf, refs }) => {
    // Reference frames whose EXIF exposure (APEX EV100 = log2(N^2 / t) - log2(ISO / 100), ISO 2720)
    // differs from the sequence's usual settings by more than the budget allows between neighbours.
    const exposureUnlikeRest = new Set<string>();
    if (refs.length >= 3) {
      const ev = (s: { exposureTime: number | null; fNumber: number | null; iso: number | null }): number | null =>
        s.exposureTime && s.fNumber && s.iso ? Math.log2((s.fNumber * s.fNumber) / s.exposureTime) - Math.log2(s.iso / 100) : null;
      const usual = ev(modalOf(refs));
      for (const s of analysis.stations) {
        const own = ev(settingsOf.get(s.reference) ?? { exposureTime: null, fNumber: null, iso: null });
        if (usual !== null && own !== null && Math.abs(own - usual) > budget.maxEvDiff) exposureUnlikeRest.add(s.reference);
      }
    }
    return ifMatched((p) => {
      if (p.evDiff === null || !(Math.abs(p.evDiff) > budget.maxEvDiff)) return none;
      // A jump the camera's own settings explain (one frame exposed unlike the rest, as auto-exposure
      // does) is reshot at the settings of the rest, however small; one from the light alone is weak
      // until it is large, as a blend may hide it.
      const v: Verdict = Math.abs(p.evDiff) > 2 * budget.maxEvDiff || exposureUnlikeRest.has(p.a) || exposureUnlikeRest.has(p.b) ? 'reshoot' : 'weak';
      return [{ code: 'exposure-jump', verdict: v, advice: `exposure changed by ${signedEv(p.evDiff)} between ${between(p)}: lock exposure and reshoot` }];
    });
  },
};

/** Pairs the sequence's one lens does not fit; a pair whose own parallax or movement explains its misfit keeps that flag alone. */
export const lensMisfitRule: PairRule = {
  name: 'lens-misfit', codes: ['lens-misfit'], kinds: stationPairs,
  prepare: ({ analysis, stationOf }) => {
    const misfit = lensMisfit(analysis, stationOf);
    return (p, before) => {
      const miss = misfit?.pairs.get(`${p.a}:${p.b}`) ?? misfit?.pairs.get(`${p.b}:${p.a}`);
      if (!misfit || miss === undefined || before.includes('parallax') || before.includes('movement')) return none;
      return [{ code: 'lens-misfit', verdict: 'weak', advice: misfit.advice }];
    };
  },
};

/** A bracket frame that cannot be aligned with its reference, or has moved against it. */
export const bracketDrift: PairRule = {
  name: 'bracket-drift', codes: ['bracket-drift'], kinds: ['bracket'],
  prepare: ({ budget }) => (p) => {
    if (p.homography === null) return [{ code: 'bracket-drift', verdict: 'weak', advice: `${p.b} could not be aligned with its reference ${p.a}: check it for movement` }];
    if (p.shiftPx !== null && p.shiftPx > budget.maxBracketShiftPx) {
      const v: Verdict = p.shiftPx > 2 * budget.maxBracketShiftPx ? 'reshoot' : 'weak';
      return [{ code: 'bracket-drift', verdict: v, advice: `${p.b} moved ${Math.round(p.shiftPx)} px against its reference ${p.a}: the bracket will ghost when merged; reshoot it from a steady support` }];
    }
    return none;
  },
};

/** The pair rules in report order. Pairs of kind 'other' are measured, never flagged. */
export const pairRules: readonly PairRule[] = [coverageHole, unmatched, closureMisses, lowOverlap, fewInliers, parallax, movement, exposureJump, lensMisfitRule, bracketDrift];

// ---- Stations ----------------------------------------------------------------------------------

/** A station with fewer bracket frames than most (its frames carry it too). */
export const incompleteBracket: StationRule = {
  name: 'incomplete-bracket', codes: ['incomplete-bracket'],
  prepare: ({ analysis }) => {
    const modal = modalPattern(analysis.stations.map((s) => patternOf(s.evOffsets)));
    const modalSize = modal ? modal.split(',').length : 1;
    if (!modal || modalSize <= 1) return () => none;
    return (s) => {
      const pattern = patternOf(s.evOffsets);
      if (pattern === modal) return none;
      // Stations grouped by content have no EXIF offsets ('x'): the count is known, the offset is not.
      const missing = missingOffsets(modal, pattern).filter((o) => o !== 'x');
      const missingText = missing.length ? ` (missing ${missing.map((o) => signedEv(Number(o))).join(', ')})` : '';
      return [{ code: 'incomplete-bracket', verdict: 'reshoot', advice: `station ${s.index + 1} has ${s.frames.length} of ${modalSize} bracket frames${missingText}: reshoot the station` }];
    };
  },
};

/** Settings that photographers lock, compared between stations' reference frames (common practice; its frames carry it too). */
export const settingsDriftRule: StationRule = {
  name: 'settings-drift', codes: ['settings-drift'],
  prepare: ({ analysis, budget, settingsOf, refs }) => {
    if (refs.length < 3) return () => none;
    const modal = modalOf(refs);
    // Reference frames on a pair between stations whose brightness jumped beyond the budget.
    const jumped = new Set(analysis.pairs.filter((p) => p.kind !== 'bracket' && p.kind !== 'other' && p.evDiff !== null && Math.abs(p.evDiff) > budget.maxEvDiff).flatMap((p) => [p.a, p.b]));
    return (s) => {
      const ref = settingsOf.get(s.reference);
      if (!ref) return none;
      const drift = settingsDrift(ref, modal, jumped.has(s.reference));
      if (drift.length === 0) return none;
      return [{ code: 'settings-drift', verdict: 'weak', advice: `${drift.join(', ')} at ${s.reference} (station ${s.index + 1}): lock these settings for the whole sequence` }];
    };
  },
};

/** A station holding a bracket frame flagged against its reference, once for each such frame. */
export const stationBracketDrift: StationRule = {
  name: 'bracket-drift', codes: ['bracket-drift'],
  prepare: ({ pairs, stationOf }) => {
    const drifted = pairs.filter((p) => p.kind === 'bracket' && p.reasons.length > 0);
    return (s) => drifted.filter((p) => stationOf.get(p.b) === s).map((p): Flag => ({ code: 'bracket-drift', verdict: p.verdict, advice: p.advice[0] }));
  },
};

/** The station rules in report order. */
export const stationRules: readonly StationRule[] = [incompleteBracket, settingsDriftRule, stationBracketDrift];

// ---- Frames ------------------------------------------------------------------------------------

/** A frame carries what a station rule raised on its station. */
const onItsStation = (rule: StationRule): FrameRule => ({
  name: rule.name, codes: rule.codes,
  prepare: ({ stationFlags }) => (f) => stationFlags(f.file, rule.name),
});

/** Blur, against each registered neighbour on the content both see (core/sequence/blur-verdict.ts). */
export const blurred: FrameRule = {
  name: 'blurred', codes: ['blurred'],
  prepare: ({ analysis, budget }) => {
    const found = new Map<string, Flag[]>();
    for (const b of blurredFrames(analysis, budget.minSharpnessRatio)) {
      const list = found.get(b.file) ?? [];
      list.push({ code: 'blurred', verdict: b.verdict, advice: b.advice });
      found.set(b.file, list);
    }
    return (f) => found.get(f.file) ?? none;
  },
};

/** A bracket frame carries its pair's flags, with the pair's first advice. */
export const frameBracketDrift: FrameRule = {
  name: 'bracket-drift', codes: ['bracket-drift'],
  prepare: ({ pairs }) => {
    const brackets = pairs.filter((p) => p.kind === 'bracket');
    return (f) => brackets.filter((p) => p.b === f.file).flatMap((p) => p.reasons.map((code): Flag => ({ code, verdict: p.verdict, advice: p.advice[0] })));
  },
};

/**
 * Frame sizes: photographers shoot a sequence at one size (common practice); another size is a
 * changed setting, a crop, or a stray frame.
 */
export const sizeMismatch: FrameRule = {
  name: 'size-mismatch', codes: ['size-mismatch'],
  prepare: ({ analysis }) => {
    const sizeKey = (f: { width: number; height: number }): string => `${Math.max(f.width, f.height)}x${Math.min(f.width, f.height)}`;
    const usualSize = mode(analysis.frames.map(sizeKey));
    if (analysis.frames.length < 3 || !usualSize) return () => none;
    return (f) => (sizeKey(f) === usualSize ? none : [{ code: 'size-mismatch', verdict: 'weak', advice: `${f.file} is ${f.width}x${f.height} while the sequence is ${usualSize.replace('x', ' x ')}: a changed setting, a crop or a stray frame` }]);
  },
};

/** The frame rules in report order. */
export const frameRules: readonly FrameRule[] = [onItsStation(incompleteBracket), blurred, onItsStation(settingsDriftRule), frameBracketDrift, sizeMismatch];

// ---- A sequence as a whole, and a card of sequences --------------------------------------------

/** A check of a whole analysis: a sequence judged alone, or a card of sequences. Each problem makes the whole weak. */
export interface FolderRule {
  readonly name: string;
  readonly codes: readonly FolderCode[];
  readonly check: (analysis: Analysis) => readonly FolderProblem[];
}

/** Too few frames to make a panorama of. */
export const tooFewFrames: FolderRule = {
  name: 'too-few-frames', codes: ['no-frames', 'one-frame'],
  check: ({ frames }) => {
    if (frames.length === 0) return [{ code: 'no-frames', advice: 'no frame could be checked in this folder: is it the right folder, and are the files images?' }];
    if (frames.length === 1) return [{ code: 'one-frame', advice: 'only one frame could be checked: a panorama needs at least two overlapping frames' }];
    return [];
  },
};

/**
 * A sequence apart from the one before only by its content, shot at the same rhythm with the same
 * camera: a new panorama begun at once, or one panorama with a frame missing. Only the
 * photographer knows which, so it is said, and weighs as weak.
 */
export const sequenceBreak: FolderRule = {
  name: 'sequence-break', codes: ['sequence-break'],
  check: ({ sequences = [] }) => sequences
    .filter((s) => sequences.length > 1 && s.splitBy.length > 0 && s.splitBy.every((e) => e.by === 'content'))
    .flatMap((s) => s.splitBy.flatMap((e) => (e.by === 'content' ? [{ code: 'sequence-break' as const, advice: `${e.after} and ${e.before} share nothing, while nothing else sets them apart: read as two sequences. If they are one panorama, a frame is missing between them: reshoot it` }] : []))),
};

/** The rules of each sequence judged alone, in report order. */
export const sequenceRules: readonly FolderRule[] = [tooFewFrames];

/** The rules of a card read as several sequences, in report order (after its sequence's own when there is one). */
export const cardRules: readonly FolderRule[] = [sequenceBreak];
