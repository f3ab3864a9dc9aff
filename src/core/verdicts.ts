import type { Analysis, CoverageHole, FlagCode, SkippedFile, Finding, FolderProblem, FrameSettings, MatchBudget, PairMeasure, Report, ReportFrame, ReportPair, ReportSequence, ReportStation, SequenceAnalysis, SequenceGeometry, StationMeasure, Verdict } from './report.js';
import { coverageFindings } from './coverage-map.js';
import { lensMisfitLimitPx } from './lens.js';
import { reportSchema } from './report.js';
import { missingOffsets, modalPattern, patternOf } from './stations.js';
import { blurredFrames } from './blur-verdict.js';
import { copyAgainPlan, reshootPlan } from './reshoot-plan.js';
import { degrees, fNumber, isoSpeed, millimetres, percent as pct, shutterTime, signedEv } from './number-words.js';

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

function mode<T>(xs: T[]): T | null {
  const counts = new Map<T, number>();
  for (const x of xs) counts.set(x, (counts.get(x) ?? 0) + 1);
  let best: T | null = null, n = 0;
  for (const [x, c] of counts) if (c > n) [best, n] = [x, c];
  return best;
}


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
function lensMisfit(analysis: Analysis, stationOf: Map<string, StationMeasure>): { pairs: Map<string, number>; advice: string } | null {
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

/** Judges a pair between stations (neighbour or closure) against the budget. */
function judgeStationPair(p: PairMeasure, budget: MatchBudget, sweepDeg: number | null, geometry: SequenceGeometry | null, frameSize: (file: string) => { width: number; height: number } | null, exposureSet: (file: string) => boolean = () => false): Finding {
  const f = new Findings();
  const between = `${p.a} and ${p.b}`;
  if (p.homography === null) {
    if (p.kind === 'closure') {
      const gap = geometry ? Math.max(0, ...geometry.gaps.map((g) => g.toYawDeg - g.fromYawDeg)) : 0;
      const deg = Math.round(gap);
      const missing = gap >= 0.5 ? `about ${degrees(deg)} of the turn ${deg === 1 ? 'is' : 'are'} not covered; ` : '';
      f.add('no-closure', sweepDeg !== null && sweepDeg >= 330 ? 'reshoot' : 'weak', `the turn does not close between ${between}: ${missing}add a frame between them`);
    } else if (p.predictedOverlap != null) {
      f.add('no-match', 'reshoot', `no reliable match between ${between}: overlap about ${pct(p.predictedOverlap)}, predicted from the turn between them; add a frame between them${p.predictedOverlap >= budget.weakOverlap ? ', or aim the overlap at more detail' : ''}`);
    } else f.add('no-match', 'reshoot', `no reliable match between ${between}: add a frame between them, or aim the overlap at more detail`);
    return f.done();
  }
  const closure = geometry?.closure;
  if (p.kind === 'closure' && closure && !closure.closes) {
    const off = closure.misclosureDeg === null ? '' : ` ${degrees(closure.misclosureDeg)}`;
    f.add('no-closure', 'weak', `the turn comes round between ${between} but misses the chain of neighbours by${off || ' too much'}: a pair may be matched wrongly, or the camera moved off its pivot; check the pairs before reshooting`);
  }
  const overlap = p.overlap ?? 0;
  if (overlap < budget.reshootOverlap) f.add('low-overlap', 'reshoot', `overlap is only ${pct(overlap)} between ${between}: add a frame between them`);
  else if (overlap < budget.weakOverlap) f.add('low-overlap', 'weak', `overlap is ${pct(overlap)} between ${between}: aim for 30-50 %, or add a frame between them`);
  if (p.inliers < budget.minInliers / 2) f.add('few-inliers', 'reshoot', `only ${p.inliers} matching points between ${between}: add a frame between them`);
  else if (p.inliers < budget.minInliers) f.add('few-inliers', 'weak', `only ${p.inliers} matching points between ${between}: more overlap or more detail in it would help`);
  if (p.parallax) {
    f.add('parallax', 'weak', `near and far things do not line up together in the overlap between ${between} (${pct(p.misfit ?? 0)} of it off): the camera moved off its pivot; turn it about the lens's entrance pupil (common practice) and reshoot if the seam crosses near things`);
  }
  for (const m of p.moved ?? []) {
    f.add('movement', 'weak', `something moved between ${between}, ${whereIn(m, frameSize(p.a))} of ${p.a}: a person, a wave or a branch there will ghost or be cut at the seam; reshoot one of them once it has passed`);
  }
  if (p.evDiff !== null && Math.abs(p.evDiff) > budget.maxEvDiff) {
    // A jump the camera's own settings explain (one frame exposed unlike the rest, as auto-exposure
    // does) is reshot at the settings of the rest, however small; one from the light alone is weak
    // until it is large, as a blend may hide it.
    const v: Verdict = Math.abs(p.evDiff) > 2 * budget.maxEvDiff || exposureSet(p.a) || exposureSet(p.b) ? 'reshoot' : 'weak';
    f.add('exposure-jump', v, `exposure changed by ${signedEv(p.evDiff)} between ${between}: lock exposure and reshoot`);
  }
  return f.done();
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

interface ModalSettings {
  fNumber: number | null;
  iso: number | null;
  exposureTime: number | null;
  focalLength: number | null;
  whiteBalance: string | null;
}

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
  // A sequence apart from the one before only by its content, shot at the same rhythm with the same
  // camera: a new panorama begun at once, or one panorama with a frame missing. Only the
  // photographer knows which, so it is said, and weighs as weak.
  const breaks: FolderProblem[] = sequences
    .filter((s) => sequences.length > 1 && s.splitBy.length > 0 && s.splitBy.every((e) => e.by === 'content'))
    .flatMap((s) => s.splitBy.flatMap((e) => (e.by === 'content' ? [{ code: 'sequence-break' as const, advice: `${e.after} and ${e.before} share nothing, while nothing else sets them apart: read as two sequences. If they are one panorama, a frame is missing between them: reshoot it` }] : [])));
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
  const frameFindings = new Map(analysis.frames.map((f) => [f.file, new Findings()]));
  const stationOf = new Map<string, StationMeasure>();
  for (const s of analysis.stations) for (const file of s.frames) stationOf.set(file, s);
  const settingsOf = new Map(analysis.frames.map((f) => [f.file, f.settings]));
  const stationFindings = analysis.stations.map(() => new Findings());

  // Brackets: incomplete stations.
  const patterns = analysis.stations.map((s) => patternOf(s.evOffsets));
  const modal = modalPattern(patterns);
  const modalSize = modal ? modal.split(',').length : 1;
  if (modal && modalSize > 1) {
    analysis.stations.forEach((s, i) => {
      if (patterns[i] === modal) return;
      const missing = missingOffsets(modal, patterns[i]);
      const missingText = missing.length ? ` (missing ${missing.map((o) => signedEv(Number(o))).join(', ')})` : '';
      const advice = `station ${s.index + 1} has ${s.frames.length} of ${modalSize} bracket frames${missingText}: reshoot the station`;
      stationFindings[i].add('incomplete-bracket', 'reshoot', advice);
      for (const file of s.frames) frameFindings.get(file)?.add('incomplete-bracket', 'reshoot', advice);
    });
  }

  // Blur: against each registered neighbour on the content both see (core/blur-verdict.ts).
  for (const b of blurredFrames(analysis, budget.minSharpnessRatio)) frameFindings.get(b.file)?.add('blurred', b.verdict, b.advice);

  // Settings that photographers lock, compared between stations' reference frames (common practice).
  const refs = analysis.stations.map((s) => settingsOf.get(s.reference)).filter((s): s is FrameSettings => !!s);
  if (refs.length >= 3) {
    const modalSettings: ModalSettings = {
      fNumber: mode(refs.map((s) => s.fNumber).filter((v): v is number => v !== null)),
      iso: mode(refs.map((s) => s.iso).filter((v): v is number => v !== null)),
      exposureTime: mode(refs.map((s) => s.exposureTime).filter((v): v is number => v !== null)),
      focalLength: mode(refs.map((s) => s.focalLength).filter((v): v is number => v !== null)),
      whiteBalance: mode(refs.map((s) => s.whiteBalance).filter((v): v is string => v !== null)),
    };
    // Reference frames on a pair between stations whose brightness jumped beyond the budget.
    const jumped = new Set(analysis.pairs.filter((p) => p.kind !== 'bracket' && p.kind !== 'other' && p.evDiff !== null && Math.abs(p.evDiff) > budget.maxEvDiff).flatMap((p) => [p.a, p.b]));
    analysis.stations.forEach((s, i) => {
      const ref = settingsOf.get(s.reference);
      if (!ref) return;
      const drift = settingsDrift(ref, modalSettings, jumped.has(s.reference));
      if (drift.length === 0) return;
      const advice = `${drift.join(', ')} at ${s.reference} (station ${s.index + 1}): lock these settings for the whole sequence`;
      stationFindings[i].add('settings-drift', 'weak', advice);
      for (const file of s.frames) frameFindings.get(file)?.add('settings-drift', 'weak', advice);
    });
  }

  // Holes first: a failed pair between the stations either side of a located gap is that hole.
  const found = coverageFindings({ ...analysis, budget });
  const notes = found.notes;
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

  // Reference frames whose EXIF exposure (APEX EV100 = log2(N^2 / t) - log2(ISO / 100), ISO 2720)
  // differs from the sequence's usual settings by more than the budget allows between neighbours.
  const exposureUnlikeRest = new Set<string>();
  if (refs.length >= 3) {
    const ev = (s: { exposureTime: number | null; fNumber: number | null; iso: number | null }): number | null =>
      s.exposureTime && s.fNumber && s.iso ? Math.log2((s.fNumber * s.fNumber) / s.exposureTime) - Math.log2(s.iso / 100) : null;
    const usual = ev({
      exposureTime: mode(refs.map((s) => s.exposureTime).filter((v): v is number => v !== null)),
      fNumber: mode(refs.map((s) => s.fNumber).filter((v): v is number => v !== null)),
      iso: mode(refs.map((s) => s.iso).filter((v): v is number => v !== null)),
    });
    for (const s of analysis.stations) {
      const own = ev(settingsOf.get(s.reference) ?? { exposureTime: null, fNumber: null, iso: null });
      if (usual !== null && own !== null && Math.abs(own - usual) > budget.maxEvDiff) exposureUnlikeRest.add(s.reference);
    }
  }

  // Pairs.
  const sizes = new Map(analysis.frames.map((f) => [f.file, { width: f.width, height: f.height }]));
  const frameSize = (file: string): { width: number; height: number } | null => sizes.get(file) ?? null;
  const misfit = lensMisfit(analysis, stationOf);
  const pairs: ReportPair[] = analysis.pairs.map((p) => {
    if ((p.kind === 'neighbour' || p.kind === 'closure') && p.homography === null) {
      // One cause, one flag: the pair failed because nothing lies between its frames; its card
      // says so with the hole's own words (a listed advice appears once), not a vaguer no-match.
      const hole = holeOf(p);
      if (hole) {
        const f = new Findings();
        f.add('coverage-hole', hole.verdict, hole.advice);
        return { ...p, ...f.done() };
      }
    }
    if (p.kind === 'neighbour' || p.kind === 'closure') {
      const found = judgeStationPair(p, budget, analysis.sweepDeg, analysis.geometry, frameSize, (file) => exposureUnlikeRest.has(file));
      const miss = misfit?.pairs.get(`${p.a}:${p.b}`) ?? misfit?.pairs.get(`${p.b}:${p.a}`);
      // A pair whose own parallax or movement explains its misfit keeps that flag alone.
      if (miss === undefined || found.reasons.includes('parallax') || found.reasons.includes('movement')) return { ...p, ...found };
      return { ...p, verdict: worst(found.verdict, 'weak'), reasons: [...found.reasons, 'lens-misfit'], advice: [...found.advice, misfit!.advice] };
    }
    if (p.kind === 'bracket') {
      const f = new Findings();
      if (p.homography === null) {
        f.add('bracket-drift', 'weak', `${p.b} could not be aligned with its reference ${p.a}: check it for movement`);
      } else if (p.shiftPx !== null && p.shiftPx > budget.maxBracketShiftPx) {
        const v: Verdict = p.shiftPx > 2 * budget.maxBracketShiftPx ? 'reshoot' : 'weak';
        f.add('bracket-drift', v, `${p.b} moved ${Math.round(p.shiftPx)} px against its reference ${p.a}: the bracket will ghost when merged; reshoot it from a steady support`);
      }
      const found = f.done();
      for (const code of found.reasons) frameFindings.get(p.b)?.add(code, found.verdict, found.advice[0]);
      if (found.reasons.length) {
        const st = stationOf.get(p.b);
        if (st) stationFindings[analysis.stations.indexOf(st)].add('bracket-drift', found.verdict, found.advice[0]);
      }
      return { ...p, ...found };
    }
    return { ...p, verdict: 'ok', reasons: [], advice: [] };
  });

  // Frame sizes: photographers shoot a sequence at one size (common practice); another size is a
  // changed setting, a crop, or a stray frame.
  const sizeKey = (f: { width: number; height: number }): string => `${Math.max(f.width, f.height)}x${Math.min(f.width, f.height)}`;
  const usualSize = mode(analysis.frames.map(sizeKey));
  if (analysis.frames.length >= 3 && usualSize) {
    for (const f of analysis.frames) {
      if (sizeKey(f) === usualSize) continue;
      frameFindings.get(f.file)?.add('size-mismatch', 'weak', `${f.file} is ${f.width}x${f.height} while the sequence is ${usualSize.replace('x', ' x ')}: a changed setting, a crop or a stray frame`);
    }
  }

  const folderProblems: FolderProblem[] = [];
  if (analysis.frames.length === 0) folderProblems.push({ code: 'no-frames', advice: 'no frame could be checked in this folder: is it the right folder, and are the files images?' });
  else if (analysis.frames.length === 1) folderProblems.push({ code: 'one-frame', advice: 'only one frame could be checked: a panorama needs at least two overlapping frames' });

  const frames: ReportFrame[] = analysis.frames.map((f) => {
    const found = frameFindings.get(f.file)!.done();
    return { ...f, station: stationOf.get(f.file)?.index ?? -1, flags: found.reasons, ...found };
  });
  const stations: ReportStation[] = analysis.stations.map((s, i) => {
    const found = stationFindings[i].done();
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
