import { availableParallelism } from 'node:os';
import type { FrameSample } from '../core/candidate-pairs.js';
import { sampleFeatures, screenPairs } from '../core/candidate-pairs.js';
import { normalise } from '../core/homography.js';
import { predictPairHomography, toAnalysisPixels } from '../core/guided-match.js';
import { shootingOrder } from '../core/natural-order.js';
import { overlapRegions } from '../core/overlap.js';
import type { Analysis, FrameMeasure, PairKind, PairMeasure, SequenceGeometry, SkippedFile } from '../core/report.js';
import { analysisToFull } from '../core/resolution.js';
import type { StationGroup } from '../core/stations.js';
import { groupStations } from '../core/stations.js';
import type { RotationLink } from '../core/rotations.js';
import { relativeRotation, rotationAngleOf } from '../core/rotations.js';
import { bracketShift } from '../core/bracket-shift.js';
import { lensFieldOfViewDeg, sequenceGeometry } from '../core/sequence-geometry.js';
import { focalPxFrom35mm } from '../core/sweep.js';
import type { AnalysisPool } from './analysis-pool.js';
import { createAnalysisPool } from './analysis-pool.js';
import type { FrameExif } from './exif.js';
import type { FeatureCache } from './feature-cache.js';
import { readFileHeaders } from './exif.js';
import { sequenceLook, strayReason } from '../core/strays.js';
import type { FrameAnalysis, PairAnalysis } from '../core/pair-analysis.js';
import { cornerShift, fullResolution } from '../core/pair-analysis.js';
import type { ScannedFile } from './scan.js';
import { byteCopies, scanFolder } from './scan.js';
import type { ShotPreference } from '../common/api.js';
import { oneFilePerShot } from './shot-pairs.js';
import { FrameGate, inOrder, slots } from './concurrency.js';
import type { FrameSummary, PlannedStation } from '../core/check-report.js';
import { frameMeasure, pairMeasure, skipsInOrder, stationMeasures, tiePointsAtFullResolution } from '../core/check-report.js';
import { estimatedTurnDeg, sequenceExifFocal, kindInRows, keepClosure, mayHaveClosed, otherReferencePairs, rowClosures, rowOfStations, sameViewOtherExposure, settleStation, showsAnotherView, splitStation, stationPairs, tryTurnClosure } from '../core/check-plan.js';

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

/** Frames in flight when the analysis runs in the calling thread. */
const inThreadLanes = 6;

/**
 * Worker threads for a command-line check: none on a machine of two cores or fewer, where analysing
 * in the command's own thread while sharp decodes the next frames on its threads was measured
 * faster and lighter than two workers (no second engine to start and warm up); else one per core.
 */
export function commandLineThreads(cores = availableParallelism()): number {
  return cores <= 2 ? 0 : cores;
}

/** A plain reason for a file that could not be analysed, from what the decoder or the system said. */
export function skipOf(file: string, err: unknown, size?: number): SkippedFile {
  const message = err instanceof Error ? err.message : String(err);
  const code = (err as NodeJS.ErrnoException)?.code;
  if (size === 0) return { file, code: 'unreadable', reason: 'empty file (0 bytes): copy it from the card again' };
  if (code === 'ENOENT') return { file, code: 'unreadable', reason: 'the file went away during the check' };
  // Codes first; the same by the message for an error that crossed from a worker thread without its code.
  if (code === 'EACCES' || code === 'EPERM' || /^(EACCES|EPERM):/.test(message)) return { file, code: 'unreadable', reason: 'no permission to read it' };
  // The medium failed (a bad sector, a card pulled, a failing reader), or the file ended before its size.
  if (code === 'EIO' || code === 'ENXIO' || code === 'ENODEV' || code === 'ESHORTREAD' || /^(EIO|ENXIO|ENODEV):|its size promised/.test(message)) return { file, code: 'unreadable', reason: 'read error: copy it from the card again' };
  if (code === 'ENOTREGULAR' || /is not a regular file/.test(message)) return { file, code: 'unreadable', reason: 'it is not a regular file (a pipe, a device or a socket): not read' };
  if (code === 'EISDIR') return { file, code: 'unreadable', reason: 'it is a folder, not a picture' };
  if (code === 'EFBIG') return { file, code: 'too-large', reason: 'too large to read safely (over the size read at most)' };
  if (/pixel limit/i.test(message)) return { file, code: 'too-large', reason: 'too large to decode safely (over the pixel limit)' };
  if (/no usable preview: the (\.\w+) container/i.test(message)) return { file, code: 'no-preview', reason: `RAW ${/(\.\w+) container/.exec(message)![1]} files are not read yet: shoot RAW+JPEG, or check exported JPEGs` };
  if (/no usable preview|TIFF byte order|TIFF mark/i.test(message)) return { file, code: 'no-preview', reason: 'holds no embedded preview Seamscout can read: shoot RAW+JPEG, or check exported JPEGs' };
  if (/timeout/i.test(message)) return { file, code: 'unreadable', reason: 'decoding took too long' };
  if (/corrupt JPEG data|inconsistent progression/i.test(message)) return { file, code: 'unreadable', reason: 'damaged (part of the picture is garbled): copy it from the card again' };
  if (/premature end|truncated|unexpected end|corrupt|invalid|cut short/i.test(message)) return { file, code: 'unreadable', reason: 'damaged or cut short: copy it from the card again' };
  if (/unsupported image format|bad seek|not a known file format|improper image header|input buffer/i.test(message)) return { file, code: 'not-an-image', reason: 'not an image Seamscout can read' };
  return { file, code: 'unreadable', reason: `cannot be read: ${message.split('\n')[0]}` };
}

/** A decoded frame: what the report needs of it, and its analysis while pairs still need it. */
interface Frame {
  readonly file: ScannedFile;
  readonly exif: FrameExif;
  readonly summary: FrameSummary;
  /** Features and pixels; let go (null) once no planned pair needs them. */
  data: FrameAnalysis | null;
}

interface PlannedPair {
  readonly i: number;
  readonly j: number;
  /** Changed once the geometry shows rows: a step between rows is not a neighbour pair. */
  kind: PairKind;
}

type Station = PlannedStation;

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
  const signal = options.signal;
  const folder = card.folder;
  try {
    const skipped: SkippedFile[] = [...card.skipped];
    const ordered = only ?? card.ordered;
    // A run is judged by its own look: another camera's sequence is unlike the card's majority.
    const look = only ? sequenceLook(only.map((o) => ({ width: o.size?.width ?? null, height: o.size?.height ?? null, make: o.exif.settings.make, model: o.exif.settings.model }))) : card.look;
    const n = ordered.length;
    // Skips found while decoding, by shooting order once all are known, so that the report does not
    // depend on which decode finished first.
    const decodeSkips: { k: number; skip: SkippedFile }[] = [];

    const byExif = ordered.some((o) => o.exif.settings.exposureTime !== null || o.exif.settings.evBias !== null);
    const planGroups = byExif ? groupStations(ordered.map((o) => ({ settings: o.exif.settings, captureMs: o.exif.captureMs, exposureMode: o.exif.exposureMode }))) : null;
    const largest = planGroups ? Math.max(1, ...planGroups.map((g) => g.members.length)) : 1;
    // Frames in flight. In this thread, sharp decodes them on its own threads while one is analysed
    // here; six keep both cores of a 2-core laptop busy (docs/performance.md).
    const lanes = pool.threads === 0 ? inThreadLanes : 2 * pool.threads;
    // Decoded frames held at once: the frames in flight, a station and its neighbours.
    const maxHeld = byExif && !options.allPairs ? lanes + 3 * largest + 2 : Infinity;

    const frames: (Frame | null | undefined)[] = new Array(n).fill(undefined);
    const stations: Station[] = [];
    const stationOf = new Int32Array(n).fill(-1);
    const planned: PlannedPair[] = [];
    const pairResults = new Map<string, PairAnalysis>();
    const pairsInFlight = new Map<string, Promise<void>>();
    /** Overlap predicted from the turn, for neighbour pairs that found no model even when guided. */
    const predictedOverlaps = new Map<string, number>();
    const need = new Int32Array(n);
    /** A small sample of each frame's keypoints, kept for screening pairs after the frame is let go. */
    const samples: FrameSample[] = new Array(n);
    const pairTasks: Promise<void>[] = [];
    const pairSlot = slots(Math.max(2, pool.threads));
    let framesDone = 0, pairsDone = 0, pairsAsked = 0;
    const gate = new FrameGate(maxHeld);
    let partialHook: (() => void) | null = null;
    let finalised = 0;
    const keepAll = !byExif || (options.allPairs ?? false);

    const release = (k: number): void => {
      const f = frames[k];
      if (!f || !f.data || keepAll || need[k] > 0) return;
      const s = stationOf[k];
      if (s < 0) return;
      const st = stations[s];
      // A reference waits for its neighbour pair with the next station; the first (and so the last)
      // waits for the closure pair.
      if (k === st.reference && (s === 0 || finalised <= s + 1)) return;
      f.data = null;
      gate.release();
    };

    // A pair asked for after its frames were let go (the closure pair of a row, known only once the
    // geometry shows rows) decodes them again: rare, and memory still follows the frames in flight.
    const reloads = new Map<number, Promise<FrameAnalysis>>();
    const dataOf = (k: number): Promise<FrameAnalysis> => {
      const f = frames[k];
      if (!f) return Promise.reject(new Error(`internal: frame ${k} of a pair was left out`));
      if (f.data) return Promise.resolve(f.data);
      let again = reloads.get(k);
      if (!again) {
        const o = ordered[k];
        again = (async () => {
          const data = (await options.cache?.get(o.scanned, maxSide)) ?? (await pool.analyseFrame(o.scanned.path, maxSide, signal));
          if (!f.data) {
            f.data = data;
            gate.take();
          }
          return f.data;
        })().finally(() => reloads.delete(k));
        reloads.set(k, again);
      }
      return again;
    };

    // Planned pairs are retried on full-size corners when they find no model; pairs screened in by
    // --all-pairs are not (most of them do not overlap, and a retry would double their cost).
    // Brackets (one pose) are not compared block by block: movement and parallax are for pairs
    // between stations. A pair's frames are held from the moment it is asked for until it is done.
    const analysePair = (i: number, j: number, retryAtFullSize = true, overlapBlocks = stationOf[i] !== stationOf[j] || stationOf[i] < 0): Promise<void> => {
      const key = `${i}:${j}`;
      if (pairResults.has(key)) return Promise.resolve();
      const running = pairsInFlight.get(key);
      if (running) return running;
      need[i]++;
      need[j]++;
      // The pair total grows as pairs are asked for (a closure pair, a station split on its content).
      pairsAsked++;
      const task = pairSlot(async () => {
        signal?.throwIfAborted();
        const [a, b] = await Promise.all([dataOf(i), dataOf(j)]);
        const result = await pool.analysePair(a, b, { retryAtFullSize, overlapBlocks }, signal);
        // A pair analysed on this thread cannot be stopped halfway; once cancelled, it is not reported.
        signal?.throwIfAborted();
        pairResults.set(key, result);
        options.onProgress?.({ phase: 'pairs', done: ++pairsDone, total: pairsAsked, file: frames[j]?.file.name });
      }).finally(() => {
        pairsInFlight.delete(key);
        need[i]--;
        need[j]--;
        release(i);
        release(j);
        partialHook?.();
        streamReady();
      });
      pairsInFlight.set(key, task);
      return task;
    };

    // Pairs go out in the order of `planned` (the final report's order), each once its result is in.
    let streamed = 0;
    const nameWidth = Math.max(8, ...ordered.map((o) => o.file.length));
    const streamReady = (): void => {
      if (!options.onPair) return;
      while (streamed < planned.length) {
        const { i, j, kind } = planned[streamed];
        if (!pairResults.has(`${i}:${j}`)) return;
        streamed++;
        options.onPair({ pair: pairMeasureOf(i, j, kind, null).pair, frames: [frameMeasureOf(i), frameMeasureOf(j)], nameWidth, run: 0 });
      }
    };
    const keep = (p: PlannedPair): void => {
      planned.push(p);
      streamReady();
    };

    const plan = (i: number, j: number, kind: PairKind): void => {
      keep({ i, j, kind });
      const task = analysePair(i, j);
      // Awaited all together later; a failure must not count as unhandled before that.
      task.catch(() => undefined);
      pairTasks.push(task);
    };

    const finalise = (members: number[], reference: number, offsets: (number | null)[], groupedBy: Station['groupedBy']): void => {
      const s = stations.length;
      stations.push({ members, reference, offsets, groupedBy });
      for (const m of members) stationOf[m] = s;
      for (const p of stationPairs(members, reference, s > 0 ? stations[s - 1].reference : null)) plan(p.i, p.j, p.kind);
      finalised = s + 1;
      if (s > 0) release(stations[s - 1].reference);
      for (const m of members) release(m);
    };

    /** The frames of an EXIF group still in play, its reference (the member nearest 0 EV when it failed) and their offsets. */
    const settle = (g: StationGroup) => settleStation(g, (m) => !!frames[m]);
    const decoded = (g: StationGroup): boolean => g.members.every((m) => frames[m] !== undefined);
    /** A bracket frame's content check: its pair with the reference, compared at once (no blocks: one pose). */
    const checkMembers = (members: number[], reference: number): Promise<unknown> =>
      Promise.all(members.filter((m) => m !== reference).map((m) => analysePair(reference, m, true, false)));

    /**
     * EXIF suggests, content decides: a bracket frame sees its reference's view. A member that
     * matches its reference with far less overlap shows another view (an auto-exposure jump or a
     * quick frame taken for a bracket) and becomes a station of its own, in shooting order; its pair
     * with the reference is measured again as a neighbour pair. A member that does not match at all
     * stays (the content cannot tell; its bracket pair says so).
     */
    const finaliseGroup = async (g: StationGroup): Promise<void> => {
      const settled = settle(g);
      const { members, reference } = settled;
      if (members.length === 0) return;
      await checkMembers(members, reference);
      const apart = members.filter((m) => {
        const r = m === reference ? undefined : pairResults.get(`${reference}:${m}`);
        return r !== undefined && showsAnotherView(r);
      });
      for (const m of apart) pairResults.delete(`${reference}:${m}`);
      for (const p of splitStation(settled, apart, g.groupedBy)) finalise(p.members, p.reference, p.offsets, p.groupedBy);
    };

    // EXIF stations, finalised in order once all their frames are decoded (or failed) and checked
    // against their content; the checks of later stations start as soon as their frames are in.
    let nextGroup = 0;
    const checking = new Set<number>();
    let pump: Promise<void> = Promise.resolve();
    let pumping = false;
    const finaliseReady = (): void => {
      if (!planGroups) return;
      for (let x = nextGroup; x < planGroups.length; x++) {
        if (checking.has(x) || !decoded(planGroups[x])) continue;
        checking.add(x);
        const { members, reference } = settle(planGroups[x]);
        // A copy found later may still take a member out: the group is settled again when finalised.
        checkMembers(members, reference).catch(() => undefined);
      }
      if (pumping) return;
      pumping = true;
      pump = (async () => {
        try {
          while (nextGroup < planGroups.length && decoded(planGroups[nextGroup])) await finaliseGroup(planGroups[nextGroup++]);
        } finally {
          pumping = false;
        }
      })();
      pump.catch(() => undefined);
    };

    // Which copy of one picture stays does not depend on which decode finished first: the first in
    // shooting order (then by name) stays, whichever came in first.
    const seenPixels = new Map<string, number>();
    const leaveOut = (k: number, skip: SkippedFile): void => {
      const f = frames[k];
      if (f?.data) gate.drop();
      if (f) f.data = null;
      frames[k] = null;
      decodeSkips.push({ k, skip });
    };
    const loadFrame = async (k: number): Promise<void> => {
      const o = ordered[k];
      await gate.room();
      signal?.throwIfAborted();
      gate.take();
      try {
        let data = (await options.cache?.get(o.scanned, maxSide)) ?? null;
        if (!data) {
          data = await pool.analyseFrame(o.scanned.path, maxSide, signal);
          await options.cache?.put(o.scanned, maxSide, data);
        }
        const summary: FrameSummary = {
          fullWidth: data.fullWidth, fullHeight: data.fullHeight, anWidth: data.features.width, anHeight: data.features.height,
          keypoints: data.features.keypoints.count, sharpness: data.sharpness, fingerprint: data.fingerprint,
        };
        frames[k] = { file: o.scanned, exif: o.exif, summary, data };
        samples[k] = sampleFeatures(data.features);
        // The decoded size is the one that counts (a header may say another, a RAW file says none).
        const stray = strayReason({ width: data.fullWidth, height: data.fullHeight, make: o.exif.settings.make, model: o.exif.settings.model }, look);
        const copyOf = seenPixels.get(data.fingerprint);
        if (stray !== null) leaveOut(k, { file: o.file, code: 'not-in-sequence', reason: stray });
        else if (copyOf !== undefined && copyOf < k) {
          // Copies of one picture (a card copied twice into one folder): the first one counts.
          leaveOut(k, { file: o.file, code: 'duplicate', reason: `the same picture as ${ordered[copyOf].file}: left out` });
        } else {
          if (copyOf !== undefined) leaveOut(copyOf, { file: ordered[copyOf].file, code: 'duplicate', reason: `the same picture as ${o.file}: left out` });
          seenPixels.set(data.fingerprint, k);
        }
      } catch (err) {
        gate.drop();
        if (signal?.aborted) throw err;
        decodeSkips.push({ k, skip: skipOf(o.file, err, o.scanned.size) });
        frames[k] = null;
      } finally {
        gate.wake();
        options.onProgress?.({ phase: 'frames', done: ++framesDone, total: n, file: o.file });
      }
      finaliseReady();
    };

    // Results as they arrive, at most every 700 ms.
    if (options.onPartial) {
      const onPartial = options.onPartial;
      let last = 0;
      partialHook = () => {
        const now = Date.now();
        if (now - last < 700) return;
        last = now;
        onPartial(assemble(null).analysis);
      };
    }

    await inOrder(ordered, lanes, (_o, k) => loadFrame(k), signal);
    await pump;

    if (!byExif) {
      // Stations from content: consecutive frames showing one view at different brightness.
      const loadedIdx = frames.map((f, k) => (f ? k : -1)).filter((k) => k >= 0);
      const consecutive = loadedIdx.slice(1).map((k, x) => [loadedIdx[x], k] as [number, number]);
      await Promise.all(consecutive.map(([i, j]) => analysePair(i, j)));
      const links = consecutive.map(([i, j]) => {
        const p = pairResults.get(`${i}:${j}`)!;
        const { h } = fullResolution(p, frames[i]!.summary, frames[j]!.summary);
        return sameViewOtherExposure(h, frames[i]!.summary.fullWidth, frames[i]!.summary.fullHeight, p.evDiff);
      });
      const groups = groupStations(loadedIdx.map((k) => ({ settings: frames[k]!.exif.settings, captureMs: frames[k]!.exif.captureMs })), links);
      for (const g of groups) finalise(g.members.map((m) => loadedIdx[m]), loadedIdx[g.reference], g.offsets, g.groupedBy);
    }
    await Promise.all(pairTasks);
    await retryGuided();

    // The geometry from the neighbour chain; it says whether the frames may have come round.
    const before = geometryOf(planned.filter((p) => p.kind === 'neighbour'), null);
    if (tryTurnClosure(stations.length, before?.horizontalDeg ?? null)) {
      // The closure pair, when the frames cover most of a turn (or the geometry is unknown); kept
      // when it matched or the turn should close.
      const closure: PlannedPair = { i: stations[stations.length - 1].reference, j: stations[0].reference, kind: 'closure' };
      await analysePair(closure.i, closure.j);
      const r = pairResults.get(`${closure.i}:${closure.j}`)!;
      if (keepClosure(r.homography !== null, before?.horizontalDeg ?? null)) keep(closure);
    }
    if (options.allPairs || shotInRows()) {
      // Every other pair of reference frames, screened cheaply on a sample of keypoints first (the
      // samples were kept when the frames were decoded: the frames themselves may be let go).
      const refs = stations.map((s) => s.reference);
      const chosen = screenPairs(samples, otherReferencePairs(refs, planned));
      for (const [i, j] of chosen) keep({ i, j, kind: 'other' });
      // Without --all-pairs the frames were let go: a few pairs at a time, so that a frame decoded
      // again is let go once its pairs are done instead of waiting for every pair asked for.
      if (keepAll) await Promise.all(chosen.map(([i, j]) => analysePair(i, j, false)));
      else await inOrder(chosen, Math.max(2, pool.threads), ([i, j]) => analysePair(i, j, false), signal);
    }
    const closurePair = planned.find((p) => p.kind === 'closure') ?? null;
    let geometry = geometryOf(planned.filter((p) => p.kind === 'neighbour' || p.kind === 'other'), closurePair);
    if (geometry && geometry.rows.length >= 2) geometry = await byRows(geometry);
    if (geometry) await judgeAgainThroughLens(geometry);
    return assemble(geometry);

    /**
     * Whether the neighbour chain alone cannot place the set: a set shot in rows reaches the next
     * row through one step that may see little of the last frame, and only pairs across the rows
     * join them. Told from the geometry of the pairs: the matched neighbour pairs have turned the
     * camera a full turn before the last station (a single turn, closing or not, turns less than
     * that before its last pair; a failed or narrow pair alone says nothing of rows: a single turn
     * may have a gap).
     */
    function shotInRows(): boolean {
      if (stations.length < 4) return false;
      const neighbours = planned.filter((p) => p.kind === 'neighbour');
      const chain = geometryOf(neighbours, null);
      if (!chain) return false;
      const sizes = referenceSizes();
      let turned = 0;
      for (const p of neighbours.slice(0, -1)) {
        const m = fullPair(p.i, p.j);
        const r = m && relativeRotation(m.h, chain.focalPx, sizes[stationOf[p.i]], sizes[stationOf[p.j]]);
        if (r) turned += rotationAngleOf(r);
      }
      return turned >= 360;
    }

    /**
     * Neighbour pairs without a model, tried once more where the turn between their stations is
     * known from the other matched pairs (the closure pair of a full turn included, tried here when
     * it was not yet): corners are sought where the predicted homography puts the overlap and
     * matched near where it puts them. A pair that still finds no model keeps its predicted overlap
     * for the report. Frames already let go are decoded again, two at a time.
     */
    /** A frame's analysis for a late step, decoded again when it was let go; not kept (the step holds at most the pair it works on). */
    async function transientData(k: number): Promise<FrameAnalysis> {
      const o = ordered[k];
      return frames[k]!.data ?? (await options.cache?.get(o.scanned, maxSide)) ?? (await pool.analyseFrame(o.scanned.path, maxSide, signal));
    }

    /**
     * Pairs whose overlap was found off (parallax, or something moved) are judged again once the
     * sequence's lens is refined: on frames as an ideal pinhole camera would have seen them, where
     * a turn about the camera's centre leaves nothing off whatever the lens did. What is off there
     * is the pair's answer; lens distortion alone no longer reads as parallax or movement.
     */
    async function judgeAgainThroughLens(g: SequenceGeometry): Promise<void> {
      const d = g.distortion;
      if (!d || (d.k1 === 0 && d.k2 === 0)) return;
      for (const p of planned) {
        if (p.kind === 'bracket') continue;
        const key = `${p.i}:${p.j}`;
        const r = pairResults.get(key);
        if (!r?.homography || !(r.parallax || (r.moved?.length ?? 0) > 0)) continue;
        const sa = frames[p.i]!.summary, sb = frames[p.j]!.summary;
        const lens = { focalA: (g.focalPx * sa.anWidth) / sa.fullWidth, focalB: (g.focalPx * sb.anWidth) / sb.fullWidth, distortion: { k1: d.k1, k2: d.k2 } };
        const again = await pool.judgeThroughLens(await transientData(p.i), await transientData(p.j), r.tiePoints, lens, signal);
        if (again) pairResults.set(key, { ...r, moved: again.moved, misfit: again.misfit, parallax: again.parallax });
      }
    }

    async function retryGuided(): Promise<void> {
      const predicted = predictedOverlaps;
      const failed = planned.filter((p) => p.kind === 'neighbour' && !pairResults.get(`${p.i}:${p.j}`)?.homography);
      if (failed.length === 0 || stations.length < 3) return;
      const chain = geometryOf(planned.filter((p) => p.kind === 'neighbour'), null);
      if (!chain) return;
      const sizes = referenceSizes();
      // The closure pair is worth a try when the turns measured, with the typical turn for each
      // failed pair, and a frame's width come to most of a full turn.
      const turns = planned.filter((p) => p.kind === 'neighbour').flatMap((p) => {
        const m = fullPair(p.i, p.j);
        const r = m && relativeRotation(m.h, chain.focalPx, sizes[stationOf[p.i]], sizes[stationOf[p.j]]);
        return r ? [rotationAngleOf(r)] : [];
      });
      const turned = estimatedTurnDeg(turns, failed.length, lensFieldOfViewDeg(sizes[0].width, chain.focalPx, chain.distortion ?? { k1: 0, k2: 0 }));
      const closure = { i: stations[stations.length - 1].reference, j: stations[0].reference };
      if (mayHaveClosed(turned) && !pairResults.has(`${closure.i}:${closure.j}`)) {
        pairResults.set(`${closure.i}:${closure.j}`, await pool.analysePair(await transientData(closure.i), await transientData(closure.j), undefined, signal));
      }
      const links = [...planned.filter((p) => p.kind !== 'bracket'), { ...closure, kind: 'closure' as const }].flatMap((p) => {
        const m = fullPair(p.i, p.j);
        return m ? [{ i: stationOf[p.i], j: stationOf[p.j], homography: m.h, points: m.points }] : [];
      });
      for (const p of failed) {
        const si = stationOf[p.i], sj = stationOf[p.j];
        const h = predictPairHomography(links, chain.focalPx, sizes, si, sj);
        if (!h) continue;
        const sa = frames[p.i]!.summary, sb = frames[p.j]!.summary;
        const inAnalysis = toAnalysisPixels(h, analysisToFull(sa.fullWidth, sa.fullHeight, sa.anWidth, sa.anHeight), analysisToFull(sb.fullWidth, sb.fullHeight, sb.anWidth, sb.anHeight));
        const overlap = overlapRegions(h, sizes[si].width, sizes[si].height, sizes[sj].width, sizes[sj].height).overlap;
        if (!inAnalysis || overlap <= 0) {
          predicted.set(`${p.i}:${p.j}`, overlap);
          continue;
        }
        const r = await pool.analysePair(await transientData(p.i), await transientData(p.j), { retryAtFullSize: false, overlapBlocks: true, predicted: Array.from(normalise(inAnalysis)) }, signal);
        if (r.homography) pairResults.set(`${p.i}:${p.j}`, r);
        else predicted.set(`${p.i}:${p.j}`, overlap);
      }
    }

    /**
     * A set shot in rows: the step from one row to the next is no neighbour pair (it is judged by
     * coverage instead), and each row that comes most of the way round gets its own closure pair,
     * its last station to its first; the turn-wide closure pair no longer applies.
     */
    async function byRows(g: SequenceGeometry): Promise<SequenceGeometry | null> {
      const rowOf = rowOfStations(g.rows, stations.length);
      for (const p of planned) {
        p.kind = kindInRows(p.kind, rowOf[stationOf[p.i]], rowOf[stationOf[p.j]]);
      }
      const hfov = referenceSizes().map((size) => lensFieldOfViewDeg(size.width, g.focalPx, g.distortion ?? { k1: 0, k2: 0 }));
      for (const { last, first, coveredDeg } of rowClosures(g.rows, g.poses, hfov)) {
        const i = stations[last].reference, j = stations[first].reference;
        const known = planned.find((p) => (p.i === i && p.j === j) || (p.i === j && p.j === i));
        if (known) known.kind = 'closure';
        else {
          await analysePair(i, j);
          if (keepClosure(pairResults.get(`${i}:${j}`)!.homography !== null, coveredDeg)) keep({ i, j, kind: 'closure' });
        }
      }
      return geometryOf(planned.filter((p) => p.kind !== 'bracket'), null);
    }

    /** Full-resolution size of each station's reference frame, by station. */
    function referenceSizes(): { width: number; height: number }[] {
      return stations.map((st) => ({ width: frames[st.reference]!.summary.fullWidth, height: frames[st.reference]!.summary.fullHeight }));
    }

    /** Full-resolution homography and tie points of a measured pair, or null without a model. */
    function fullPair(i: number, j: number): { h: Float64Array; scale: number; points: Float64Array } | null {
      const r = pairResults.get(`${i}:${j}`);
      if (!r) return null;
      const sa = frames[i]!.summary, sb = frames[j]!.summary;
      const { h, scale } = fullResolution(r, sa, sb);
      if (!h) return null;
      return { h, scale, points: tiePointsAtFullResolution(r.tiePoints, sa, sb) };
    }

    /** Station rotations, coverage and closure from the given matched pairs (frames' indices). */
    function geometryOf(pairs: readonly PlannedPair[], closure: PlannedPair | null): SequenceGeometry | null {
      if (stations.length < 2) return null;
      const link = (p: PlannedPair): RotationLink | null => {
        const m = fullPair(p.i, p.j);
        return m ? { i: stationOf[p.i], j: stationOf[p.j], homography: m.h, points: m.points } : null;
      };
      const links = pairs.map(link).filter((l): l is RotationLink => l !== null);
      if (links.length === 0) return null;
      const sizes = referenceSizes();
      // One focal length for the set: the EXIF 35 mm equivalents, where every station has one.
      const f35 = stations.map((st) => frames[st.reference]!.exif.settings.focalLength35);
      const { exifFocal35mm, exifFocalPx } = sequenceExifFocal(f35, sizes[0].width, sizes[0].height);
      return sequenceGeometry({ sizes, exifFocalPx, exifFocal35mm, links, closure: closure ? link(closure) : null });
    }

    /** Focal length of a frame in full-resolution pixels: the sequence's, else its EXIF's. */
    function focalOf(k: number, geometry: SequenceGeometry | null): number | null {
      if (geometry) return geometry.focalPx;
      const f35 = frames[k]!.exif.settings.focalLength35, sm = frames[k]!.summary;
      return f35 ? focalPxFrom35mm(f35, sm.fullWidth, sm.fullHeight) : null;
    }

    /** One measured pair as the report has it, with its tie points at full resolution. */
    function pairMeasureOf(i: number, j: number, kind: PairKind, geometry: SequenceGeometry | null): { pair: PairMeasure; tiePoints: TiePointSet | null } {
      const name = (k: number): string => frames[k]!.file.name;
      const r = pairResults.get(`${i}:${j}`)!;
      const sa = frames[i]!.summary, sb = frames[j]!.summary;
      const { scale } = fullResolution(r, sa, sb);
      const full = fullPair(i, j);
      const h = full?.h ?? null;
      const shiftPx = full && kind === 'bracket' ? (bracketShift(full.points, sa.fullWidth, sa.fullHeight, focalOf(i, geometry) ?? NaN) ?? cornerShift(full.h, sa.fullWidth, sa.fullHeight)) : null;
      const pair = pairMeasure(name(i), name(j), kind, r, { homography: h, scale, shiftPx, predictedOverlap: predictedOverlaps.get(`${i}:${j}`) });
      return { pair, tiePoints: full ? { a: name(i), b: name(j), points: full.points } : null };
    }

    function frameMeasureOf(k: number): FrameMeasure {
      const f = frames[k]!;
      return frameMeasure(f.file.name, f.summary, f.exif);
    }

    /** The measurements so far: frames of finalised stations, the stations, the pairs measured yet. */
    function assemble(geometry: SequenceGeometry | null): CheckResult {
      const name = (k: number): string => frames[k]!.file.name;
      const tiePoints: TiePointSet[] = [];
      const measured = planned.filter(({ i, j }) => pairResults.has(`${i}:${j}`));
      const pairs: PairMeasure[] = measured.map(({ i, j, kind }) => {
        const m = pairMeasureOf(i, j, kind, geometry);
        if (m.tiePoints) tiePoints.push(m.tiePoints);
        return m.pair;
      });
      const inStations = stations.flatMap((s) => s.members).sort((p, q) => p - q);
      const frameMeasures: FrameMeasure[] = inStations.map(frameMeasureOf);
      return { analysis: { folder, frames: frameMeasures, stations: stationMeasures(stations, name), pairs, skipped: skipsInOrder(skipped, decodeSkips), rawPlusJpeg: card.rawPlusJpeg, sweepDeg: geometry?.horizontalDeg ?? null, geometry }, tiePoints, peakFramesHeld: gate.peak };
    }
  } finally {
    if (!options.pool) await pool.destroy();
  }
}
