import type { Analysis, CoverageHole, CoverageNote, FlagCode, SkippedFile, Finding, FolderProblem, FrameSettings, MatchBudget, PairMeasure, Report, ReportFrame, ReportPair, ReportSequence, ReportStation, SequenceAnalysis, StationMeasure, Verdict } from './report.js';
import { coverageFindings } from './coverage-map.js';
import { reportSchema } from './report.js';
import type { Flag, Rule, SequenceFacts } from './verdict-rules.js';
import { cardRules, frameRules, pairRules, sequenceRules, stationRules } from './verdict-rules.js';
import { copyAgainPlan, reshootPlan } from './reshoot-plan.js';

const rank: Record<Verdict, number> = { ok: 0, weak: 1, reshoot: 2 };
export const worst = (...vs: Verdict[]): Verdict => vs.reduce<Verdict>((w, v) => (rank[v] > rank[w] ? v : w), 'ok');

class Findings {
  verdict: Verdict = 'ok';
  readonly reasons: FlagCode[] = [];
  readonly advice: string[] = [];
  add(code: FlagCode, verdict: Verdict, advice: string): void {
    if (!this.reasons.includes(code)) this.reasons.push(code);
    this.advice.push(advice);
    this.verdict = worst(this.verdict, verdict);
  }
  done(): Finding {
    return { verdict: this.verdict, reasons: [...this.reasons], advice: [...this.advice] };
  }
}

/** The files left out for a reason worth a look: all skipped but the second file of a RAW+JPEG shot. */
export const notChecked = (skipped: readonly SkippedFile[]): SkippedFile[] => skipped.filter((s) => s.code !== 'same-shot');

/**
 * Left-out files that say something may be missing from the sequence (unreadable, damaged, no
 * preview): these make a card weak. A second copy of a frame and a file that is not part of the
 * sequence (another camera, size or shape) are listed, but the sequence itself lacks nothing.
 */
export const missingFromSequence = (skipped: readonly SkippedFile[]): SkippedFile[] => notChecked(skipped).filter((s) => s.code !== 'duplicate' && s.code !== 'not-in-sequence');

/**
 * Applies the budget to the measurements: verdicts, reason codes and plain advice for every pair,
 * frame and station, and the overall verdict. Pure: judging again with another budget needs no
 * re-analysis.
 */
/**
 * Judges a folder's measurements against the budget. A card of several sequences is judged one
 * sequence at a time, each as if it were alone in a folder (no setting, size or coverage is compared
 * across sequences); the folder's lists are then all of theirs together.
 */
export function judge(analysis: Analysis, budget: MatchBudget): Report {
  const sequences = analysis.sequences;
  const singleShots = analysis.singleShots ?? [];
  if (!sequences) return judgeOne(analysis, budget);
  const parts = sequences.map((s) => judgeOne({ folder: analysis.folder, frames: s.frames, stations: s.stations, pairs: s.pairs, sweepDeg: s.sweepDeg, geometry: s.geometry, skipped: [] }, budget));
  const judged: ReportSequence[] = sequences.map((s, k) => {
    const r = parts[k];
    const first = r.frames[0], last = r.frames[r.frames.length - 1];
    return {
      index: s.index, splitBy: s.splitBy,
      firstFile: first?.file ?? '', lastFile: last?.file ?? '', startTime: first?.captureTime ?? null, endTime: last?.captureTime ?? null,
      verdict: r.verdict, counts: r.counts, sweepDeg: r.sweepDeg, geometry: r.geometry,
      frames: r.frames, stations: r.stations, pairs: r.pairs, holes: r.holes ?? [], coverageNotes: r.coverageNotes ?? [],
      plan: r.plan ?? [],
    };
  });
  const breaks: FolderProblem[] = cardRules.flatMap((rule) => rule.check(analysis));
  if (parts.length === 1) {
    const one = judgeOne(analysis, budget);
    return { ...one, verdict: worst(one.verdict, breaks.length ? 'weak' : 'ok'), folderProblems: [...one.folderProblems, ...breaks], sequences: judged, singleShots };
  }
  // Several: the folder's lists are all of the sequences' together, stations counted across the card.
  const offsets = parts.map((_, k) => parts.slice(0, k).reduce((t, r) => t + r.stations.length, 0));
  const whole = judgeOne({ ...analysis, frames: [], stations: [], pairs: [], sweepDeg: null, geometry: null }, budget);
  const frames = parts.flatMap((r, k) => r.frames.map((f) => ({ ...f, station: f.station < 0 ? -1 : f.station + offsets[k] })));
  const stations = parts.flatMap((r, k) => r.stations.map((st) => ({ ...st, index: st.index + offsets[k] })));
  const sum = (key: keyof Report['counts']): number => parts.reduce((t, r) => t + r.counts[key], 0);
  return {
    ...whole,
    verdict: worst(...parts.map((r) => r.verdict), missingFromSequence(analysis.skipped).length || breaks.length ? 'weak' : 'ok'),
    counts: { frames: sum('frames'), stations: sum('stations'), ok: sum('ok'), weak: sum('weak'), reshoot: sum('reshoot') },
    frames,
    stations,
    pairs: parts.flatMap((r) => r.pairs),
    folderProblems: breaks,
    holes: parts.flatMap((r) => r.holes ?? []),
    coverageNotes: parts.flatMap((r) => r.coverageNotes ?? []),
    // Each sequence's plan again, saying its sequence, with stations counted across the card.
    plan: [...copyAgainPlan(analysis.skipped), ...parts.flatMap((r, k) => reshootPlan({ ...r, budget }, sequences[k].index, offsets[k]))],
    sequences: judged,
    singleShots,
  };
}

function judgeOne(analysis: Analysis, budget: MatchBudget): Report {
  const stationOf = new Map<string, StationMeasure>();
  for (const s of analysis.stations) for (const file of s.frames) stationOf.set(file, s);
  const settingsOf = new Map(analysis.frames.map((f) => [f.file, f.settings]));
  const refs = analysis.stations.map((s) => settingsOf.get(s.reference)).filter((s): s is FrameSettings => !!s);
  const sizes = new Map(analysis.frames.map((f) => [f.file, { width: f.width, height: f.height }]));

  const { holes, notes, holeOf } = locateHoles(analysis, budget, stationOf);

  const facts: SequenceFacts = {
    analysis, budget, stationOf, settingsOf, refs,
    frameSize: (file) => sizes.get(file) ?? null,
    holeOf,
  };
  // Pairs first: a bracket pair's drift is its frame's and its station's too; frames then carry
  // their station's flags.
  const pairs: ReportPair[] = applyRules(analysis.pairs, pairRules, facts, (rule, p) => rule.kinds.includes(p.kind)).map((r, k) => ({ ...analysis.pairs[k], ...r.findings.done() }));
  const judgedStations = applyRules(analysis.stations, stationRules, { ...facts, pairs });
  // Each file's stations, once for each time a station lists it.
  const stationsHolding = new Map<string, number[]>();
  analysis.stations.forEach((s, i) => {
    for (const file of s.frames) stationsHolding.set(file, [...(stationsHolding.get(file) ?? []), i]);
  });
  const stationFlags = (file: string, rule: string): Flag[] => (stationsHolding.get(file) ?? []).flatMap((i) => judgedStations[i].byRule.get(rule) ?? []);
  const judgedFrames = applyRules(analysis.frames, frameRules, { ...facts, pairs, stationFlags });

  const folderProblems: FolderProblem[] = sequenceRules.flatMap((rule) => rule.check(analysis));

  const frames: ReportFrame[] = analysis.frames.map((f, k) => {
    const found = judgedFrames[k].findings.done();
    return { ...f, station: stationOf.get(f.file)?.index ?? -1, flags: found.reasons, ...found };
  });
  const stations: ReportStation[] = analysis.stations.map((s, i) => {
    const found = judgedStations[i].findings.done();
    return { ...s, flags: found.reasons, ...found };
  });
  const verdicts = [...pairs.map((p) => p.verdict), ...frames.map((f) => f.verdict), ...stations.map((s) => s.verdict), ...holes.map((h) => h.verdict)];
  const problems = [...pairs.map((p) => p.verdict), ...frames.map((f) => f.verdict)];
  const plan = [...copyAgainPlan(analysis.skipped), ...reshootPlan({ frames, stations, pairs, holes, geometry: analysis.geometry, budget })];
  return {
    schema: reportSchema,
    // A file left out that the sequence may miss is worth a look; a RAW+JPEG twin, a copy or a stray is not.
    verdict: worst(...verdicts, missingFromSequence(analysis.skipped).length || folderProblems.length ? 'weak' : 'ok'),
    folder: analysis.folder,
    budget,
    sweepDeg: analysis.sweepDeg,
    geometry: analysis.geometry,
    counts: {
      frames: frames.length,
      stations: stations.length,
      ok: problems.filter((v) => v === 'ok').length,
      weak: problems.filter((v) => v === 'weak').length,
      reshoot: problems.filter((v) => v === 'reshoot').length,
    },
    frames,
    stations,
    pairs,
    skipped: analysis.skipped,
    rawPlusJpeg: analysis.rawPlusJpeg ?? null,
    folderProblems,
    holes,
    coverageNotes: notes,
    plan,
  };
}

/**
 * The sequence's coverage holes and notes, and the hole between a pair's stations. Holes come first:
 * a failed pair between the stations either side of a located gap is that hole.
 */
function locateHoles(analysis: Analysis, budget: MatchBudget, stationOf: ReadonlyMap<string, StationMeasure>): { holes: CoverageHole[]; notes: CoverageNote[]; holeOf: (p: PairMeasure) => CoverageHole | null } {
  const found = coverageFindings({ ...analysis, budget });
  const stationKey = (p: PairMeasure): string | null => {
    const i = stationOf.get(p.a)?.index, j = stationOf.get(p.b)?.index;
    return i === undefined || j === undefined ? null : `${Math.min(i, j)}:${Math.max(i, j)}`;
  };
  const failedBetween = new Set(analysis.pairs.filter((p) => (p.kind === 'neighbour' || p.kind === 'closure') && p.homography === null).map(stationKey));
  // A gap the geometry calls narrow (under 2 degrees, within its error) is no narrower when the
  // frames either side failed to match: both say they do not meet, so it is to reshoot.
  const holes: CoverageHole[] = found.holes.map((h) => (h.between && h.verdict !== 'reshoot' && failedBetween.has(`${h.between[0]}:${h.between[1]}`) ? { ...h, verdict: 'reshoot' } : h));
  const gapBetween = new Map<string, CoverageHole>();
  for (const h of holes) if (h.between) gapBetween.set(`${h.between[0]}:${h.between[1]}`, h);
  const holeOf = (p: PairMeasure): CoverageHole | null => {
    const key = stationKey(p);
    return key === null ? null : gapBetween.get(key) ?? null;
  };
  return { holes, notes: found.notes, holeOf };
}

/**
 * Each item's findings under a level's rules, in the list's order, and the flags each rule raised
 * (a later level reads them by rule name). A rule that judges alone replaces what came before it and
 * ends the list for that item.
 */
function applyRules<T, F, R extends Rule<T, F>>(items: readonly T[], rules: readonly R[], facts: F, applies: (rule: R, item: T) => boolean = () => true): { findings: Findings; byRule: Map<string, readonly Flag[]> }[] {
  const checks = rules.map((rule) => ({ rule, check: rule.prepare(facts) }));
  return items.map((item) => {
    let findings = new Findings();
    const byRule = new Map<string, readonly Flag[]>();
    for (const { rule, check } of checks) {
      if (!applies(rule, item)) continue;
      const flags = check(item, findings.reasons);
      if (flags.length === 0) continue;
      if (rule.alone) {
        findings = new Findings();
        byRule.clear();
      }
      byRule.set(rule.name, flags);
      for (const f of flags) findings.add(f.code, f.verdict, f.advice);
      if (rule.alone) break;
    }
    return { findings, byRule };
  });
}

/** A finding's measurement alone: what was judged, without the judgement. */
function strip<T extends Finding>(x: T): Omit<T, keyof Finding> {
  const { verdict: _v, reasons: _r, advice: _a, ...rest } = x;
  return rest;
}

/** The frames, stations and pairs a report's lists were judged from. */
function measuresOf(r: Pick<Report, 'frames' | 'stations' | 'pairs'>): Pick<Analysis, 'frames' | 'stations' | 'pairs'> {
  return {
    frames: r.frames.map((f) => {
      const { station: _s, flags: _f, ...rest } = strip(f);
      return rest;
    }),
    stations: r.stations.map((s) => {
      const { flags: _f, ...rest } = strip(s);
      return rest;
    }),
    pairs: r.pairs.map((p) => strip(p)),
  };
}

/** The measurements a report was judged from, to judge them again against another budget. */
export function analysisOf(report: Report): Analysis {
  return {
    folder: report.folder,
    sweepDeg: report.sweepDeg,
    geometry: report.geometry ?? null,
    skipped: report.skipped,
    rawPlusJpeg: report.rawPlusJpeg ?? null,
    ...measuresOf(report),
    ...(report.sequences ? { sequences: report.sequences.map(sequenceAnalysisOf), singleShots: report.singleShots ?? [] } : {}),
  };
}

function sequenceAnalysisOf(q: ReportSequence): SequenceAnalysis {
  return { index: q.index, splitBy: q.splitBy, sweepDeg: q.sweepDeg, geometry: q.geometry, ...measuresOf(q) };
}

export function rejudge(report: Report, budget: MatchBudget): Report {
  return judge(analysisOf(report), budget);
}
