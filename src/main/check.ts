import { availableParallelism } from 'node:os';
import { shootingOrder } from '../core/sequence/natural-order.js';
import type { Analysis, FrameMeasure, PairMeasure, SkippedFile } from '../core/sequence/report.js';
import type { AnalysisPool } from './analysis-pool.js';
import { createAnalysisPool } from './analysis-pool.js';
import type { FrameExif } from './exif.js';
import type { FeatureCache } from './feature-cache.js';
import { readFileHeaders } from './exif.js';
import { sequenceLook, strayReason } from '../core/sequence/strays.js';
import type { ScannedFile } from './scan.js';
import { byteCopies, scanFolder } from './scan.js';
import type { ShotPreference } from '../common/api.js';
import { oneFilePerShot } from './shot-pairs.js';
import { inOrder } from './concurrency.js';
import { CheckRun } from './check-run.js';
import { skipOf } from './skip-reasons.js';

export interface CheckProgress {
  readonly phase: 'frames' | 'pairs';
  readonly done: number;
  readonly total: number;
  readonly file?: string;
}

export interface CheckOptions {
  readonly recursive?: boolean;
  /** Match every plausible pair (multi-row or unordered sets), not only neighbours. */
  readonly allPairs?: boolean;
  /** Longest side of the analysis image, px. */
  readonly maxSide?: number;
  /** Worker threads; 0 runs in this thread. */
  readonly threads?: number;
  readonly pool?: AnalysisPool;
  /** Which file of a RAW+JPEG pair to check (default: the JPEG). */
  readonly prefer?: ShotPreference;
  /** Where frame analyses are kept between checks; none by default. */
  readonly cache?: FeatureCache | null;
  readonly onProgress?: (p: CheckProgress) => void;
  /** The measurements so far, while pairs are still being matched (results as they arrive). */
  readonly onPartial?: (analysis: Analysis) => void;
  /**
   * Each pair as soon as it is measured, in the order of the final report's pairs (a pair is held
   * back only until those before it are out). Its measures are final for the pair alone; what the
   * sequence adds later (the lens, the closure, a guided retry) may still change them and its verdict.
   */
  readonly onPair?: (e: PairStreamed) => void;
  readonly signal?: AbortSignal;
}

/** Inlier correspondences of one pair at full resolution: xa, ya, xb, yb per point. */
export interface TiePointSet {
  readonly a: string;
  readonly b: string;
  readonly points: Float64Array;
}

/** A pair measured while the check runs, with its two frames (enough to judge the pair alone). */
export interface PairStreamed {
  readonly pair: PairMeasure;
  readonly frames: readonly [FrameMeasure, FrameMeasure];
  /** Longest file name of the run, for a table whose columns do not move as lines come. */
  readonly nameWidth: number;
  /** Which run of the card this pair belongs to (set by checkCard; 0 for one folder checked alone). */
  readonly run: number;
}

export interface CheckResult {
  readonly analysis: Analysis;
  readonly tiePoints: readonly TiePointSet[];
  /** Most frames whose pixels and features were held at once (memory follows this). */
  readonly peakFramesHeld: number;
}

/**
 * Default analysis size: 1500 px on the long side, a quarter of a 24 MP frame's 6000 px, so JPEG
 * decoding can shrink on load by 1/4 (GUIDE section 10); accurate to well under a pixel there.
 */
export const defaultMaxSide = 1500;

/**
 * Worker threads for a command-line check: none on a machine of two cores or fewer, where analysing
 * in the command's own thread while sharp decodes the next frames on its threads was measured
 * faster and lighter than two workers (no second engine to start and warm up); else one per core.
 */
export function commandLineThreads(cores = availableParallelism()): number {
  return cores <= 2 ? 0 : cores;
}

/** Frames smaller than this on their long side are no frames of a panorama (a thumbnail, a 1x1 placeholder). Our own. */
const minSequenceSide = 256;

/** A file of the card that may be a frame of a sequence, with what its header says. */
export interface CardFile {
  readonly file: string;
  readonly captureMs: number | null;
  readonly scanned: ScannedFile;
  readonly exif: FrameExif;
  /** Width and height from the header, after EXIF rotation; null when the header does not say. */
  readonly size: { readonly width: number; readonly height: number } | null;
}

/** What a folder holds for a check, read once: the frames in shooting order and the files left out. */
export interface CardContents {
  readonly folder: string;
  readonly ordered: readonly CardFile[];
  readonly skipped: readonly SkippedFile[];
  readonly rawPlusJpeg: Analysis['rawPlusJpeg'];
  /** The size, shape and camera most of the card's files share: a decoded frame unlike it is set apart. */
  readonly look: ReturnType<typeof sequenceLook>;
}

/**
 * Reads a folder's file list and headers (never writing to it): one file per shot, byte copies and
 * files that do not belong to the card's sequences set apart, the rest in shooting order.
 */
export async function readCard(folder: string, options: Pick<CheckOptions, 'recursive' | 'prefer' | 'signal'> = {}): Promise<CardContents> {
  const signal = options.signal;
  const scan = await scanFolder(folder, options.recursive ?? false);
  const shots = oneFilePerShot(scan.files, options.prefer ?? 'jpeg');
  const skipped: SkippedFile[] = [...scan.problems.map((p) => ({ file: p.name, code: p.code, reason: p.reason })), ...shots.skipped];
  const read = await inOrder(shots.files, 8, (f) => readFileHeaders(f.path), signal);
  // A file whose head cannot be read (a read fault, cut short, no permission) is reported now, not decoded.
  read.forEach((r, i) => {
    if (r.error) skipped.push(skipOf(shots.files[i].name, r.error, shots.files[i].size));
  });
  const files = shots.files.filter((_, i) => !read[i].error);
  const heads = read.filter((r) => !r.error).map((r): [FrameExif, { width: number; height: number } | null] => [r.exif, r.size]);
  // Files that are not part of the sequence (another camera, size or shape than most of the card)
  // are left out before stations are grouped, so they cannot split a station or break a turn.
  const memberOf = (exif: FrameExif, size: { width: number; height: number } | null) => ({ width: size?.width ?? null, height: size?.height ?? null, make: exif.settings.make, model: exif.settings.model });
  // Byte-identical copies are left out before stations are grouped (a copy's repeated exposure
  // would split its station): the first in shooting order, then by name, stays.
  const copyOf = new Map<number, number>();
  for (const set of await byteCopies(files)) {
    const [first, ...rest] = shootingOrder(set.map((i) => ({ i, file: files[i].name, captureMs: heads[i][0].captureMs })));
    for (const r of rest) copyOf.set(r.i, first.i);
  }
  const look = sequenceLook(heads.filter((_, i) => !copyOf.has(i)).map(([exif, size]) => memberOf(exif, size)));
  const members = files.map((file, i) => ({ file: file.name, captureMs: heads[i][0].captureMs, scanned: file, exif: heads[i][0], size: heads[i][1], copyOf: copyOf.get(i), stray: strayReason(memberOf(...heads[i]), look) }));
  // Another camera's run of frames (a phone panorama on a camera's card) is a sequence of its own,
  // which the split finds by the change of camera; only a lone file unlike the card stays apart.
  const byTime = shootingOrder(members.filter((m) => m.copyOf === undefined));
  const lookKey = (m: (typeof members)[number]): string | null =>
    m.stray !== null && m.size && Math.max(m.size.width, m.size.height) >= minSequenceSide ? `${m.exif.settings.make}|${m.exif.settings.model}|${Math.max(m.size.width, m.size.height)}x${Math.min(m.size.width, m.size.height)}` : null;
  for (let a = 0; a < byTime.length; ) {
    const key = lookKey(byTime[a]);
    let b = a + 1;
    while (key !== null && b < byTime.length && lookKey(byTime[b]) === key) b++;
    if (key !== null && b - a >= 2) for (let k = a; k < b; k++) byTime[k].stray = null;
    a = b;
  }
  for (const m of members) {
    if (m.copyOf !== undefined) skipped.push({ file: m.file, code: 'duplicate', reason: `the same picture as ${files[m.copyOf].name}: left out` });
    else if (m.stray !== null) skipped.push({ file: m.file, code: 'not-in-sequence', reason: m.stray });
  }
  const ordered = shootingOrder(members.filter((m) => m.copyOf === undefined && m.stray === null)).map(({ file, captureMs, scanned, exif, size }) => ({ file, captureMs, scanned, exif, size }));
  return { folder, ordered, skipped, rawPlusJpeg: shots.rawPlusJpeg, look };
}

/**
 * The sequence check: reads a folder (never writing to it), analyses every frame in the worker pool,
 * groups stations, matches the pairs that matter and returns the measurements, unjudged. The whole
 * folder is one sequence here; a card of several is split first (card-check.ts).
 */
export async function runCheck(folder: string, options: CheckOptions = {}): Promise<CheckResult> {
  return checkFrames(await readCard(folder, options), null, options);
}

/**
 * Checks the frames of a card read before (all of them, or the given ones, in shooting order) as
 * one sequence.
 *
 * It streams: stations are grouped from EXIF before any decoding, a station's pairs are matched as
 * soon as its frames and its neighbour's are decoded, and a frame's pixels and features are let go
 * once no planned pair needs them, so memory follows the frames in flight, not the length of the
 * sequence. (Without EXIF exposure data, stations come from the content, which needs every frame
 * first; with --all-pairs, every reference frame is kept for the pairs between them.)
 */
export async function checkFrames(card: CardContents, only: readonly CardFile[] | null, options: CheckOptions = {}): Promise<CheckResult> {
  const maxSide = options.maxSide ?? defaultMaxSide;
  const pool = options.pool ?? createAnalysisPool(options.threads);
  try {
    return await new CheckRun(card, only, options, pool, maxSide).run();
  } finally {
    if (!options.pool) await pool.destroy();
  }
}
