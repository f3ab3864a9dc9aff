import { sampleFeatures, screenPairs } from '../core/candidate-pairs.js';
import { invert, multiply, normalise, project } from '../core/homography.js';
import { shootingOrder } from '../core/natural-order.js';
import type { Analysis, FrameMeasure, PairKind, PairMeasure, SkippedFile, StationMeasure } from '../core/report.js';
import { analysisToFull } from '../core/resolution.js';
import { groupStations } from '../core/stations.js';
import { focalPxFrom35mm, rotationAngleDeg } from '../core/sweep.js';
import type { AnalysisPool } from './analysis-pool.js';
import { createAnalysisPool } from './analysis-pool.js';
import type { FrameExif } from './exif.js';
import type { FeatureCache } from './feature-cache.js';
import { readFrameExif } from './exif.js';
import type { FrameAnalysis, PairAnalysis } from './frame-analysis.js';
import type { ScannedFile } from './scan.js';
import { scanFolder } from './scan.js';

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
  /** Where frame analyses are kept between checks; none by default. */
  readonly cache?: FeatureCache | null;
  readonly onProgress?: (p: CheckProgress) => void;
  /** The measurements so far, while pairs are still being matched (results as they arrive). */
  readonly onPartial?: (analysis: Analysis) => void;
  readonly signal?: AbortSignal;
}

/** Inlier correspondences of one pair at full resolution: xa, ya, xb, yb per point. */
export interface TiePointSet {
  readonly a: string;
  readonly b: string;
  readonly points: Float64Array;
}

export interface CheckResult {
  readonly analysis: Analysis;
  readonly tiePoints: readonly TiePointSet[];
}

/**
 * Default analysis size: 1500 px on the long side, a quarter of a 24 MP frame's 6000 px, so JPEG
 * decoding can shrink on load by 1/4 (GUIDE section 10); accurate to well under a pixel there.
 */
export const defaultMaxSide = 1500;

interface LoadedFrame {
  readonly file: ScannedFile;
  readonly exif: FrameExif;
  readonly data: FrameAnalysis;
}

/** A plain reason for a file that could not be analysed, from what the decoder or the system said. */
export function skipOf(file: string, err: unknown, size?: number): SkippedFile {
  const message = err instanceof Error ? err.message : String(err);
  const code = (err as NodeJS.ErrnoException)?.code;
  if (size === 0) return { file, code: 'unreadable', reason: 'empty file (0 bytes): copy it from the card again' };
  if (code === 'ENOENT') return { file, code: 'unreadable', reason: 'the file went away during the check' };
  if (code === 'EACCES' || code === 'EPERM') return { file, code: 'unreadable', reason: 'no permission to read it' };
  if (/pixel limit/i.test(message)) return { file, code: 'too-large', reason: 'too large to decode safely (over the pixel limit)' };
  if (/timeout/i.test(message)) return { file, code: 'unreadable', reason: 'decoding took too long' };
  if (/premature end|truncated|unexpected end|corrupt|invalid/i.test(message)) return { file, code: 'unreadable', reason: 'damaged or cut short: copy it from the card again' };
  if (/unsupported image format|bad seek|not a known file format|improper image header|input buffer/i.test(message)) return { file, code: 'not-an-image', reason: 'not an image Seamscout can read' };
  return { file, code: 'unreadable', reason: `cannot be read: ${message.split('\n')[0]}` };
}

/** Runs `task` over items with at most `limit` in flight, keeping results in input order. */
async function inOrder<T, R>(items: readonly T[], limit: number, task: (item: T, i: number) => Promise<R>, signal?: AbortSignal): Promise<R[]> {
  const out = new Array<R>(items.length);
  let next = 0;
  const lane = async (): Promise<void> => {
    while (next < items.length) {
      signal?.throwIfAborted();
      const i = next++;
      out[i] = await task(items[i], i);
    }
  };
  await Promise.all(Array.from({ length: Math.max(1, Math.min(limit, items.length)) }, lane));
  return out;
}

function fullResolution(pair: PairAnalysis, a: LoadedFrame, b: LoadedFrame): { h: Float64Array | null; scale: number } {
  const fa = analysisToFull(a.data.fullWidth, a.data.fullHeight, a.data.features.width, a.data.features.height);
  const fb = analysisToFull(b.data.fullWidth, b.data.fullHeight, b.data.features.width, b.data.features.height);
  const scale = a.data.fullWidth / a.data.features.width;
  if (!pair.homography) return { h: null, scale };
  return { h: normalise(multiply(multiply(fb, pair.homography), invert(fa)!)), scale };
}

function cornerShift(h: Float64Array, w: number, hh: number): number {
  let worst = 0;
  for (const [x, y] of [[0, 0], [w - 1, 0], [w - 1, hh - 1], [0, hh - 1]]) {
    const [u, v] = project(h, x, y);
    worst = Math.max(worst, Math.hypot(u - x, v - y));
  }
  return worst;
}

/**
 * The sequence check: reads a folder (never writing to it), analyses every frame in the worker pool,
 * groups stations, matches the pairs that matter and returns the measurements, unjudged.
 */
export async function runCheck(folder: string, options: CheckOptions = {}): Promise<CheckResult> {
  const maxSide = options.maxSide ?? defaultMaxSide;
  const pool = options.pool ?? createAnalysisPool(options.threads);
  try {
    const scan = await scanFolder(folder, options.recursive ?? false);
    const skipped: SkippedFile[] = scan.problems.map((p) => ({ file: p.name, code: 'unreadable', reason: `cannot be read: ${p.reason}` }));
    const exifs = await inOrder(scan.files, 8, (f) => readFrameExif(f.path), options.signal);
    const ordered = shootingOrder(scan.files.map((file, i) => ({ file: file.name, captureMs: exifs[i].captureMs, scanned: file, exif: exifs[i] })));

    let framesDone = 0;
    const lanes = Math.max(2, 2 * pool.threads);
    const loaded = await inOrder(ordered, lanes, async (o) => {
      try {
        let data = (await options.cache?.get(o.scanned, maxSide)) ?? null;
        if (!data) {
          data = await pool.analyseFrame(o.scanned.path, maxSide, options.signal);
          await options.cache?.put(o.scanned, maxSide, data);
        }
        return { file: o.scanned, exif: o.exif, data } as LoadedFrame;
      } catch (err) {
        if (options.signal?.aborted) throw err;
        skipped.push(skipOf(o.file, err, o.scanned.size));
        return null;
      } finally {
        options.onProgress?.({ phase: 'frames', done: ++framesDone, total: ordered.length, file: o.file });
      }
    }, options.signal);
    // Copies of one picture (a card copied twice into one folder): the first one counts.
    const seenPixels = new Map<string, string>();
    const frames = loaded.filter((f): f is LoadedFrame => {
      if (f === null) return false;
      const first = seenPixels.get(f.data.fingerprint);
      if (first !== undefined) {
        skipped.push({ file: f.file.name, code: 'duplicate', reason: `the same picture as ${first}: left out` });
        return false;
      }
      seenPixels.set(f.data.fingerprint, f.file.name);
      return true;
    });

    // Pairs are analysed through one queue so progress counts them all.
    const pairResults = new Map<string, PairAnalysis>();
    let partialHook: (() => void) | null = null;
    let pairsDone = 0, pairsTotal = 0;
    const analyse = async (pairs: [number, number][]): Promise<void> => {
      const todo = pairs.filter(([i, j]) => !pairResults.has(`${i}:${j}`));
      pairsTotal += todo.length;
      await inOrder(todo, Math.max(2, pool.threads), async ([i, j]) => {
        pairResults.set(`${i}:${j}`, await pool.analysePair(frames[i].data, frames[j].data, options.signal));
        options.onProgress?.({ phase: 'pairs', done: ++pairsDone, total: pairsTotal, file: frames[j].file.name });
        partialHook?.();
      }, options.signal);
    };

    // Stations: from EXIF; from content where no frame has exposure data.
    const inputs = frames.map((f) => ({ settings: f.exif.settings, captureMs: f.exif.captureMs }));
    const noExposureData = frames.every((f) => f.exif.settings.exposureTime === null && f.exif.settings.evBias === null);
    let links: boolean[] | null = null;
    if (noExposureData && frames.length > 1) {
      const consecutive = frames.slice(1).map((_, i) => [i, i + 1] as [number, number]);
      await analyse(consecutive);
      links = consecutive.map(([i, j]) => {
        const p = pairResults.get(`${i}:${j}`)!;
        const { h } = fullResolution(p, frames[i], frames[j]);
        return h !== null && cornerShift(h, frames[i].data.fullWidth, frames[i].data.fullHeight) < 0.05 * frames[i].data.fullWidth && p.evDiff !== null && Math.abs(p.evDiff) > 0.3;
      });
    }
    const groups = groupStations(inputs, links);

    const planned: { i: number; j: number; kind: PairKind }[] = [];
    for (const g of groups) for (const m of g.members) if (m !== g.reference) planned.push({ i: g.reference, j: m, kind: 'bracket' });
    for (let s = 0; s + 1 < groups.length; s++) planned.push({ i: groups[s].reference, j: groups[s + 1].reference, kind: 'neighbour' });
    if (options.allPairs) {
      // Every other pair of reference frames, screened cheaply on a sample of keypoints first.
      const refs = groups.map((g) => g.reference);
      const done = new Set(planned.map((p) => `${p.i}:${p.j}`));
      const samples = frames.map((f) => sampleFeatures(f.data.features));
      const others: [number, number][] = [];
      for (let x = 0; x < refs.length; x++)
        for (let y = x + 2; y < refs.length; y++) if (!done.has(`${refs[x]}:${refs[y]}`)) others.push([refs[x], refs[y]]);
      for (const [i, j] of screenPairs(samples, others)) planned.push({ i, j, kind: 'other' });
    }
    /** The measurements so far: every frame and station, the pairs measured yet. */
    const assemble = (chosen: readonly { i: number; j: number; kind: PairKind }[], sweep: number | null): CheckResult => {
      const name = (i: number): string => frames[i].file.name;
      const tiePoints: TiePointSet[] = [];
      const measured = chosen.filter(({ i, j }) => pairResults.has(`${i}:${j}`));
      const pairs: PairMeasure[] = measured.map(({ i, j, kind }) => {
        const r = pairResults.get(`${i}:${j}`)!;
        const { h, scale } = fullResolution(r, frames[i], frames[j]);
        if (h) {
          const fa = analysisToFull(frames[i].data.fullWidth, frames[i].data.fullHeight, frames[i].data.features.width, frames[i].data.features.height);
          const fb = analysisToFull(frames[j].data.fullWidth, frames[j].data.fullHeight, frames[j].data.features.width, frames[j].data.features.height);
          const pts = new Float64Array(r.tiePoints.length);
          for (let k = 0; k < r.tiePoints.length; k += 4) {
            pts[k] = fa[0] * r.tiePoints[k] + fa[2];
            pts[k + 1] = fa[4] * r.tiePoints[k + 1] + fa[5];
            pts[k + 2] = fb[0] * r.tiePoints[k + 2] + fb[2];
            pts[k + 3] = fb[4] * r.tiePoints[k + 3] + fb[5];
          }
          tiePoints.push({ a: name(i), b: name(j), points: pts });
        }
        return {
          a: name(i),
          b: name(j),
          kind,
          matches: r.matches,
          inliers: r.inliers,
          matchesInOverlap: r.matchesInOverlap,
          overlap: r.overlap,
          homography: h ? Array.from(h) : null,
          evDiff: r.evDiff,
          rmsError: r.rmsError === null ? null : r.rmsError * scale,
          shiftPx: h ? cornerShift(h, frames[i].data.fullWidth, frames[i].data.fullHeight) : null,
        };
      });

      const stationOfFrame = new Map<number, number>();
      groups.forEach((g, s) => g.members.forEach((m) => stationOfFrame.set(m, s)));
      const frameMeasures: FrameMeasure[] = frames.map((f) => ({
        file: f.file.name,
        width: f.data.fullWidth,
        height: f.data.fullHeight,
        captureTime: f.exif.captureTime,
        settings: f.exif.settings,
        sharpness: f.data.sharpness,
        keypoints: f.data.features.keypoints.count,
        fingerprint: f.data.fingerprint,
      }));
      const stations: StationMeasure[] = groups.map((g, s) => ({
        index: s,
        frames: g.members.map(name),
        reference: name(g.reference),
        evOffsets: g.offsets,
        groupedBy: g.groupedBy,
      }));
      return { analysis: { folder, frames: frameMeasures, stations, pairs, skipped, sweepDeg: sweep }, tiePoints };
    };

    // Results as they arrive: the stations at once, then the pairs, at most every 700 ms.
    if (options.onPartial) {
      const onPartial = options.onPartial;
      let last = 0;
      partialHook = () => {
        const now = Date.now();
        if (now - last < 700) return;
        last = now;
        onPartial(assemble(planned, null).analysis);
      };
      onPartial(assemble(planned, null).analysis);
    }
    await analyse(planned.map((p) => [p.i, p.j]));

    // Sweep from the neighbour chain, where every neighbour matched and the focal length is known.
    const sweepOf = (): number | null => {
      let sum = 0;
      for (const p of planned.filter((q) => q.kind === 'neighbour')) {
        const r = pairResults.get(`${p.i}:${p.j}`)!;
        const fa = frames[p.i], f35 = fa.exif.settings.focalLength35;
        const { h } = fullResolution(r, fa, frames[p.j]);
        if (!h || !f35) return null;
        const angle = rotationAngleDeg(h, focalPxFrom35mm(f35, fa.data.fullWidth, fa.data.fullHeight), fa.data.fullWidth, fa.data.fullHeight);
        if (angle === null) return null;
        sum += angle;
      }
      return groups.length > 1 ? sum : null;
    };
    let sweepDeg = sweepOf();
    if (groups.length >= 3) {
      const closure = { i: groups[groups.length - 1].reference, j: groups[0].reference, kind: 'closure' as PairKind };
      // Try the closure when the chain may have come round (or its length is unknown); keep it when
      // it should close or did.
      if (sweepDeg === null || sweepDeg >= 270) {
        await analyse([[closure.i, closure.j]]);
        const r = pairResults.get(`${closure.i}:${closure.j}`)!;
        if (r.homography || (sweepDeg !== null && sweepDeg >= 330)) planned.push(closure);
        if (r.homography && sweepDeg !== null) {
          const fa = frames[closure.i], f35 = fa.exif.settings.focalLength35;
          const { h } = fullResolution(r, fa, frames[closure.j]);
          const angle = h && f35 ? rotationAngleDeg(h, focalPxFrom35mm(f35, fa.data.fullWidth, fa.data.fullHeight), fa.data.fullWidth, fa.data.fullHeight) : null;
          if (angle !== null) sweepDeg += angle;
        }
      }
    }

    return assemble(planned, sweepDeg);
  } finally {
    if (!options.pool) await pool.destroy();
  }
}
