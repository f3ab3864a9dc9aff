/**
 * The check of a card: a card holds everything since it was last emptied (several panoramas, single
 * shots), so its frames are split into sequences and each is checked on its own, exactly as if it
 * were alone in a folder.
 *
 * The split weighs three kinds of evidence. The headers first (core/sequence/sequence-split.ts): a pause far
 * longer than the sequence's rhythm, a change of camera, lens, focal length or orientation. Then the
 * content, which wins over time: frames either side of a pause that overlap are one sequence (a
 * wait for a cloud in the middle of a turn), and a sequence whose neighbour pair found nothing in
 * common while no other pair joins its two sides, at a step out of its rhythm, is two (a new
 * panorama begun at once from another spot). A sequence of one frame, or of one station, is a
 * single shot.
 */
import type { Analysis, SequenceAnalysis, SequenceSplit, SingleShot, SkippedFile, StationMeasure } from '../core/sequence/report.js';
import type { SplitFrame } from '../core/sequence/sequence-split.js';
import { splitByEvidence } from '../core/sequence/sequence-split.js';
import { createAnalysisPool } from './analysis-pool.js';
import type { CardContents, CardFile, CheckOptions, CheckResult, TiePointSet } from './check.js';
import { checkFrames, defaultMaxSide, readCard } from './check.js';

export interface CardCheckOptions extends CheckOptions {
  /** Check only this sequence: its number on the card (from 1) or its first file's name. */
  readonly sequence?: string | null;
  /**
   * A run of the card checked (a sequence, before single shots are told apart); `run` numbers the
   * runs from 1 as `onPair` numbers them. A run that came apart by content is checked again as two
   * new runs, and its pairs are streamed again under their numbers.
   */
  readonly onRunDone?: (e: { run: number; frames: number; pairs: number; splitAgain: boolean }) => void;
}

/** A run of the card's frames taken for one sequence, with why it is apart from the one before. */
interface Run {
  readonly files: readonly CardFile[];
  readonly splitBy: readonly SequenceSplit[];
}

/** What the headers say of a file, for the split. */
function splitFrameOf(f: CardFile): SplitFrame {
  const s = f.exif.settings;
  const camera = [s.make, s.model].filter((x): x is string => !!x).join(' ') || null;
  const size = f.size;
  return {
    file: f.file,
    captureMs: f.captureMs,
    camera,
    lens: f.exif.lens,
    focalLengthMm: s.focalLength,
    orientation: size ? (size.width >= size.height ? 'landscape' : 'portrait') : null,
  };
}

/**
 * A step between stations this many times the run's typical step is out of its rhythm. Our own: a
 * hand-held pan varies by a factor of two or three from step to step; re-aiming for another
 * panorama takes longer than that, even with no pause.
 */
export const outOfRhythm = 3;

/**
 * Where a checked run comes apart by content: the first boundary between stations whose neighbour
 * pair found no model while no matched pair joins a station before it to one after it, and whose
 * step is out of the run's rhythm. The index of the first frame after it in the run's files, or -1.
 *
 * A boundary with nothing in common but shot in the rhythm of the rest is a frame missing from one
 * panorama (the fault the check is for), not a new one: it stays, and its pair is flagged. Without
 * capture times nothing tells the two apart, and the run stays whole for the same reason.
 */
export function contentBreak(analysis: Pick<Analysis, 'stations' | 'pairs'>, files: readonly CardFile[]): number {
  const stations: readonly StationMeasure[] = analysis.stations;
  if (stations.length < 2) return -1;
  const stationOf = new Map<string, number>();
  stations.forEach((s, k) => s.frames.forEach((f) => stationOf.set(f, k)));
  const timeOf = new Map(files.map((f) => [f.file, f.captureMs]));
  const times = stations.map((s) => s.frames.map((f) => timeOf.get(f) ?? null));
  // Step k: from the last frame of station k to the first of station k + 1; null without times.
  const steps = stations.slice(1).map((_, k) => {
    const end = times[k], start = times[k + 1];
    if (end.some((t) => t === null) || start.some((t) => t === null)) return null;
    return Math.min(...(start as number[])) - Math.max(...(end as number[]));
  });
  const known = steps.filter((t): t is number => t !== null).sort((x, y) => x - y);
  const rhythm = known.length ? known[known.length >> 1] : null;
  const joined = analysis.pairs.filter((p) => p.homography !== null).map((p) => [stationOf.get(p.a) ?? -1, stationOf.get(p.b) ?? -1].sort((x, y) => x - y));
  for (let k = 0; k + 1 < stations.length; k++) {
    const between = analysis.pairs.find((p) => p.kind === 'neighbour' && stationOf.get(p.a) === k && stationOf.get(p.b) === k + 1);
    if (!between || between.homography !== null) continue;
    if (joined.some(([x, y]) => x >= 0 && x <= k && y > k)) continue;
    const step = steps[k];
    if (step === null || rhythm === null || !(step >= outOfRhythm * Math.max(rhythm, 1))) continue;
    const first = stations[k + 1].frames[0];
    const at = files.findIndex((f) => f.file === first);
    // Frames between the two stations that no station took (decoding failed) stay with the first.
    if (at > 0) return at;
  }
  return -1;
}

/** Why a single shot stands alone, in words. */
function aloneReason(run: Run): string {
  const by = run.splitBy.map((e) => e.by);
  if (by.includes('pause')) return 'shot apart from the frames before it: a single shot, not part of a sequence';
  if (by.includes('content')) return 'shares nothing with the frames shot next to it: a single shot, not part of a sequence';
  return 'a single shot, not part of a sequence';
}

/** Checks a card: its sequences, each on its own, and its single shots. */
export async function checkCard(folder: string, options: CardCheckOptions = {}): Promise<CheckResult> {
  const pool = options.pool ?? createAnalysisPool(options.threads);
  try {
    const card = await readCard(folder, options);
    if (card.ordered.length <= 1) {
      const one = asOneSequence(await checkFrames(card, null, { ...options, pool }));
      options.onRunDone?.({ run: 1, frames: one.analysis.frames.length, pairs: one.analysis.pairs.length, splitAgain: false });
      return one;
    }
    const frames = card.ordered.map(splitFrameOf);
    const segments = splitByEvidence(frames);
    let runs: Run[] = segments.map((s) => ({ files: card.ordered.slice(s.start, s.end), splitBy: s.splitBy }));
    runs = await joinAcrossPauses(runs, { ...options, pool });

    // Each run checked; a run that comes apart by content is checked again as two, so that each
    // sequence's verdicts are those it would get alone.
    const total = card.ordered.length;
    let base = 0;
    const progress: CheckOptions['onProgress'] =
      options.onProgress && ((p) => options.onProgress!({ ...p, done: Math.min(base + p.done, total), total: p.phase === 'frames' ? total : p.total, file: p.file }));
    const checked: { run: Run; result: CheckResult }[] = [];
    const queue = [...runs];
    let runNumber = 0;
    while (queue.length) {
      const run = queue.shift()!;
      const single = runs.length === 1 && queue.length === 0 && checked.length === 0;
      const number = ++runNumber;
      const onPair: CheckOptions['onPair'] = options.onPair && ((e) => options.onPair!({ ...e, run: number }));
      const result = await checkFrames(card, run.files, { ...options, pool, onProgress: progress, onPartial: single ? options.onPartial : undefined, onPair });
      const at = contentBreak(result.analysis, run.files);
      options.onRunDone?.({ run: number, frames: result.analysis.frames.length, pairs: result.analysis.pairs.length, splitAgain: at > 0 });
      if (at > 0) {
        const a = run.files[at - 1].file, b = run.files[at].file;
        queue.unshift({ files: run.files.slice(0, at), splitBy: run.splitBy }, { files: run.files.slice(at), splitBy: [{ by: 'content', after: a, before: b }] });
        continue;
      }
      base += run.files.length;
      checked.push({ run, result });
    }
    return assemble(card, checked, options.sequence ?? null);
  } finally {
    if (!options.pool) await pool.destroy();
  }
}

/**
 * Runs apart only by a pause, or by the frame's orientation, are one sequence when their frames
 * either side overlap: the content wins over the time (a wait for a cloud, a passer-by, the light in
 * the middle of a turn), and over the orientation a camera records when aimed straight up or down
 * (often not the one it was held in). Another camera, lens or focal length stays a new sequence.
 */
async function joinAcrossPauses(runs: Run[], options: CheckOptions & { pool: NonNullable<CheckOptions['pool']> }): Promise<Run[]> {
  const out: Run[] = [];
  const maxSide = options.maxSide ?? defaultMaxSide;
  for (const run of runs) {
    const prev = out[out.length - 1];
    if (prev && run.splitBy.length > 0 && run.splitBy.every((e) => e.by === 'pause' || e.by === 'orientation')) {
      const a = prev.files[prev.files.length - 1], b = run.files[0];
      const load = async (f: CardFile) => (await options.cache?.get(f.scanned, maxSide)) ?? (await options.pool.analyseFrame(f.scanned.path, maxSide, options.signal));
      const pair = await Promise.all([load(a), load(b)])
        .then(([fa, fb]) => options.pool.analysePair(fa, fb, { retryAtFullSize: true, overlapBlocks: false }, options.signal))
        .catch(() => null);
      if (pair?.homography) {
        out[out.length - 1] = { files: [...prev.files, ...run.files], splitBy: prev.splitBy };
        continue;
      }
    }
    out.push(run);
  }
  return out;
}

/** A folder checked as one sequence, named as the card's only one. */
function asOneSequence(r: CheckResult): CheckResult {
  const a = r.analysis;
  return { ...r, analysis: { ...a, sequences: a.frames.length ? [sequenceOf(a, 1, [])] : [], singleShots: [] } };
}

function sequenceOf(a: Analysis, index: number, splitBy: readonly SequenceSplit[]): SequenceAnalysis {
  return { index, splitBy, frames: a.frames, stations: a.stations, pairs: a.pairs, sweepDeg: a.sweepDeg, geometry: a.geometry };
}

/** The card's analysis from its checked runs: sequences in shooting order, single shots apart. */
function assemble(card: CardContents, checked: readonly { run: Run; result: CheckResult }[], only: string | null): CheckResult {
  const sequences: { run: Run; result: CheckResult }[] = [];
  const singleShots: SingleShot[] = [];
  const several = checked.length > 1;
  for (const c of checked) {
    const a = c.result.analysis;
    if (a.frames.length === 0) continue;
    if (several && a.stations.length <= 1) {
      for (const f of a.frames) singleShots.push({ file: f.file, captureTime: f.captureTime, reason: aloneReason(c.run) });
      continue;
    }
    sequences.push(c);
  }
  // Files left out while decoding, from every run, once each, in the order the card lists them.
  const skipped: SkippedFile[] = [];
  const seen = new Set<string>();
  for (const s of checked.flatMap((c) => c.result.analysis.skipped)) {
    if (seen.has(s.file)) continue;
    seen.add(s.file);
    skipped.push(s);
  }
  let entries = sequences.map((c, k) => ({ c, seq: sequenceOf(c.result.analysis, k + 1, c.run.splitBy) }));
  if (only !== null) {
    const chosen = entries.find((e) => String(e.seq.index) === only || e.seq.frames[0]?.file === only || stem(e.seq.frames[0]?.file ?? '') === stem(only));
    if (!chosen) throw new UnknownSequenceError(only, entries.map((e) => `${e.seq.index} (${e.seq.frames[0]?.file})`));
    entries = [chosen];
  }
  const tiePoints: TiePointSet[] = entries.flatMap((e) => e.c.result.tiePoints);
  const peakFramesHeld = Math.max(0, ...checked.map((c) => c.result.peakFramesHeld));
  const base = { folder: card.folder, skipped, rawPlusJpeg: card.rawPlusJpeg ?? null };
  if (entries.length === 1) {
    const a = entries[0].c.result.analysis;
    return { analysis: { ...a, ...base, sequences: [entries[0].seq], singleShots: only === null ? singleShots : [] }, tiePoints, peakFramesHeld };
  }
  // Several: the folder's lists are all of theirs together, stations counted across the card.
  let offset = 0;
  const stations: StationMeasure[] = [];
  for (const e of entries) {
    for (const s of e.seq.stations) stations.push({ ...s, index: s.index + offset });
    offset += e.seq.stations.length;
  }
  const analysis: Analysis = {
    ...base,
    frames: entries.flatMap((e) => e.seq.frames),
    stations,
    pairs: entries.flatMap((e) => e.seq.pairs),
    sweepDeg: null,
    geometry: null,
    sequences: entries.map((e) => e.seq),
    singleShots,
  };
  return { analysis, tiePoints, peakFramesHeld };
}

const stem = (name: string): string => name.replace(/^.*[\\/]/, '').replace(/\.[^.]*$/, '').toLowerCase();

/** --sequence named no sequence of the card. */
export class UnknownSequenceError extends Error {
  constructor(
    readonly asked: string,
    readonly known: readonly string[],
  ) {
    super(`no sequence ${asked} on this card: ${known.length ? `it has ${known.join(', ')}` : 'it has no sequence'}`);
  }
}
