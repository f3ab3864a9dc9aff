import type { Analysis, PairMeasure, SharpnessByDirection, Verdict } from './report.js';
import type { SharpnessDirection } from '../pair/shared-sharpness.js';
import { sharpnessDirections } from '../pair/shared-sharpness.js';
import { median } from '../numeric/median.js';
import { percent as pct } from './number-words.js';

/** A frame judged blurred, and how. */
export interface BlurFinding {
  readonly file: string;
  readonly verdict: Verdict;
  readonly advice: string;
  /** Its sharpness over its neighbours' (in its weakest direction), or over the sequence's typical when not compared. */
  readonly ratio: number;
  /** The direction it lost most, when it lost much more there than elsewhere (motion blur); else null. */
  readonly direction: SharpnessDirection | null;
  /** False when no registered pair could compare it and the whole-frame measure decided. */
  readonly compared: boolean;
}

/** Log of a frame's sharpness over another's, per direction in the order of `sharpnessDirections`. */
type LogRatios = readonly [number, number, number, number];

interface Edge {
  readonly other: string;
  readonly v: LogRatios;
}

/**
 * Most frames in a row, as sharp as one another, that can be the blurred ones among sharper
 * neighbours (two frames shaken in a row); beyond it the sharper frames are the odd ones out.
 */
const maxRun = 2;

/**
 * Motion blur takes one direction far more than the others: the weakest direction's ratio at least
 * this many times below the next one's. Our own value, from OpenCV's kernels on leuvenA, leuvenB,
 * graf1 and graf3 (test/core/pair/shared-sharpness.test.ts): Gaussian blur of sigma 0.5 to 3 px gives 1.00 to
 * 1.18, line kernels of 7 px or more 1.23 to 3.9 (shorter ones are not always told apart).
 */
const directionalSpread = 1.25;

const directionWords: Record<SharpnessDirection, string> = {
  horizontal: 'along the horizontal',
  vertical: 'along the vertical',
  'falling-diagonal': 'along the diagonal from top left to bottom right',
  'rising-diagonal': 'along the diagonal from bottom left to top right',
};

function logRatios(d: SharpnessByDirection, sign: 1 | -1): LogRatios | null {
  const v = [d.horizontal, d.fallingDiagonal, d.vertical, d.risingDiagonal].map((x) => sign * Math.log(x));
  return v.every(Number.isFinite) ? (v as unknown as LogRatios) : null;
}

const add = (p: LogRatios, q: LogRatios): LogRatios => [p[0] + q[0], p[1] + q[1], p[2] + q[2], p[3] + q[3]];
const minOf = (v: LogRatios): number => Math.min(v[0], v[1], v[2], v[3]);
const maxOf = (v: LogRatios): number => Math.max(v[0], v[1], v[2], v[3]);

type Outcome = { readonly kind: 'less' | 'more' | 'similar'; readonly v: LogRatios; readonly witness: string | null };

function joinNames(names: readonly string[]): string {
  return names.length <= 1 ? names.join('') : `${names.slice(0, -1).join(', ')} and ${names[names.length - 1]}`;
}

/** The registered pairs' comparisons, per frame. */
interface SharpnessEdges {
  /** From neighbour and closure pairs. */
  readonly station: Map<string, Edge[]>;
  /** From bracket pairs. */
  readonly bracket: Map<string, Edge[]>;
  /** Frames some registered pair measured, with or without an answer (null: too little texture). */
  readonly measured: Set<string>;
}

function sharpnessEdges(pairs: Analysis['pairs']): SharpnessEdges {
  const edges: SharpnessEdges = { station: new Map(), bracket: new Map(), measured: new Set() };
  const push = (m: Map<string, Edge[]>, file: string, e: Edge): void => {
    const list = m.get(file);
    if (list) list.push(e);
    else m.set(file, [e]);
  };
  const link = (p: PairMeasure, into: Map<string, Edge[]>): void => {
    if (p.homography === null || p.sharpnessByDirection === undefined) return;
    edges.measured.add(p.a);
    edges.measured.add(p.b);
    if (!p.sharpnessByDirection) return;
    const vb = logRatios(p.sharpnessByDirection, 1), va = logRatios(p.sharpnessByDirection, -1);
    if (!vb || !va) return;
    push(into, p.b, { other: p.a, v: vb });
    push(into, p.a, { other: p.b, v: va });
  };
  for (const p of pairs) {
    if (p.kind === 'neighbour' || p.kind === 'closure') link(p, edges.station);
    else if (p.kind === 'bracket') link(p, edges.bracket);
  }
  return edges;
}

/** What one blur judgement shares: the comparisons, the threshold as a classifier, the stations, and what is found so far. */
interface BlurJudge {
  readonly analysis: Analysis;
  readonly edges: SharpnessEdges;
  readonly classify: (v: LogRatios) => Outcome['kind'];
  readonly stationOf: Map<string, Analysis['stations'][number]>;
  readonly findings: BlurFinding[];
  /** Frames no registered pair measured: left to the whole-frame measure. */
  readonly unmeasured: string[];
  /** A blurred reference's most lenient comparison, to carry to its bracket frames. */
  readonly blurredRef: Map<string, { v: LogRatios; witnesses: string[] }>;
}

const isReference = (judge: BlurJudge, file: string): boolean => judge.stationOf.get(file)?.reference === file || !judge.stationOf.has(file);

/**
 * What bounds a frame's run (the neighbours as sharp as it, followed along the chain): each
 * neighbour of the run that differs, compared with the frame; null when the run is too long.
 */
function boundsOf(judge: BlurJudge, f: string): Outcome[] | null {
  const run = new Map<string, LogRatios>([[f, [0, 0, 0, 0]]]);
  const queue = [f];
  const bounds: Outcome[] = [];
  while (queue.length) {
    const g = queue.shift()!;
    for (const e of judge.edges.station.get(g) ?? []) {
      if (run.has(e.other)) continue;
      const v = add(run.get(g)!, e.v);
      const kind = judge.classify(v);
      if (kind !== 'similar') bounds.push({ kind, v, witness: e.other });
      else {
        run.set(e.other, v);
        if (run.size > maxRun) return null;
        queue.push(e.other);
      }
    }
  }
  return bounds;
}

/** A frame found less sharp than its witnesses, in words; `like` names the blurred reference it is as soft as. */
function describe(file: string, outcomes: Outcome[], like: string | null): BlurFinding {
  const ratio = Math.max(...outcomes.map((o) => Math.exp(minOf(o.v))));
  const mean = [0, 1, 2, 3].map((k) => outcomes.reduce((s, o) => s + o.v[k], 0) / outcomes.length);
  const order = [0, 1, 2, 3].sort((p, q) => mean[p] - mean[q]);
  const direction = mean[order[1]] - mean[order[0]] >= Math.log(directionalSpread) ? sharpnessDirections[order[0]] : null;
  const witnesses = joinNames([...new Set(outcomes.map((o) => o.witness!))]);
  const much = like ? `like its reference ${like}, it is ${pct(ratio)} as sharp as ${witnesses} on the content they share` : `on the content it shares with ${witnesses} it is ${pct(ratio)} as sharp`;
  const how = direction
    ? `${file} is blurred ${directionWords[direction]}: ${much}; camera shake or panning during the exposure: reshoot it with a faster shutter or steadier support`
    : `${file} is blurred: ${much}, in every direction alike (focus missed, or shake): check focus and reshoot it with a faster shutter or steadier support`;
  return { file, verdict: 'reshoot', advice: how, ratio, direction, compared: true };
}

/** References first: their bracket frames may follow them. */
function judgeReferences(judge: BlurJudge): void {
  const { edges } = judge;
  for (const f of judge.analysis.frames) {
    if (!isReference(judge, f.file)) continue;
    const outcomes = edges.station.has(f.file)
      ? boundsOf(judge, f.file)
      : (edges.bracket.get(f.file) ?? []).map((e): Outcome => ({ kind: judge.classify(e.v), v: e.v, witness: e.other }));
    if (outcomes === null) continue;
    if (outcomes.length === 0) {
      if (!edges.measured.has(f.file)) judge.unmeasured.push(f.file);
      continue;
    }
    if (!outcomes.every((o) => o.kind === 'less')) continue;
    const found = describe(f.file, outcomes, null);
    judge.findings.push(found);
    const lenient = outcomes.reduce((b, o) => (minOf(o.v) > minOf(b.v) ? o : b));
    judge.blurredRef.set(f.file, { v: lenient.v, witnesses: outcomes.map((o) => o.witness!) });
  }
}

/** Bracket frames against their reference (same view), and as soft as a blurred one. */
function judgeBracketFrames(judge: BlurJudge): void {
  const { edges, classify } = judge;
  for (const f of judge.analysis.frames) {
    if (isReference(judge, f.file)) continue;
    const ref = judge.stationOf.get(f.file)!.reference;
    const e = (edges.bracket.get(f.file) ?? []).find((x) => x.other === ref);
    if (!e) {
      if (!edges.measured.has(f.file)) judge.unmeasured.push(f.file);
      continue;
    }
    const kind = classify(e.v);
    if (kind === 'less') judge.findings.push(describe(f.file, [{ kind, v: e.v, witness: ref }], null));
    else if (kind === 'similar' && judge.blurredRef.has(ref)) {
      const r = judge.blurredRef.get(ref)!;
      const chained = add(e.v, r.v);
      if (classify(chained) === 'less') judge.findings.push(describe(f.file, r.witnesses.map((w) => ({ kind: 'less' as const, v: chained, witness: w })), ref));
    }
  }
}

/**
 * The tie-breaker: against the sequence's typical sharpness over the whole frame, among frames of
 * the same bracket offset; weak evidence, since content differs from frame to frame.
 */
function judgeWholeFrames(judge: BlurJudge, minSharpnessRatio: number): void {
  const { analysis, unmeasured } = judge;
  if (!unmeasured.length) return;
  const offsetOf = new Map<string, string>();
  for (const s of analysis.stations) s.frames.forEach((file, k) => offsetOf.set(file, s.evOffsets[k] === null ? 'x' : (Math.round((s.evOffsets[k] as number) * 3) / 3).toFixed(2)));
  const all = analysis.frames.map((f) => f.sharpness).filter((v) => v > 0);
  for (const f of analysis.frames) {
    if (!unmeasured.includes(f.file)) continue;
    const peers = analysis.frames.filter((g) => offsetOf.get(g.file) === offsetOf.get(f.file) && g.sharpness > 0).map((g) => g.sharpness);
    const typical = peers.length >= 3 ? median(peers) : median(all);
    if (!(Number.isFinite(typical) && f.sharpness < minSharpnessRatio * typical)) continue;
    const ratio = f.sharpness / typical;
    judge.findings.push({
      file: f.file,
      verdict: 'weak',
      advice: `${f.file} may be blurred, but it could not compare with a neighbour on the content both see: over the whole frame its sharpness is ${pct(ratio)} of the sequence's typical, which more sky, water or a soft subject also gives; look at it, and reshoot it with a faster shutter or steadier support if it is soft`,
      ratio,
      direction: null,
      compared: false,
    });
  }
}

/**
 * Which frames are blurred. A frame is compared with its registered neighbours on the content both
 * see (the pairs' `sharpnessByDirection`), never with the sequence as a whole, so a frame that sees
 * more sky, water or a soft subject is not called blurred. A station's reference frame is blurred
 * when every neighbour pair (neighbour and closure kinds) finds it markedly less sharp, under
 * `minSharpnessRatio` in some direction; a neighbour just as soft is looked past, along the chain, to
 * the next that differs (two blurred frames in a row, not more), and a neighbour markedly less sharp
 * in turn clears it. A bracket frame is compared with its reference only (same view), and is
 * blurred too when as soft as a blurred reference. A reference no neighbour pair compares is
 * compared with its bracket frames. Only a frame no registered pair has measured (an old report, or
 * no pair registered at all) falls back to the whole-frame measure against the sequence's typical,
 * and then the advice says it could not compare and the verdict is only weak.
 */
export function blurredFrames(analysis: Analysis, minSharpnessRatio: number): BlurFinding[] {
  const logT = Math.log(minSharpnessRatio);
  const stationOf = new Map<string, Analysis['stations'][number]>();
  for (const s of analysis.stations) for (const f of s.frames) stationOf.set(f, s);
  const judge: BlurJudge = {
    analysis,
    edges: sharpnessEdges(analysis.pairs),
    classify: (v) => (minOf(v) < logT ? 'less' : maxOf(v) > -logT ? 'more' : 'similar'),
    stationOf,
    findings: [],
    unmeasured: [],
    blurredRef: new Map(),
  };
  judgeReferences(judge);
  judgeBracketFrames(judge);
  judgeWholeFrames(judge, minSharpnessRatio);
  const order = new Map(analysis.frames.map((f, k) => [f.file, k]));
  return judge.findings.sort((p, q) => order.get(p.file)! - order.get(q.file)!);
}
