/**
 * The one report type: what the command line writes, what the app shows and what every export is
 * made from. Measurements come from analysis; verdicts, reasons and advice are applied to them by
 * `judge` (verdicts.ts) against a match budget, so a new budget re-judges without re-analysis.
 */

import type { PlanItem } from './reshoot-plan.js';

export type Verdict = 'ok' | 'weak' | 'reshoot';

/** Flag codes, lower-case-hyphenated words of our own. */
export type FlagCode =
  | 'low-overlap'
  | 'few-inliers'
  | 'no-match'
  | 'exposure-jump'
  | 'settings-drift'
  | 'blurred'
  | 'incomplete-bracket'
  | 'bracket-drift'
  | 'no-closure'
  | 'coverage-hole'
  | 'movement'
  | 'parallax'
  | 'size-mismatch'
  | 'lens-misfit';

/**
 * Why a file was left out; 'not-in-sequence': another camera, size or shape than most of the card (a
 * stray file); 'not-a-file': named like a picture but no regular file (a folder, a pipe, a device, a
 * link to nothing), never opened.
 */
export type SkipCode = 'unreadable' | 'too-large' | 'not-an-image' | 'not-a-file' | 'duplicate' | 'no-preview' | 'same-shot' | 'not-in-sequence';

/**
 * Shots written twice by the camera, as a RAW file and a JPEG of one shutter press: how many the
 * folder holds and which file of each was checked (the other is listed as skipped, 'same-shot').
 */
export interface RawPlusJpeg {
  readonly checked: 'jpeg' | 'raw';
  readonly shots: number;
}

/** Problems of the folder as a whole. */
export type FolderCode = 'no-frames' | 'one-frame' | 'sequence-break';

export type PairKind = 'neighbour' | 'closure' | 'bracket' | 'other';

/** Camera settings of a frame as read from EXIF (null where absent or implausible). */
export interface FrameSettings {
  readonly exposureTime: number | null;
  readonly fNumber: number | null;
  readonly iso: number | null;
  readonly evBias: number | null;
  readonly focalLength: number | null;
  readonly focalLength35: number | null;
  readonly whiteBalance: string | null;
  readonly make: string | null;
  readonly model: string | null;
}

export interface FrameMeasure {
  /** Base name of the file. */
  readonly file: string;
  /** Full resolution after orientation. */
  readonly width: number;
  readonly height: number;
  /** Capture time as local ISO 8601 with milliseconds, or null. */
  readonly captureTime: string | null;
  readonly settings: FrameSettings;
  /** Contrast-independent sharpness over the whole frame (fine over coarse gradient energy); judges blur only where no pair registers the frame. */
  readonly sharpness: number;
  readonly keypoints: number;
  /** Fingerprint of the decoded pixels: equal for copies of one picture. */
  readonly fingerprint?: string;
}

export interface StationMeasure {
  readonly index: number;
  readonly frames: readonly string[];
  readonly reference: string;
  /** Each frame's exposure offset against the reference in EV (from EXIF), null where unknown. */
  readonly evOffsets: readonly (number | null)[];
  /** How the frames were grouped: from EXIF, from content, or a single frame. */
  readonly groupedBy: 'exif' | 'content' | 'single';
}

export interface PairMeasure {
  readonly a: string;
  readonly b: string;
  readonly kind: PairKind;
  readonly matches: number;
  readonly inliers: number;
  /** Tentative matches inside the overlap (n_f of Brown & Lowe's verification). */
  readonly matchesInOverlap: number;
  /** 0..1, null when unmatched. */
  readonly overlap: number | null;
  /** Row-major, full-resolution pixel (x, y) of a to b, pixel centres at integers; null when unmatched. */
  readonly homography: readonly number[] | null;
  /** b minus a in EV over the overlap, in linear light; null when unmatched or unmeasurable. */
  readonly evDiff: number | null;
  /** Root-mean-square transfer error of the inliers at full resolution, px. */
  readonly rmsError: number | null;
  /** Largest displacement of a frame corner under the homography, full-resolution px (bracket pairs). */
  readonly shiftPx: number | null;
  /**
   * Regions of a (full-resolution px) whose content b does not repeat where the homography puts
   * it: something moved between the shots. Absent or null when not measured.
   */
  readonly moved?: readonly { readonly x: number; readonly y: number; readonly width: number; readonly height: number }[] | null;
  /** Share (0..1) of the overlap's textured blocks that do not line up under the homography, even a few pixels off; absent or null when not measured. */
  readonly misfit?: number | null;
  /** Near and far things do not line up together (parallax): absent or null when not measured. */
  readonly parallax?: boolean | null;
  /**
   * For a pair without a model: its overlap (0..1) predicted from the turn between its stations, as
   * the other matched pairs place them. Absent or null when the pair has a model or cannot be placed.
   */
  readonly predictedOverlap?: number | null;
  /**
   * b's sharpness over a's on the content both see, each on its own pixels (core/pair/shared-sharpness.ts):
   * the geometric mean over four directions, under 1 when b is the softer. Absent when not
   * measured; null without a model or with too little texture in the overlap.
   */
  readonly sharpnessRatio?: number | null;
  /** The same per direction as seen in a; absent or null as sharpnessRatio. */
  readonly sharpnessByDirection?: SharpnessByDirection | null;
  /** Textured blocks both frames see that the sharpness ratio was measured on; absent or null as sharpnessRatio. */
  readonly sharpnessBlocks?: number | null;
}

/** A ratio per direction: across, down, and along the falling (top left to bottom right) and rising diagonals. */
export interface SharpnessByDirection {
  readonly horizontal: number;
  readonly vertical: number;
  readonly fallingDiagonal: number;
  readonly risingDiagonal: number;
}

export interface SkippedFile {
  readonly file: string;
  readonly code: SkipCode;
  readonly reason: string;
}

/** Where one station points, in degrees: yaw from the first placed station, pitch and roll against the set's own level. */
export interface StationPoseMeasure {
  readonly station: number;
  readonly yawDeg: number;
  readonly pitchDeg: number;
  readonly rollDeg: number;
}

/** A stretch of the horizon no frame covers, in degrees of yaw (toYawDeg may pass 360). */
export interface HorizonGap {
  readonly fromYawDeg: number;
  readonly toYawDeg: number;
}

/** The sequence as seen from its one place: station rotations, what they cover, whether a turn closes. */
export interface SequenceGeometry {
  /** Focal length in full-resolution pixels, refined with the rotations and the lens's distortion. */
  readonly focalPx: number;
  /** Where the focal length started from (the refinement takes it from there). */
  readonly focalFrom: 'exif' | 'homographies';
  /** The focal length EXIF gives (its 35 mm equivalent on the long side), full-resolution pixels; null without it. */
  readonly exifFocalPx?: number | null;
  /** That 35 mm equivalent as written in EXIF, mm; null without it. */
  readonly exifFocal35mm?: number | null;
  /** The refined focal length as a 35 mm equivalent (36 mm on the long side), to compare with EXIF. */
  readonly focal35mm?: number;
  /**
   * Radial distortion refined for the sequence, Brown's model x_d = x_u (1 + k1 r^2 + k2 r^4) with
   * r the radius normalised by the focal length (r = tan of the angle off the axis), principal point
   * at the frame centre. terms: how many were refined (k2 only when k1 alone fits poorly; else 0).
   */
  readonly distortion?: { readonly k1: number; readonly k2: number; readonly terms: 0 | 1 | 2 };
  /** Median over the pairs of their tie points' RMS error under the refined rotations and lens, pixels. */
  readonly typicalRmsPx?: number;
  /** Each pair of stations that took part in the refinement, with its tie points' RMS error there, pixels. */
  readonly linkFits?: readonly { readonly stations: readonly [number, number]; readonly rmsPx: number }[];
  readonly poses: readonly StationPoseMeasure[];
  /** Stations no chain of matched pairs reaches. */
  readonly unplaced: readonly number[];
  /** Degrees of the horizon the placed frames cover (360 for a full turn). */
  readonly horizontalDeg: number;
  /** Degrees of pitch they cover. */
  readonly verticalDeg: number;
  readonly gaps: readonly HorizonGap[];
  /** How the matched closure pair agrees with the chain of neighbours; null when no closure pair matched. */
  readonly closure: { readonly misclosureDeg: number | null; readonly closes: boolean } | null;
  /** Root-mean-square transfer error of the tie points under the refined rotations and lens, pixels. */
  readonly rmsPx: number;
  /** Rows of stations at one pitch, lowest first (one row for a single sweep). */
  readonly rows: readonly { readonly pitchDeg: number; readonly stations: readonly number[] }[];
}

/** Everything analysis produces, before judging. */
export interface Analysis {
  readonly folder: string;
  readonly frames: readonly FrameMeasure[];
  readonly stations: readonly StationMeasure[];
  readonly pairs: readonly PairMeasure[];
  readonly skipped: readonly SkippedFile[];
  /** RAW+JPEG shots and which file of each was checked; absent or null when there are none. */
  readonly rawPlusJpeg?: RawPlusJpeg | null;
  /** Degrees of the horizon covered (the geometry's horizontalDeg), or null without geometry. */
  readonly sweepDeg: number | null;
  readonly geometry: SequenceGeometry | null;
  /**
   * The card's sequences, each measured on its own; absent for a folder checked as one sequence
   * (reports written before cards were split). With one sequence, the fields above are its own.
   */
  readonly sequences?: readonly SequenceAnalysis[];
  /** Frames that belong to no sequence. */
  readonly singleShots?: readonly SingleShot[];
}

/**
 * What set a sequence apart from the frames shot before it on the card, as evidence: a pause far
 * longer than the sequence's own rhythm, a change of camera, lens, focal length or orientation, or
 * content (consecutive frames that share nothing while each overlaps its own neighbours).
 */
export type SequenceSplit =
  | { readonly by: 'pause'; readonly seconds: number; readonly rhythmSeconds: number }
  | { readonly by: 'camera'; readonly from: string | null; readonly to: string | null }
  | { readonly by: 'lens'; readonly from: string | null; readonly to: string | null }
  | { readonly by: 'focal-length'; readonly fromMm: number; readonly toMm: number }
  | { readonly by: 'orientation'; readonly from: 'landscape' | 'portrait'; readonly to: 'landscape' | 'portrait' }
  | { readonly by: 'content'; readonly after: string; readonly before: string };

/** One sequence of a card, measured on its own: what a folder's analysis holds for one sequence. */
export interface SequenceAnalysis extends Pick<Analysis, 'frames' | 'stations' | 'pairs' | 'sweepDeg' | 'geometry'> {
  /** Counting from 1, in shooting order. */
  readonly index: number;
  /** Why it is apart from the sequence before it; empty for the first. */
  readonly splitBy: readonly SequenceSplit[];
}

/** A frame of the card that belongs to no sequence: listed, not flagged. */
export interface SingleShot {
  readonly file: string;
  readonly captureTime: string | null;
  /** Why it stands alone, in words. */
  readonly reason: string;
}

/** A stretch of the sphere no frame sees, in a set shot in rows or up to a pole, with where to aim. */
export interface CoverageHole {
  readonly code: 'coverage-hole';
  readonly verdict: Verdict;
  /** Where to aim a frame to fill it: the hole's middle, in the poses' yaw and pitch. */
  readonly yawDeg: number;
  readonly pitchDeg: number;
  /** Its extent in degrees of yaw (measured at its middle's pitch) and of pitch. */
  readonly widthDeg: number;
  readonly heightDeg: number;
  /** The cap above or below the frames when the set reaches up or down to it. */
  readonly pole: 'zenith' | 'nadir' | null;
  readonly advice: string;
  /**
   * For a gap in a row: the stations either side of it in that row (counting from 0), lower index
   * first; null for other holes. A failed pair between exactly these stations is this hole.
   */
  readonly between?: readonly [number, number] | null;
}

/**
 * Something the coverage shows that asks for nothing: the zenith or nadir left open by a set that
 * does not reach toward it, while no full sphere was declared. Not a flag; the verdict stays ok.
 */
export interface CoverageNote {
  readonly pole: 'zenith' | 'nadir';
  /** About where the open cap begins, pitch in degrees (its edge follows the frames' outlines). */
  readonly pitchDeg: number;
  readonly text: string;
}

export interface FolderProblem {
  readonly code: FolderCode;
  readonly advice: string;
}

export interface Finding {
  readonly verdict: Verdict;
  readonly reasons: readonly FlagCode[];
  readonly advice: readonly string[];
}

export const reportSchema = 'seamscout-report/1';

export interface ReportFrame extends FrameMeasure, Finding {
  readonly station: number;
  readonly flags: readonly FlagCode[];
}

export interface ReportStation extends StationMeasure, Finding {
  readonly flags: readonly FlagCode[];
}

export type ReportPair = PairMeasure & Finding;

/** One sequence of a card, judged on its own, as if it were alone in a folder. */
export interface ReportSequence {
  readonly index: number;
  readonly splitBy: readonly SequenceSplit[];
  /** Its first and last frames in shooting order: a sequence is known by its first file. */
  readonly firstFile: string;
  readonly lastFile: string;
  /** Capture times of its first and last frames (local ISO 8601), or null. */
  readonly startTime: string | null;
  readonly endTime: string | null;
  readonly verdict: Verdict;
  readonly counts: Report['counts'];
  readonly sweepDeg: number | null;
  readonly geometry: SequenceGeometry | null;
  readonly frames: readonly ReportFrame[];
  readonly stations: readonly ReportStation[];
  readonly pairs: readonly ReportPair[];
  readonly holes: readonly CoverageHole[];
  readonly coverageNotes: readonly CoverageNote[];
  /** Its reshoot plan, as if it were alone in a folder (station indices its own); absent in reports written before plans. */
  readonly plan?: readonly PlanItem[];
}

export interface Report {
  readonly schema: typeof reportSchema;
  readonly verdict: Verdict;
  readonly folder: string;
  readonly budget: MatchBudget;
  readonly sweepDeg: number | null;
  readonly geometry: SequenceGeometry | null;
  readonly counts: { readonly frames: number; readonly stations: number; readonly ok: number; readonly weak: number; readonly reshoot: number };
  readonly frames: readonly ReportFrame[];
  readonly stations: readonly ReportStation[];
  readonly pairs: readonly ReportPair[];
  readonly skipped: readonly SkippedFile[];
  /** RAW+JPEG shots and which file of each was checked; absent or null when there are none. */
  readonly rawPlusJpeg?: RawPlusJpeg | null;
  readonly folderProblems: readonly FolderProblem[];
  /** Holes in the coverage of sets shot in rows or up to a pole; empty for a single sweep. */
  readonly holes?: readonly CoverageHole[];
  /** Open zenith or nadir of a set shot in rows that neither reaches toward it nor declares a full sphere. */
  readonly coverageNotes?: readonly CoverageNote[];
  /**
   * The card's sequences, each judged on its own (absent in reports written before cards were
   * split). With several, the frames, stations, pairs and holes above are all of theirs together
   * (station indices counted across the card) and the geometry above is null.
   */
  readonly sequences?: readonly ReportSequence[];
  /** Frames that belong to no sequence: listed, not flagged. */
  readonly singleShots?: readonly SingleShot[];
  /**
   * What to do at the site, by station in shooting order (core/sequence/reshoot-plan.ts): on a card of
   * several sequences, each sequence's items in turn, each saying its sequence, with station indices
   * counted across the card as in `stations`. Absent in reports written before plans.
   */
  readonly plan?: readonly PlanItem[];
}

/** The minimum evidence a pair needs, and the other thresholds verdicts are judged by. */
export interface MatchBudget {
  /** Fewest inliers for an ok pair; below it weak, below half of it reshoot. Brown & Lowe's rule applies on top. */
  readonly minInliers: number;
  /** Overlap (0..1) under which a neighbour pair must be reshot. */
  readonly reshootOverlap: number;
  /** Overlap (0..1) under which a neighbour pair is weak. */
  readonly weakOverlap: number;
  /** Largest EV difference between neighbouring reference frames before it counts as an exposure jump. */
  readonly maxEvDiff: number;
  /**
   * A frame less sharp than this share of each registered neighbour's on the content both see (and a
   * bracket frame than its reference's) is blurred; a frame no pair registers is compared with the
   * sequence's median over the whole frame instead.
   */
  readonly minSharpnessRatio: number;
  /** Largest shift of a bracket frame against its reference, full-resolution px. */
  readonly maxBracketShiftPx: number;
  /**
   * The set is meant to cover the whole sphere: an open zenith or nadir is a hole to reshoot even
   * when no frame reaches toward it. Absent in reports written before it existed (read as false).
   */
  readonly fullSphere?: boolean;
}

/**
 * Defaults: overlap under 20 % reshoot and under 30 % weak, exposure within 0.5 EV (common practice:
 * photography guides ask for 30-50 % overlap and locked exposure); inliers at least 20 over Brown &
 * Lowe's n_i > 8 + 0.3 n_f; blur and bracket shift thresholds of our own, set on rendered sequences.
 */
export const defaultBudget: MatchBudget = {
  minInliers: 20,
  reshootOverlap: 0.2,
  weakOverlap: 0.3,
  maxEvDiff: 0.5,
  minSharpnessRatio: 0.65,
  maxBracketShiftPx: 4,
  fullSphere: false,
};
