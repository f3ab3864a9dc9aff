/**
 * The check's answers as they come, for the command line: each pair's line as soon as it is
 * measured (in the order of the final table), with the progress line kept at the bottom of a
 * terminal; or, for tools, one JSON object per event on stderr (`--progress json`).
 *
 * A streamed line judges the pair alone against the budget. The sequence may still change its
 * verdict (the refined lens, the closure of the turn, a guided retry of a failed pair, the holes of
 * the coverage) or its kind (a set shot in rows: a row's closure pair), so the final summary has
 * the last word: it lists again only the pairs it judged otherwise.
 */
import type { Analysis, FrameMeasure, MatchBudget, ReportPair, StationMeasure, Verdict } from '../core/sequence/report.js';
import type { ShownPair } from './summary.js';
import { judge } from '../core/sequence/verdicts.js';
import type { CheckProgress, PairStreamed } from './check.js';
import { forTerminal, pairKey, pairRow, pairTableHeader, progressLine } from './summary.js';

export interface StreamTarget {
  write(s: string): unknown;
}

/** A pair judged from itself and its two frames only: nothing the rest of the sequence adds. */
export function provisionalPair(e: PairStreamed, budget: MatchBudget): ReportPair {
  const [fa, fb] = e.frames;
  const frames: FrameMeasure[] = fa.file === fb.file ? [fa] : [fa, fb];
  const one = (f: FrameMeasure, index: number): StationMeasure => ({ index, frames: [f.file], reference: f.file, evOffsets: [0], groupedBy: 'single' });
  // A bracket pair is one station; any other pair joins two.
  const stations: StationMeasure[] =
    e.pair.kind === 'bracket' ? [{ index: 0, frames: frames.map((f) => f.file), reference: fa.file, evOffsets: frames.map(() => null), groupedBy: 'exif' }] : frames.map(one);
  const analysis: Analysis = { folder: '', frames, stations, pairs: [e.pair], skipped: [], rawPlusJpeg: null, sweepDeg: null, geometry: null };
  return judge(analysis, budget).pairs[0];
}

export interface CheckStream {
  onPair(e: PairStreamed): void;
  onProgress(p: CheckProgress): void;
  onRunDone(e: { run: number; frames: number; pairs: number; splitAgain: boolean }): void;
  /** The check is over (or failed): the progress line is cleared; the final block follows. */
  end(verdict: Verdict | null): void;
  /** The pairs shown while checking (verdict and kind), by `pairKey`, for the final summary. */
  readonly shown: ReadonlyMap<string, ShownPair>;
  /** Milliseconds from the start to the first pair line, or null before it. */
  readonly firstPairMs: number | null;
}

export interface CheckStreamOptions {
  readonly budget: MatchBudget;
  /** Where the pair lines go (stdout). */
  readonly out: StreamTarget;
  /** Draw a progress line under the pair lines (only when `out` is a terminal). */
  readonly bar: boolean;
  /** Where JSON events go (stderr), or null. */
  readonly events: StreamTarget | null;
  readonly folder: string;
  readonly now?: () => number;
}

const clearLine = '\r\x1b[K';

export function createCheckStream(o: CheckStreamOptions): CheckStream {
  const now = o.now ?? (() => performance.now());
  const start = now();
  const shown = new Map<string, ShownPair>();
  let firstPairMs: number | null = null;
  let bar = '';
  let lastRun: number | null = null;
  const event = (name: string, fields: Record<string, unknown>): void => {
    o.events?.write(JSON.stringify({ event: name, ms: Math.round(now() - start), ...fields }) + '\n');
  };
  /** Lines above the progress line: it is cleared, the lines written, then drawn again below them. */
  const lines = (ls: string[]): void => {
    const text = ls.map((l) => forTerminal(l) + '\n').join('');
    o.out.write(o.bar && bar ? clearLine + text + bar : text);
  };
  event('start', { folder: o.folder });
  return {
    get shown() {
      return shown;
    },
    get firstPairMs() {
      return firstPairMs;
    },
    onPair(e) {
      const p = provisionalPair(e, o.budget);
      shown.set(pairKey(p), { verdict: p.verdict, kind: p.kind });
      event('pair', { run: e.run, a: p.a, b: p.b, kind: p.kind, overlap: p.overlap, inliers: p.inliers, evDiff: p.evDiff, verdict: p.verdict, reasons: p.reasons });
      const head: string[] = [];
      if (firstPairMs === null) {
        firstPairMs = now() - start;
        head.push('Pairs as they are judged, each on its own (the end lists any the whole sequence judges otherwise):', pairTableHeader(e.nameWidth));
      } else if (lastRun !== null && e.run !== lastRun) head.push('');
      lastRun = e.run;
      lines([...head, pairRow(p, e.nameWidth)]);
    },
    onProgress(p) {
      if (p.phase === 'frames') event('frame', { done: p.done, total: p.total, file: p.file ?? null });
      if (!o.bar) return;
      bar = progressLine(p.phase, p.done, p.total);
      o.out.write(bar);
    },
    onRunDone(e) {
      event('sequence', e);
      if (e.splitAgain && firstPairMs !== null) lines(['  (these frames are two sequences: each is checked again on its own)']);
    },
    end(verdict) {
      if (o.bar && bar) o.out.write(clearLine);
      bar = '';
      // The final block is set apart from the streamed lines.
      if (firstPairMs !== null) o.out.write('\n');
      event('end', { verdict, firstPairMs: firstPairMs === null ? null : Math.round(firstPairMs) });
    },
  };
}
