/**
 * One run of the sequence check (see checkFrames in check.ts): its state is the fields, each step a
 * method. What to plan and judge is decided in the core (check-plan.ts, check-report.ts); this
 * class keeps the order of the I/O, the memory gate and the streaming.
 */
import type { FrameSample } from '../core/pair/candidate-pairs.js';
import { sampleFeatures, screenPairs } from '../core/pair/candidate-pairs.js';
import { normalise } from '../core/geometry/homography.js';
import { predictPairHomography, toAnalysisPixels } from '../core/pair/guided-match.js';
import { overlapRegions } from '../core/geometry/overlap.js';
import type { FrameMeasure, PairKind, PairMeasure, SequenceGeometry, SkippedFile } from '../core/sequence/report.js';
import { analysisToFull } from '../core/image/resolution.js';
import type { StationGroup } from '../core/sequence/stations.js';
import { groupStations } from '../core/sequence/stations.js';
import type { RotationLink } from '../core/geometry/rotations.js';
import { relativeRotation, rotationAngleOf } from '../core/geometry/rotations.js';
import { bracketShift } from '../core/geometry/bracket-shift.js';
import { lensFieldOfViewDeg, sequenceGeometry } from '../core/sequence/sequence-geometry.js';
import { focalPxFrom35mm } from '../core/geometry/sweep.js';
import type { AnalysisPool } from './analysis-pool.js';
import type { FrameExif } from './exif.js';
import { sequenceLook, strayReason } from '../core/sequence/strays.js';
import type { FrameAnalysis, PairAnalysis } from '../core/pair/pair-analysis.js';
import { cornerShift, fullResolution } from '../core/pair/pair-analysis.js';
import type { ScannedFile } from './scan.js';
import { FrameGate, inOrder, slots } from './concurrency.js';
import type { FrameSummary, PlannedStation } from '../core/sequence/check-report.js';
import { frameMeasure, pairMeasure, skipsInOrder, stationMeasures, tiePointsAtFullResolution } from '../core/sequence/check-report.js';
import type { SettledStation } from '../core/sequence/check-plan.js';
import {
  estimatedTurnDeg, sequenceExifFocal, kindInRows, keepClosure, mayHaveClosed, otherReferencePairs, rowClosures, rowOfStations, sameViewOtherExposure,
  settleStation, showsAnotherView, splitStation, stationPairs, tryTurnClosure,
} from '../core/sequence/check-plan.js';
import type { CardContents, CardFile, CheckOptions, CheckResult, TiePointSet } from './check.js';
import { skipOf } from './skip-reasons.js';

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

/** Frames in flight when the analysis runs in the calling thread. */
const inThreadLanes = 6;

export class CheckRun {
  private readonly signal: AbortSignal | undefined;
  private readonly folder: string;
  private readonly skipped: SkippedFile[];
  private readonly ordered: readonly CardFile[];
  /** A run is judged by its own look: another camera's sequence is unlike the card's majority. */
  private readonly look: CardContents['look'];
  private readonly n: number;
  /** Skips found while decoding, by shooting order once all are known, so that the report does not depend on which decode finished first. */
  private readonly decodeSkips: { k: number; skip: SkippedFile }[] = [];
  private readonly byExif: boolean;
  private readonly planGroups: StationGroup[] | null;
  /** Frames in flight. */
  private readonly lanes: number;
  private readonly keepAll: boolean;

  private readonly frames: (Frame | null | undefined)[];
  private readonly stations: Station[] = [];
  private readonly stationOf: Int32Array;
  private readonly planned: PlannedPair[] = [];
  private readonly pairResults = new Map<string, PairAnalysis>();
  private readonly pairsInFlight = new Map<string, Promise<void>>();
  /** Overlap predicted from the turn, for neighbour pairs that found no model even when guided. */
  private readonly predictedOverlaps = new Map<string, number>();
  private readonly need: Int32Array;
  /** A small sample of each frame's keypoints, kept for screening pairs after the frame is let go. */
  private readonly samples: FrameSample[];
  private readonly pairTasks: Promise<void>[] = [];
  private readonly pairSlot: ReturnType<typeof slots>;
  private framesDone = 0;
  private pairsDone = 0;
  private pairsAsked = 0;
  private readonly gate: FrameGate;
  private partialHook: (() => void) | null = null;
  private finalised = 0;
  /** Frames decoded again for a pair asked for after they were let go. */
  private readonly reloads = new Map<number, Promise<FrameAnalysis>>();
  /** Pairs streamed out so far (a prefix of `planned`). */
  private streamed = 0;
  private readonly nameWidth: number;
  /** The next EXIF group to finalise, the groups whose content check has started, and the loop finalising them. */
  private nextGroup = 0;
  private readonly checking = new Set<number>();
  private pump: Promise<void> = Promise.resolve();
  private pumping = false;
  /** Which frame holds each picture seen so far, by its pixels' fingerprint. */
  private readonly seenPixels = new Map<string, number>();

  constructor(
    private readonly card: CardContents,
    only: readonly CardFile[] | null,
    private readonly options: CheckOptions,
    private readonly pool: AnalysisPool,
    private readonly maxSide: number,
  ) {
    this.signal = options.signal;
    this.folder = card.folder;
    this.skipped = [...card.skipped];
    this.ordered = only ?? card.ordered;
    this.look = only ? sequenceLook(only.map((o) => ({ width: o.size?.width ?? null, height: o.size?.height ?? null, make: o.exif.settings.make, model: o.exif.settings.model }))) : card.look;
    const n = (this.n = this.ordered.length);
    this.byExif = this.ordered.some((o) => o.exif.settings.exposureTime !== null || o.exif.settings.evBias !== null);
    this.planGroups = this.byExif ? groupStations(this.ordered.map((o) => ({ settings: o.exif.settings, captureMs: o.exif.captureMs, exposureMode: o.exif.exposureMode }))) : null;
    const largest = this.planGroups ? Math.max(1, ...this.planGroups.map((g) => g.members.length)) : 1;
    // Frames in flight. In this thread, sharp decodes them on its own threads while one is analysed
    // here; six keep both cores of a 2-core laptop busy (docs/performance.md).
    this.lanes = pool.threads === 0 ? inThreadLanes : 2 * pool.threads;
    // Decoded frames held at once: the frames in flight, a station and its neighbours.
    const maxHeld = this.byExif && !options.allPairs ? this.lanes + 3 * largest + 2 : Infinity;
    this.frames = new Array(n).fill(undefined);
    this.stationOf = new Int32Array(n).fill(-1);
    this.need = new Int32Array(n);
    this.samples = new Array(n);
    this.pairSlot = slots(Math.max(2, pool.threads));
    this.gate = new FrameGate(maxHeld);
    this.keepAll = !this.byExif || (options.allPairs ?? false);
    this.nameWidth = Math.max(8, ...this.ordered.map((o) => o.file.length));
  }

  /** The whole run: frames decoded and stations planned as they come, then the pairs of the sequence as a whole. */
  async run(): Promise<CheckResult> {
    const { options, stations, planned } = this;
    // Results as they arrive, at most every 700 ms.
    if (options.onPartial) {
      const onPartial = options.onPartial;
      let last = 0;
      this.partialHook = () => {
        const now = Date.now();
        if (now - last < 700) return;
        last = now;
        onPartial(this.assemble(null).analysis);
      };
    }

    await inOrder(this.ordered, this.lanes, (_o, k) => this.loadFrame(k), this.signal);
    await this.pump;
    if (!this.byExif) await this.stationsFromContent();
    await Promise.all(this.pairTasks);
    await this.retryGuided();

    // The geometry from the neighbour chain; it says whether the frames may have come round.
    const before = this.geometryOf(planned.filter((p) => p.kind === 'neighbour'), null);
    if (tryTurnClosure(stations.length, before?.horizontalDeg ?? null)) await this.turnClosure(before);
    if (options.allPairs || this.shotInRows()) await this.otherPairs();
    const closurePair = planned.find((p) => p.kind === 'closure') ?? null;
    let geometry = this.geometryOf(planned.filter((p) => p.kind === 'neighbour' || p.kind === 'other'), closurePair);
    if (geometry && geometry.rows.length >= 2) geometry = await this.byRows(geometry);
    if (geometry) await this.judgeAgainThroughLens(geometry);
    return this.assemble(geometry);
  }

  private release(k: number): void {
    const f = this.frames[k];
    if (!f || !f.data || this.keepAll || this.need[k] > 0) return;
    const s = this.stationOf[k];
    if (s < 0) return;
    const st = this.stations[s];
    // A reference waits for its neighbour pair with the next station; the first (and so the last)
    // waits for the closure pair.
    if (k === st.reference && (s === 0 || this.finalised <= s + 1)) return;
    f.data = null;
    this.gate.release();
  }

  /**
   * A frame's analysis for a pair. A pair asked for after its frames were let go (the closure pair
   * of a row, known only once the geometry shows rows) decodes them again: rare, and memory still
   * follows the frames in flight.
   */
  private dataOf(k: number): Promise<FrameAnalysis> {
    const f = this.frames[k];
    if (!f) return Promise.reject(new Error(`internal: frame ${k} of a pair was left out`));
    if (f.data) return Promise.resolve(f.data);
    let again = this.reloads.get(k);
    if (!again) {
      const o = this.ordered[k];
      again = (async () => {
        const data = (await this.options.cache?.get(o.scanned, this.maxSide)) ?? (await this.pool.analyseFrame(o.scanned.path, this.maxSide, this.signal));
        if (!f.data) {
          f.data = data;
          this.gate.take();
        }
        return f.data;
      })().finally(() => this.reloads.delete(k));
      this.reloads.set(k, again);
    }
    return again;
  }

  /**
   * Matches a pair once. Planned pairs are retried on full-size corners when they find no model;
   * pairs screened in by --all-pairs are not (most of them do not overlap, and a retry would
   * double their cost). Brackets (one pose) are not compared block by block: movement and
   * parallax are for pairs between stations. A pair's frames are held from the moment it is asked
   * for until it is done.
   */
  private analysePair(i: number, j: number, retryAtFullSize = true, overlapBlocks = this.stationOf[i] !== this.stationOf[j] || this.stationOf[i] < 0): Promise<void> {
    const key = `${i}:${j}`;
    if (this.pairResults.has(key)) return Promise.resolve();
    const running = this.pairsInFlight.get(key);
    if (running) return running;
    this.need[i]++;
    this.need[j]++;
    // The pair total grows as pairs are asked for (a closure pair, a station split on its content).
    this.pairsAsked++;
    const signal = this.signal;
    const task = this.pairSlot(async () => {
      signal?.throwIfAborted();
      const [a, b] = await Promise.all([this.dataOf(i), this.dataOf(j)]);
      const result = await this.pool.analysePair(a, b, { retryAtFullSize, overlapBlocks }, signal);
      // A pair analysed on this thread cannot be stopped halfway; once cancelled, it is not reported.
      signal?.throwIfAborted();
      this.pairResults.set(key, result);
      this.options.onProgress?.({ phase: 'pairs', done: ++this.pairsDone, total: this.pairsAsked, file: this.frames[j]?.file.name });
    }).finally(() => {
      this.pairsInFlight.delete(key);
      this.need[i]--;
      this.need[j]--;
      this.release(i);
      this.release(j);
      this.partialHook?.();
      this.streamReady();
    });
    this.pairsInFlight.set(key, task);
    return task;
  }

  /** Pairs go out in the order of `planned` (the final report's order), each once its result is in. */
  private streamReady(): void {
    const onPair = this.options.onPair;
    if (!onPair) return;
    while (this.streamed < this.planned.length) {
      const { i, j, kind } = this.planned[this.streamed];
      if (!this.pairResults.has(`${i}:${j}`)) return;
      this.streamed++;
      onPair({ pair: this.pairMeasureOf(i, j, kind, null).pair, frames: [this.frameMeasureOf(i), this.frameMeasureOf(j)], nameWidth: this.nameWidth, run: 0 });
    }
  }

  private keep(p: PlannedPair): void {
    this.planned.push(p);
    this.streamReady();
  }

  private plan(i: number, j: number, kind: PairKind): void {
    this.keep({ i, j, kind });
    const task = this.analysePair(i, j);
    // Awaited all together later; a failure must not count as unhandled before that.
    task.catch(() => undefined);
    this.pairTasks.push(task);
  }

  private finalise(members: number[], reference: number, offsets: (number | null)[], groupedBy: Station['groupedBy']): void {
    const { stations } = this;
    const s = stations.length;
    stations.push({ members, reference, offsets, groupedBy });
    for (const m of members) this.stationOf[m] = s;
    for (const p of stationPairs(members, reference, s > 0 ? stations[s - 1].reference : null)) this.plan(p.i, p.j, p.kind);
    this.finalised = s + 1;
    if (s > 0) this.release(stations[s - 1].reference);
    for (const m of members) this.release(m);
  }

  /** The frames of an EXIF group still in play, its reference (the member nearest 0 EV when it failed) and their offsets. */
  private settle(g: StationGroup): SettledStation {
    return settleStation(g, (m) => !!this.frames[m]);
  }

  private decoded(g: StationGroup): boolean {
    return g.members.every((m) => this.frames[m] !== undefined);
  }

  /** A bracket frame's content check: its pair with the reference, compared at once (no blocks: one pose). */
  private checkMembers(members: number[], reference: number): Promise<unknown> {
    return Promise.all(members.filter((m) => m !== reference).map((m) => this.analysePair(reference, m, true, false)));
  }

  /**
   * EXIF suggests, content decides: a bracket frame sees its reference's view. A member that
   * matches its reference with far less overlap shows another view (an auto-exposure jump or a
   * quick frame taken for a bracket) and becomes a station of its own, in shooting order; its pair
   * with the reference is measured again as a neighbour pair. A member that does not match at all
   * stays (the content cannot tell; its bracket pair says so).
   */
  private async finaliseGroup(g: StationGroup): Promise<void> {
    const settled = this.settle(g);
    const { members, reference } = settled;
    if (members.length === 0) return;
    await this.checkMembers(members, reference);
    const apart = members.filter((m) => {
      const r = m === reference ? undefined : this.pairResults.get(`${reference}:${m}`);
      return r !== undefined && showsAnotherView(r);
    });
    for (const m of apart) this.pairResults.delete(`${reference}:${m}`);
    for (const p of splitStation(settled, apart, g.groupedBy)) this.finalise(p.members, p.reference, p.offsets, p.groupedBy);
  }

  /**
   * EXIF stations, finalised in order once all their frames are decoded (or failed) and checked
   * against their content; the checks of later stations start as soon as their frames are in.
   */
  private finaliseReady(): void {
    const planGroups = this.planGroups;
    if (!planGroups) return;
    for (let x = this.nextGroup; x < planGroups.length; x++) {
      if (this.checking.has(x) || !this.decoded(planGroups[x])) continue;
      this.checking.add(x);
      const { members, reference } = this.settle(planGroups[x]);
      // A copy found later may still take a member out: the group is settled again when finalised.
      this.checkMembers(members, reference).catch(() => undefined);
    }
    if (this.pumping) return;
    this.pumping = true;
    this.pump = (async () => {
      try {
        while (this.nextGroup < planGroups.length && this.decoded(planGroups[this.nextGroup])) await this.finaliseGroup(planGroups[this.nextGroup++]);
      } finally {
        this.pumping = false;
      }
    })();
    this.pump.catch(() => undefined);
  }

  private leaveOut(k: number, skip: SkippedFile): void {
    const f = this.frames[k];
    if (f?.data) this.gate.drop();
    if (f) f.data = null;
    this.frames[k] = null;
    this.decodeSkips.push({ k, skip });
  }

  private async loadFrame(k: number): Promise<void> {
    const o = this.ordered[k];
    const { gate, signal } = this;
    await gate.room();
    signal?.throwIfAborted();
    gate.take();
    try {
      let data = (await this.options.cache?.get(o.scanned, this.maxSide)) ?? null;
      if (!data) {
        data = await this.pool.analyseFrame(o.scanned.path, this.maxSide, signal);
        await this.options.cache?.put(o.scanned, this.maxSide, data);
      }
      const summary: FrameSummary = {
        fullWidth: data.fullWidth, fullHeight: data.fullHeight, anWidth: data.features.width, anHeight: data.features.height,
        keypoints: data.features.keypoints.count, sharpness: data.sharpness, fingerprint: data.fingerprint,
      };
      this.frames[k] = { file: o.scanned, exif: o.exif, summary, data };
      this.samples[k] = sampleFeatures(data.features);
      this.setApart(k, data);
    } catch (err) {
      gate.drop();
      if (signal?.aborted) throw err;
      this.decodeSkips.push({ k, skip: skipOf(o.file, err, o.scanned.size) });
      this.frames[k] = null;
    } finally {
      gate.wake();
      this.options.onProgress?.({ phase: 'frames', done: ++this.framesDone, total: this.n, file: o.file });
    }
    this.finaliseReady();
  }

  /**
   * A decoded frame unlike the run, or a copy of a picture seen before, is left out. Which copy of
   * one picture stays does not depend on which decode finished first: the first in shooting order
   * (then by name) stays, whichever came in first.
   */
  private setApart(k: number, data: FrameAnalysis): void {
    const o = this.ordered[k];
    // The decoded size is the one that counts (a header may say another, a RAW file says none).
    const stray = strayReason({ width: data.fullWidth, height: data.fullHeight, make: o.exif.settings.make, model: o.exif.settings.model }, this.look);
    const copyOf = this.seenPixels.get(data.fingerprint);
    if (stray !== null) this.leaveOut(k, { file: o.file, code: 'not-in-sequence', reason: stray });
    else if (copyOf !== undefined && copyOf < k) {
      // Copies of one picture (a card copied twice into one folder): the first one counts.
      this.leaveOut(k, { file: o.file, code: 'duplicate', reason: `the same picture as ${this.ordered[copyOf].file}: left out` });
    } else {
      if (copyOf !== undefined) this.leaveOut(copyOf, { file: this.ordered[copyOf].file, code: 'duplicate', reason: `the same picture as ${o.file}: left out` });
      this.seenPixels.set(data.fingerprint, k);
    }
  }

  /** Stations from content: consecutive frames showing one view at different brightness. */
  private async stationsFromContent(): Promise<void> {
    const frames = this.frames;
    const loadedIdx = frames.map((f, k) => (f ? k : -1)).filter((k) => k >= 0);
    const consecutive = loadedIdx.slice(1).map((k, x) => [loadedIdx[x], k] as [number, number]);
    await Promise.all(consecutive.map(([i, j]) => this.analysePair(i, j)));
    const links = consecutive.map(([i, j]) => {
      const p = this.pairResults.get(`${i}:${j}`)!;
      const { h } = fullResolution(p, frames[i]!.summary, frames[j]!.summary);
      return sameViewOtherExposure(h, frames[i]!.summary.fullWidth, frames[i]!.summary.fullHeight, p.evDiff);
    });
    const groups = groupStations(loadedIdx.map((k) => ({ settings: frames[k]!.exif.settings, captureMs: frames[k]!.exif.captureMs })), links);
    for (const g of groups) this.finalise(g.members.map((m) => loadedIdx[m]), loadedIdx[g.reference], g.offsets, g.groupedBy);
  }

  /**
   * The closure pair, when the frames cover most of a turn (or the geometry is unknown); kept when
   * it matched or the turn should close.
   */
  private async turnClosure(before: SequenceGeometry | null): Promise<void> {
    const { stations } = this;
    const closure: PlannedPair = { i: stations[stations.length - 1].reference, j: stations[0].reference, kind: 'closure' };
    await this.analysePair(closure.i, closure.j);
    const r = this.pairResults.get(`${closure.i}:${closure.j}`)!;
    if (keepClosure(r.homography !== null, before?.horizontalDeg ?? null)) this.keep(closure);
  }

  /**
   * Every other pair of reference frames, screened cheaply on a sample of keypoints first (the
   * samples were kept when the frames were decoded: the frames themselves may be let go).
   */
  private async otherPairs(): Promise<void> {
    const refs = this.stations.map((s) => s.reference);
    const chosen = screenPairs(this.samples, otherReferencePairs(refs, this.planned));
    for (const [i, j] of chosen) this.keep({ i, j, kind: 'other' });
    // Without --all-pairs the frames were let go: a few pairs at a time, so that a frame decoded
    // again is let go once its pairs are done instead of waiting for every pair asked for.
    if (this.keepAll) await Promise.all(chosen.map(([i, j]) => this.analysePair(i, j, false)));
    else await inOrder(chosen, Math.max(2, this.pool.threads), ([i, j]) => this.analysePair(i, j, false), this.signal);
  }

  /**
   * Whether the neighbour chain alone cannot place the set: a set shot in rows reaches the next
   * row through one step that may see little of the last frame, and only pairs across the rows
   * join them. Told from the geometry of the pairs: the matched neighbour pairs have turned the
   * camera a full turn before the last station (a single turn, closing or not, turns less than
   * that before its last pair; a failed or narrow pair alone says nothing of rows: a single turn
   * may have a gap).
   */
  private shotInRows(): boolean {
    const { stations, stationOf } = this;
    if (stations.length < 4) return false;
    const neighbours = this.planned.filter((p) => p.kind === 'neighbour');
    const chain = this.geometryOf(neighbours, null);
    if (!chain) return false;
    const sizes = this.referenceSizes();
    let turned = 0;
    for (const p of neighbours.slice(0, -1)) {
      const m = this.fullPair(p.i, p.j);
      const r = m && relativeRotation(m.h, chain.focalPx, sizes[stationOf[p.i]], sizes[stationOf[p.j]]);
      if (r) turned += rotationAngleOf(r);
    }
    return turned >= 360;
  }

  /** A frame's analysis for a late step, decoded again when it was let go; not kept (the step holds at most the pair it works on). */
  private async transientData(k: number): Promise<FrameAnalysis> {
    const o = this.ordered[k];
    return this.frames[k]!.data ?? (await this.options.cache?.get(o.scanned, this.maxSide)) ?? (await this.pool.analyseFrame(o.scanned.path, this.maxSide, this.signal));
  }

  /**
   * Pairs whose overlap was found off (parallax, or something moved) are judged again once the
   * sequence's lens is refined: on frames as an ideal pinhole camera would have seen them, where
   * a turn about the camera's centre leaves nothing off whatever the lens did. What is off there
   * is the pair's answer; lens distortion alone no longer reads as parallax or movement.
   */
  private async judgeAgainThroughLens(g: SequenceGeometry): Promise<void> {
    const d = g.distortion;
    if (!d || (d.k1 === 0 && d.k2 === 0)) return;
    for (const p of this.planned) {
      if (p.kind === 'bracket') continue;
      const key = `${p.i}:${p.j}`;
      const r = this.pairResults.get(key);
      if (!r?.homography || !(r.parallax || (r.moved?.length ?? 0) > 0)) continue;
      const sa = this.frames[p.i]!.summary, sb = this.frames[p.j]!.summary;
      const lens = { focalA: (g.focalPx * sa.anWidth) / sa.fullWidth, focalB: (g.focalPx * sb.anWidth) / sb.fullWidth, distortion: { k1: d.k1, k2: d.k2 } };
      const again = await this.pool.judgeThroughLens(await this.transientData(p.i), await this.transientData(p.j), r.tiePoints, lens, this.signal);
      if (again) this.pairResults.set(key, { ...r, moved: again.moved, misfit: again.misfit, parallax: again.parallax });
    }
  }

  /**
   * Neighbour pairs without a model, tried once more where the turn between their stations is
   * known from the other matched pairs (the closure pair of a full turn included, tried here when
   * it was not yet): corners are sought where the predicted homography puts the overlap and
   * matched near where it puts them. A pair that still finds no model keeps its predicted overlap
   * for the report. Frames already let go are decoded again, two at a time.
   */
  private async retryGuided(): Promise<void> {
    const { planned, stations, stationOf, pairResults } = this;
    const failed = planned.filter((p) => p.kind === 'neighbour' && !pairResults.get(`${p.i}:${p.j}`)?.homography);
    if (failed.length === 0 || stations.length < 3) return;
    const chain = this.geometryOf(planned.filter((p) => p.kind === 'neighbour'), null);
    if (!chain) return;
    const sizes = this.referenceSizes();
    // The closure pair is worth a try when the turns measured, with the typical turn for each
    // failed pair, and a frame's width come to most of a full turn.
    const turns = planned.filter((p) => p.kind === 'neighbour').flatMap((p) => {
      const m = this.fullPair(p.i, p.j);
      const r = m && relativeRotation(m.h, chain.focalPx, sizes[stationOf[p.i]], sizes[stationOf[p.j]]);
      return r ? [rotationAngleOf(r)] : [];
    });
    const turned = estimatedTurnDeg(turns, failed.length, lensFieldOfViewDeg(sizes[0].width, chain.focalPx, chain.distortion ?? { k1: 0, k2: 0 }));
    const closure = { i: stations[stations.length - 1].reference, j: stations[0].reference };
    if (mayHaveClosed(turned) && !pairResults.has(`${closure.i}:${closure.j}`)) {
      pairResults.set(`${closure.i}:${closure.j}`, await this.pool.analysePair(await this.transientData(closure.i), await this.transientData(closure.j), undefined, this.signal));
    }
    const links = [...planned.filter((p) => p.kind !== 'bracket'), { ...closure, kind: 'closure' as const }].flatMap((p) => {
      const m = this.fullPair(p.i, p.j);
      return m ? [{ i: stationOf[p.i], j: stationOf[p.j], homography: m.h, points: m.points }] : [];
    });
    for (const p of failed) await this.retryGuidedPair(p, links, chain.focalPx, sizes);
  }

  /** One failed neighbour pair matched again where the homography predicted from the other pairs puts the overlap. */
  private async retryGuidedPair(p: PlannedPair, links: RotationLink[], focalPx: number, sizes: { width: number; height: number }[]): Promise<void> {
    const predicted = this.predictedOverlaps;
    const si = this.stationOf[p.i], sj = this.stationOf[p.j];
    const h = predictPairHomography(links, focalPx, sizes, si, sj);
    if (!h) return;
    const sa = this.frames[p.i]!.summary, sb = this.frames[p.j]!.summary;
    const inAnalysis = toAnalysisPixels(h, analysisToFull(sa.fullWidth, sa.fullHeight, sa.anWidth, sa.anHeight), analysisToFull(sb.fullWidth, sb.fullHeight, sb.anWidth, sb.anHeight));
    const overlap = overlapRegions(h, sizes[si].width, sizes[si].height, sizes[sj].width, sizes[sj].height).overlap;
    if (!inAnalysis || overlap <= 0) {
      predicted.set(`${p.i}:${p.j}`, overlap);
      return;
    }
    const r = await this.pool.analysePair(await this.transientData(p.i), await this.transientData(p.j), { retryAtFullSize: false, overlapBlocks: true, predicted: Array.from(normalise(inAnalysis)) }, this.signal);
    if (r.homography) this.pairResults.set(`${p.i}:${p.j}`, r);
    else predicted.set(`${p.i}:${p.j}`, overlap);
  }

  /**
   * A set shot in rows: the step from one row to the next is no neighbour pair (it is judged by
   * coverage instead), and each row that comes most of the way round gets its own closure pair,
   * its last station to its first; the turn-wide closure pair no longer applies.
   */
  private async byRows(g: SequenceGeometry): Promise<SequenceGeometry | null> {
    const { stations, stationOf, planned } = this;
    const rowOf = rowOfStations(g.rows, stations.length);
    for (const p of planned) {
      p.kind = kindInRows(p.kind, rowOf[stationOf[p.i]], rowOf[stationOf[p.j]]);
    }
    const hfov = this.referenceSizes().map((size) => lensFieldOfViewDeg(size.width, g.focalPx, g.distortion ?? { k1: 0, k2: 0 }));
    for (const { last, first, coveredDeg } of rowClosures(g.rows, g.poses, hfov)) {
      const i = stations[last].reference, j = stations[first].reference;
      const known = planned.find((p) => (p.i === i && p.j === j) || (p.i === j && p.j === i));
      if (known) known.kind = 'closure';
      else {
        await this.analysePair(i, j);
        if (keepClosure(this.pairResults.get(`${i}:${j}`)!.homography !== null, coveredDeg)) this.keep({ i, j, kind: 'closure' });
      }
    }
    return this.geometryOf(planned.filter((p) => p.kind !== 'bracket'), null);
  }

  /** Full-resolution size of each station's reference frame, by station. */
  private referenceSizes(): { width: number; height: number }[] {
    return this.stations.map((st) => ({ width: this.frames[st.reference]!.summary.fullWidth, height: this.frames[st.reference]!.summary.fullHeight }));
  }

  /** Full-resolution homography and tie points of a measured pair, or null without a model. */
  private fullPair(i: number, j: number): { h: Float64Array; scale: number; points: Float64Array } | null {
    const r = this.pairResults.get(`${i}:${j}`);
    if (!r) return null;
    const sa = this.frames[i]!.summary, sb = this.frames[j]!.summary;
    const { h, scale } = fullResolution(r, sa, sb);
    if (!h) return null;
    return { h, scale, points: tiePointsAtFullResolution(r.tiePoints, sa, sb) };
  }

  /** Station rotations, coverage and closure from the given matched pairs (frames' indices). */
  private geometryOf(pairs: readonly PlannedPair[], closure: PlannedPair | null): SequenceGeometry | null {
    const { stations, stationOf } = this;
    if (stations.length < 2) return null;
    const link = (p: PlannedPair): RotationLink | null => {
      const m = this.fullPair(p.i, p.j);
      return m ? { i: stationOf[p.i], j: stationOf[p.j], homography: m.h, points: m.points } : null;
    };
    const links = pairs.map(link).filter((l): l is RotationLink => l !== null);
    if (links.length === 0) return null;
    const sizes = this.referenceSizes();
    // One focal length for the set: the EXIF 35 mm equivalents, where every station has one.
    const f35 = stations.map((st) => this.frames[st.reference]!.exif.settings.focalLength35);
    const { exifFocal35mm, exifFocalPx } = sequenceExifFocal(f35, sizes[0].width, sizes[0].height);
    return sequenceGeometry({ sizes, exifFocalPx, exifFocal35mm, links, closure: closure ? link(closure) : null });
  }

  /** Focal length of a frame in full-resolution pixels: the sequence's, else its EXIF's. */
  private focalOf(k: number, geometry: SequenceGeometry | null): number | null {
    if (geometry) return geometry.focalPx;
    const f35 = this.frames[k]!.exif.settings.focalLength35, sm = this.frames[k]!.summary;
    return f35 ? focalPxFrom35mm(f35, sm.fullWidth, sm.fullHeight) : null;
  }

  /** One measured pair as the report has it, with its tie points at full resolution. */
  private pairMeasureOf(i: number, j: number, kind: PairKind, geometry: SequenceGeometry | null): { pair: PairMeasure; tiePoints: TiePointSet | null } {
    const name = (k: number): string => this.frames[k]!.file.name;
    const r = this.pairResults.get(`${i}:${j}`)!;
    const sa = this.frames[i]!.summary, sb = this.frames[j]!.summary;
    const { scale } = fullResolution(r, sa, sb);
    const full = this.fullPair(i, j);
    const h = full?.h ?? null;
    const shiftPx = full && kind === 'bracket' ? (bracketShift(full.points, sa.fullWidth, sa.fullHeight, this.focalOf(i, geometry) ?? NaN) ?? cornerShift(full.h, sa.fullWidth, sa.fullHeight)) : null;
    const pair = pairMeasure(name(i), name(j), kind, r, { homography: h, scale, shiftPx, predictedOverlap: this.predictedOverlaps.get(`${i}:${j}`) });
    return { pair, tiePoints: full ? { a: name(i), b: name(j), points: full.points } : null };
  }

  private frameMeasureOf(k: number): FrameMeasure {
    const f = this.frames[k]!;
    return frameMeasure(f.file.name, f.summary, f.exif);
  }

  /** The measurements so far: frames of finalised stations, the stations, the pairs measured yet. */
  private assemble(geometry: SequenceGeometry | null): CheckResult {
    const name = (k: number): string => this.frames[k]!.file.name;
    const tiePoints: TiePointSet[] = [];
    const measured = this.planned.filter(({ i, j }) => this.pairResults.has(`${i}:${j}`));
    const pairs: PairMeasure[] = measured.map(({ i, j, kind }) => {
      const m = this.pairMeasureOf(i, j, kind, geometry);
      if (m.tiePoints) tiePoints.push(m.tiePoints);
      return m.pair;
    });
    const inStations = this.stations.flatMap((s) => s.members).sort((p, q) => p - q);
    const frameMeasures: FrameMeasure[] = inStations.map((k) => this.frameMeasureOf(k));
    const analysis = {
      folder: this.folder, frames: frameMeasures, stations: stationMeasures(this.stations, name), pairs, skipped: skipsInOrder(this.skipped, this.decodeSkips),
      rawPlusJpeg: this.card.rawPlusJpeg, sweepDeg: geometry?.horizontalDeg ?? null, geometry,
    };
    return { analysis, tiePoints, peakFramesHeld: this.gate.peak };
  }
}
