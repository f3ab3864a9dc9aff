/**
 * The reshoot plan: what to do at the site, by station, in shooting order, with the settings to
 * use. Built from a judged report (its verdicts, reasons and measures), never from thresholds of its
 * own, so a new budget rebuilds it with the verdicts.
 *
 * One reshoot, one item: every finding that one reshoot of a station fixes (an exposure jump, a
 * drifted or incomplete bracket, a blurred frame, settings that differ from the rest) is one item
 * for that station, listing each reason; every finding that one added station fixes (low overlap,
 * no match, a hole between them, a turn that does not close) is one item between two stations.
 * Weak findings are kept as items marked optional ("worth a look"): leaving them out would hide from
 * the first screen what the verdicts still report, and a photographer at the site may as well fix
 * them while the tripod is up.
 */
import type { CoverageHole, FlagCode, FrameSettings, MatchBudget, ReportFrame, ReportPair, ReportStation, SequenceGeometry, SkippedFile, Verdict } from './report.js';
import { fNumber, isoSpeed, millimetres, percent, shutterTime, signedEv } from './number-words.js';
import { missingOffsets, modalPattern, patternOf } from './stations.js';

/** What an item asks for. */
export type PlanAction =
  /** Shoot the station (its whole bracket) again. */
  | 'reshoot-station'
  /** Shoot one or more new stations between two that do not meet. */
  | 'add-stations'
  /** Aim a frame at a hole in the coverage that lies between no two stations (a pole, a band between rows). */
  | 'fill-hole'
  /** Nothing certain to reshoot: look at the pairs or the stations named (parallax, the lens fit, a turn that misses itself). */
  | 'look'
  /** Files that could not be read (damaged, cut short, empty): copy them from the card again, or reshoot them. */
  | 'copy-again';

/** The exposure (and, where it drifted, the focal length and white balance) the rest of the sequence was shot at. */
export interface PlanSettings {
  readonly exposureTime: number | null;
  readonly fNumber: number | null;
  readonly iso: number | null;
}

export interface PlanItem {
  /** The sequence it belongs to (counting from 1) on a card of several; null for a folder of one. */
  readonly sequence: number | null;
  /** Weak findings only: worth a look, not a must. */
  readonly optional: boolean;
  readonly action: PlanAction;
  /** The stations involved, as `index` in the stations list of the report that holds the plan (counting from 0). */
  readonly stationIndices: readonly number[];
  /** The same stations as a person reads them: counting from 1 within their sequence, as the text says. */
  readonly stationNumbers: readonly number[];
  /** The frames involved, in shooting order. */
  readonly files: readonly string[];
  readonly reasons: readonly FlagCode[];
  /** The action in words, with its reasons. */
  readonly text: string;
  /** The settings to shoot at (the sequence's usual ones); null where they are unknown or do not apply. */
  readonly settings: PlanSettings | null;
  /** Where to aim each frame or station to add, in the poses' degrees; empty where not known or not asked. */
  readonly aim: readonly { readonly yawDeg: number; readonly pitchDeg: number }[];
}

/** What the plan is built from: one sequence's judged lists. */
export interface PlanSource {
  readonly frames: readonly ReportFrame[];
  readonly stations: readonly ReportStation[];
  readonly pairs: readonly ReportPair[];
  readonly holes?: readonly CoverageHole[];
  readonly geometry: SequenceGeometry | null;
  /** The budget the pairs were judged by: says which of a pair's several reasons weighs what. */
  readonly budget?: MatchBudget;
}

const rank: Record<Verdict, number> = { ok: 0, weak: 1, reshoot: 2 };
const worse = (a: Verdict, b: Verdict): Verdict => (rank[b] > rank[a] ? b : a);

/** The value most entries share, when at least two do (a lone value is no "rest" to be like). */
function usual<T>(xs: readonly T[]): T | null {
  const counts = new Map<T, number>();
  for (const x of xs) counts.set(x, (counts.get(x) ?? 0) + 1);
  let best: T | null = null, n = 1;
  for (const [x, c] of counts) if (c > n) [best, n] = [x, c];
  return best;
}

/** Exposure as one number (APEX: EV100 = log2(N^2 / t) - log2(ISO / 100), ISO 2720, memory); null when a setting is unknown. */
function ev100(s: { exposureTime: number | null; fNumber: number | null; iso: number | null }): number | null {
  if (s.exposureTime === null || s.fNumber === null || s.iso === null || !(s.exposureTime > 0 && s.fNumber > 0 && s.iso > 0)) return null;
  return Math.log2((s.fNumber * s.fNumber) / s.exposureTime) - Math.log2(s.iso / 100);
}

/** "SSC_0024" from "SSC_0024.JPG": the plan names frames as a camera's display does, without the extension. */
const shortName = (file: string): string => file.replace(/\.[A-Za-z0-9]{1,5}$/, '') || file;

const frameRange = (files: readonly string[]): string =>
  files.length === 0 ? '' : files.length === 1 ? shortName(files[0]) : `${shortName(files[0])} to ${shortName(files[files.length - 1])}`;

const wrap360 = (deg: number): number => ((deg % 360) + 360) % 360;
/** b - a the short way round, -180..180. */
const turn = (a: number, b: number): number => ((((b - a + 180) % 360) + 360) % 360) - 180;

const numberWords = ['no', 'one', 'two', 'three', 'four', 'five'];
const countWord = (n: number): string => numberWords[n] ?? String(n);

const andList = (xs: readonly string[]): string => (xs.length <= 1 ? xs.join('') : `${xs.slice(0, -1).join(', ')} and ${xs[xs.length - 1]}`);

interface Draft {
  /** Shooting order: a station's index, between two stations half way, holes and the whole sequence last. */
  order: number;
  /** Between the last station of a turn and its first. */
  closing?: boolean;
  action: PlanAction;
  verdict: Verdict;
  stations: number[];
  files: Set<string>;
  reasons: FlagCode[];
  /** The place in words ("Station 9 (SSC_0024 to SSC_0026)"). */
  where: string;
  why: string[];
  actions: string[];
  /** The settings to use are said in the text (exposure or settings are among the reasons). */
  settings: boolean;
  aim: { yawDeg: number; pitchDeg: number }[];
}

/** One sequence's lists looked up by file and station, its usual settings and bracket, and the items drafted so far. */
interface PlanContext {
  readonly frames: readonly ReportFrame[];
  readonly stations: readonly ReportStation[];
  readonly pairs: readonly ReportPair[];
  readonly holes: readonly CoverageHole[];
  readonly geometry: SequenceGeometry | null;
  readonly budget: MatchBudget | undefined;
  readonly stationOfFile: Map<string, ReportStation>;
  readonly stationByIndex: Map<number, ReportStation>;
  readonly settingsOf: Map<string, FrameSettings>;
  readonly settings: PlanSettings | null;
  readonly usualEv: number | null;
  readonly usualFocal: number | null;
  readonly usualWhite: FrameSettings['whiteBalance'];
  readonly patterns: string[];
  readonly modal: string | null;
  readonly bracketSize: number;
  readonly bracketed: boolean;
  readonly poseOf: Map<number, SequenceGeometry['poses'][number]>;
  /** Pairs between stations: neighbour and closure kinds. */
  readonly linkPairs: readonly ReportPair[];
  /** Keyed by station (`s3`), by two stations (`b3:4`), `lens` and by hole (`h0`); kept in the order drafted. */
  readonly drafts: Map<string, Draft>;
}

function planContext(source: PlanSource): PlanContext {
  const { frames, stations, pairs, geometry, budget } = source;
  const stationOfFile = new Map<string, ReportStation>();
  for (const s of stations) for (const f of s.frames) stationOfFile.set(f, s);
  const settingsOf = new Map(frames.map((f) => [f.file, f.settings]));
  const refs = stations.map((s) => settingsOf.get(s.reference)).filter((s): s is FrameSettings => !!s);
  const known = <K extends keyof FrameSettings>(k: K): NonNullable<FrameSettings[K]>[] => refs.map((s) => s[k]).filter((v): v is NonNullable<FrameSettings[K]> => v !== null);
  const usualSettings = refs.length >= 3 ? { exposureTime: usual(known('exposureTime')), fNumber: usual(known('fNumber')), iso: usual(known('iso')) } : null;
  const settings: PlanSettings | null = usualSettings && (usualSettings.exposureTime !== null || usualSettings.fNumber !== null || usualSettings.iso !== null) ? usualSettings : null;
  const patterns = stations.map((s) => patternOf(s.evOffsets));
  const modal = modalPattern(patterns);
  const bracketSize = modal ? modal.split(',').length : 1;
  return {
    frames, stations, pairs, geometry, budget,
    holes: source.holes ?? [],
    stationOfFile,
    stationByIndex: new Map(stations.map((s) => [s.index, s])),
    settingsOf,
    settings,
    usualEv: settings ? ev100(settings) : null,
    usualFocal: refs.length >= 3 ? usual(known('focalLength')) : null,
    usualWhite: refs.length >= 3 ? usual(known('whiteBalance')) : null,
    patterns, modal, bracketSize,
    bracketed: bracketSize > 1,
    poseOf: new Map((geometry?.poses ?? []).map((p) => [p.station, p])),
    linkPairs: pairs.filter((p) => p.kind === 'neighbour' || p.kind === 'closure'),
    drafts: new Map<string, Draft>(),
  };
}

function stationDraft(ctx: PlanContext, s: ReportStation): Draft {
  const key = `s${s.index}`;
  let d = ctx.drafts.get(key);
  if (!d) {
    const files = s.frames;
    d = {
      order: s.index, action: 'reshoot-station', verdict: 'ok', stations: [s.index], files: new Set(files), reasons: [],
      where: `Station ${s.index + 1} (${frameRange(files)})`, why: [], actions: [], settings: false, aim: [],
    };
    ctx.drafts.set(key, d);
  }
  return d;
}

function note(d: Draft, code: FlagCode, verdict: Verdict, why: string | null): void {
  if (!d.reasons.includes(code)) d.reasons.push(code);
  if (why !== null && !d.why.includes(why)) d.why.push(why);
  d.verdict = worse(d.verdict, verdict);
}

/** A pair between stations keyed by its two stations, lower index first; null within one station. */
function betweenKey(ctx: PlanContext, p: ReportPair): [number, number] | null {
  const i = ctx.stationOfFile.get(p.a)?.index, j = ctx.stationOfFile.get(p.b)?.index;
  if (i === undefined || j === undefined || i === j) return null;
  return i < j ? [i, j] : [j, i];
}

/**
 * The verdict of one of a pair's reasons: the pair's own when it has one reason, else that reason's
 * rule (verdicts.ts) again, so a reason moved to another item takes only its own weight.
 */
function reasonVerdict(budget: MatchBudget | undefined, p: ReportPair, code: FlagCode): Verdict {
  if (p.reasons.length <= 1 || !budget) return p.verdict;
  switch (code) {
    case 'exposure-jump':
      return Math.abs(p.evDiff ?? 0) > 2 * budget.maxEvDiff ? 'reshoot' : 'weak';
    case 'low-overlap':
      return (p.overlap ?? 0) < budget.reshootOverlap ? 'reshoot' : 'weak';
    case 'few-inliers':
      return p.inliers < budget.minInliers / 2 ? 'reshoot' : 'weak';
    case 'parallax':
    case 'movement':
    case 'lens-misfit':
      return 'weak';
    case 'no-closure':
      return p.homography === null ? p.verdict : 'weak';
    default:
      return p.verdict;
  }
}

function betweenDraft(ctx: PlanContext, p: ReportPair, i: number, j: number): Draft {
  const key = `b${i}:${j}`;
  let d = ctx.drafts.get(key);
  if (!d) {
    const closing = p.kind === 'closure' || j - i > 1;
    // The closing pair comes after the last station: that is when it is shot.
    const order = closing ? Math.max(i, j) + 0.5 : i + 0.5;
    const [first, second] = closing ? [j, i] : [i, j];
    // The pair's frames, the one of station `first` first.
    const files = (ctx.stationOfFile.get(p.a)?.index === first ? [p.a, p.b] : [p.b, p.a]).map(shortName);
    d = {
      order, closing, action: 'look', verdict: 'ok', stations: [first, second], files: new Set([p.a, p.b]), reasons: [],
      where: `Between stations ${first + 1} and ${second + 1} (${andList(files)})${closing ? ', where the turn closes' : ''}`,
      why: [], actions: [], settings: false, aim: [],
    };
    ctx.drafts.set(key, d);
  }
  return d;
}

/**
 * Which station each exposure jump between stations blames, or null. EXIF names it when its
 * exposure differs from the sequence's usual one; otherwise the station whose every link jumped;
 * otherwise it is left between the two.
 */
function jumpCulprits(ctx: PlanContext): Map<ReportPair, number | null> {
  const { linkPairs, stations, settingsOf, usualEv } = ctx;
  const jumps = linkPairs.filter((p) => p.reasons.includes('exposure-jump') && p.evDiff !== null);
  const jumpCount = new Map<number, number>();
  const linkCount = new Map<number, number>();
  for (const p of linkPairs) {
    const k = betweenKey(ctx, p);
    if (!k) continue;
    for (const s of k) linkCount.set(s, (linkCount.get(s) ?? 0) + 1);
    if (jumps.includes(p)) for (const s of k) jumpCount.set(s, (jumpCount.get(s) ?? 0) + 1);
  }
  const exifOff = (index: number): boolean => {
    const s = stations.find((x) => x.index === index);
    const ev = s ? ev100(settingsOf.get(s.reference) ?? { exposureTime: null, fNumber: null, iso: null }) : null;
    return ev !== null && usualEv !== null && Math.abs(ev - usualEv) > 0.3;
  };
  const culpritOf = (p: ReportPair): number | null => {
    const k = betweenKey(ctx, p);
    if (!k) return null;
    const byExif = k.filter(exifOff);
    if (byExif.length === 1) return byExif[0];
    const everyLink = k.filter((s) => (jumpCount.get(s) ?? 0) >= 2 && jumpCount.get(s) === linkCount.get(s));
    return everyLink.length === 1 ? everyLink[0] : null;
  };
  return new Map<ReportPair, number | null>(jumps.map((p) => [p, culpritOf(p)]));
}

/** Exposure jumps with a culprit: that station is reshot at the usual settings. */
function draftJumpStations(ctx: PlanContext, jumpCulprit: Map<ReportPair, number | null>): void {
  const jumpOffset = new Map<number, number[]>();
  for (const [p, c] of jumpCulprit) {
    if (c === null) continue;
    const aIsCulprit = ctx.stationOfFile.get(p.a)?.index === c;
    const list = jumpOffset.get(c) ?? [];
    list.push(aIsCulprit ? -p.evDiff! : p.evDiff!);
    jumpOffset.set(c, list);
  }
  for (const [c, offsets] of jumpOffset) {
    const s = ctx.stationByIndex.get(c)!;
    const d = stationDraft(ctx, s);
    const mean = offsets.reduce((t, x) => t + x, 0) / offsets.length;
    const verdict = [...jumpCulprit].filter(([, x]) => x === c).reduce<Verdict>((v, [p]) => worse(v, reasonVerdict(ctx.budget, p, 'exposure-jump')), 'ok');
    note(d, 'exposure-jump', verdict, `exposed ${signedEv(mean)} against ${offsets.length > 1 ? 'its neighbours' : 'its neighbour'}`);
    d.settings = true;
  }
}

/** Station findings: incomplete and drifted brackets, drifted settings. */
function draftStationFindings(ctx: PlanContext): void {
  const { modal, patterns, bracketSize } = ctx;
  ctx.stations.forEach((s, k) => {
    if (s.verdict === 'ok') return;
    const d = stationDraft(ctx, s);
    for (const code of s.reasons) {
      if (code === 'incomplete-bracket') {
        const missing = modal ? missingOffsets(modal, patterns[k]) : [];
        const known = missing.filter((o) => o !== 'x').map((o) => signedEv(Number(o)));
        note(d, code, s.verdict, known.length ? `the ${andList(known)} frame${known.length === 1 ? ' is' : 's are'} missing` : `it has ${s.frames.length} of ${bracketSize} bracket frames`);
      } else if (code === 'settings-drift') {
        note(d, code, 'weak', settingsDriftWords(ctx, s, d));
        d.settings = true;
      } else if (code === 'bracket-drift') {
        // Said per frame below, with its shift.
        note(d, code, s.verdict, null);
      } else note(d, code, s.verdict, null);
    }
  });
}

/** Which of a station's settings differ from the sequence's usual ones, in words. */
function settingsDriftWords(ctx: PlanContext, s: ReportStation, d: Draft): string {
  const { settings, usualEv, usualFocal, usualWhite } = ctx;
  const ref = ctx.settingsOf.get(s.reference);
  const differs: string[] = [];
  if (ref && ev100(ref) !== null && usualEv !== null && Math.abs(ev100(ref)! - usualEv) > 0.3 && !d.reasons.includes('exposure-jump')) differs.push('exposure');
  if (ref && settings?.fNumber != null && ref.fNumber !== null && Math.abs(Math.log2(ref.fNumber / settings.fNumber)) > 0.15) differs.push('aperture');
  if (ref && settings?.iso != null && ref.iso !== null && Math.abs(Math.log2(ref.iso / settings.iso)) > 0.3) differs.push('ISO');
  if (ref && usualFocal !== null && ref.focalLength !== null && Math.abs(ref.focalLength - usualFocal) > 0.02 * usualFocal) differs.push('focal length');
  if (ref && usualWhite !== null && ref.whiteBalance !== null && ref.whiteBalance !== usualWhite) differs.push('white balance');
  return differs.length ? `its ${andList([...new Set(differs)])} differ${differs.length === 1 ? 's' : ''} from the rest` : 'its settings differ from the rest';
}

/** Frame findings: each folded into its station's item. */
function draftFrameFindings(ctx: PlanContext): void {
  for (const f of ctx.frames) {
    if (f.verdict === 'ok') continue;
    const s = ctx.stationOfFile.get(f.file);
    if (!s) continue;
    const d = stationDraft(ctx, s);
    for (const code of f.reasons) {
      if (code === 'blurred') note(d, code, f.verdict, `${shortName(f.file)} is blurred`);
      else if (code === 'bracket-drift') {
        const p = ctx.pairs.find((q) => q.kind === 'bracket' && q.b === f.file && q.reasons.includes('bracket-drift'));
        const why = p && p.shiftPx !== null && p.homography !== null ? `${shortName(f.file)} moved ${Math.round(p.shiftPx)} px against ${shortName(p.a)}` : `${shortName(f.file)} could not be aligned with the rest of the bracket`;
        note(d, code, f.verdict, why);
      } else if (code === 'size-mismatch') note(d, code, f.verdict, `${shortName(f.file)} is ${f.width} x ${f.height}, unlike the rest`);
      else note(d, code, f.verdict, null);
    }
  }
}

/** The sequence's usual step between neighbours, and which way it turned (+1 right, -1 left, 0 not known). */
interface SequenceTurn {
  readonly typicalStep: number | null;
  readonly direction: number;
}

function sequenceTurn(ctx: PlanContext): SequenceTurn {
  const signedSteps: number[] = [];
  for (const p of ctx.linkPairs) {
    const k = betweenKey(ctx, p);
    if (!k || p.reasons.length || p.kind === 'closure' || k[1] - k[0] !== 1) continue;
    const a = ctx.poseOf.get(k[0]), b = ctx.poseOf.get(k[1]);
    if (a && b) signedSteps.push(turn(a.yawDeg, b.yawDeg));
  }
  const steps = signedSteps.map(Math.abs).sort((x, y) => x - y);
  const typicalStep = steps.length ? steps[steps.length >> 1] : null;
  const rightward = signedSteps.filter((x) => x > 0).length, leftward = signedSteps.length - rightward;
  const direction = rightward > leftward ? 1 : leftward > rightward ? -1 : 0;
  return { typicalStep, direction };
}

/** Links between stations: what one or more added stations fix, and what is only worth a look. */
function draftLinks(ctx: PlanContext, jumpCulprit: Map<ReportPair, number | null>): void {
  const holeBetween = new Map<string, CoverageHole>();
  for (const h of ctx.holes) if (h.between) holeBetween.set(`${Math.min(...h.between)}:${Math.max(...h.between)}`, h);
  const seqTurn = sequenceTurn(ctx);
  for (const p of ctx.linkPairs) {
    if (p.verdict === 'ok') continue;
    const k = betweenKey(ctx, p);
    if (!k) continue;
    const [i, j] = k;
    const add = new Set<FlagCode>(['low-overlap', 'no-match', 'coverage-hole', 'few-inliers']);
    const missesChain = p.reasons.includes('no-closure') && p.homography !== null;
    const needsStation = p.reasons.some((c) => add.has(c)) || (p.reasons.includes('no-closure') && !missesChain);
    noteLinkReasons(ctx, p, i, j, jumpCulprit, missesChain);
    const d = ctx.drafts.get(`b${i}:${j}`);
    if (!d || !needsStation || d.action === 'add-stations') continue;
    askForStations(ctx, d, i, j, holeBetween.get(`${i}:${j}`), seqTurn);
  }
}

/** Each reason of a flagged pair between stations `i` and `j`, noted on the item between them. */
function noteLinkReasons(ctx: PlanContext, p: ReportPair, i: number, j: number, jumpCulprit: Map<ReportPair, number | null>, missesChain: boolean): void {
  const verdictOf = (code: FlagCode): Verdict => reasonVerdict(ctx.budget, p, code);
  for (const code of p.reasons) {
    if (code === 'exposure-jump') {
      const c = jumpCulprit.get(p);
      if (c !== null && c !== undefined) continue;
      const d = betweenDraft(ctx, p, i, j);
      note(d, code, verdictOf(code), `the exposure changed by ${signedEv(p.evDiff ?? 0)} between them`);
      d.actions.push('lock exposure and reshoot whichever of the two is not like the rest');
      d.action = d.action === 'add-stations' ? d.action : 'reshoot-station';
      d.settings = true;
      continue;
    }
    const d = betweenDraft(ctx, p, i, j);
    if (code === 'low-overlap') note(d, code, verdictOf(code), `overlap ${p.verdict === 'reshoot' ? 'only ' : ''}${percent(p.overlap ?? 0)}`);
    else if (code === 'no-match') note(d, code, verdictOf(code), p.predictedOverlap != null ? `no reliable match, overlap about ${percent(p.predictedOverlap)}` : 'no reliable match');
    else if (code === 'few-inliers') note(d, code, verdictOf(code), `only ${p.inliers} matching points`);
    else if (code === 'coverage-hole') note(d, code, verdictOf(code), 'nothing covers the scene between them');
    else if (code === 'no-closure') {
      note(d, code, verdictOf(code), missesChain ? 'the turn comes round but misses the chain of neighbours' : 'the turn does not close');
      if (missesChain) d.actions.push('check the pairs for a wrong match, or whether the camera moved off its pivot, before reshooting');
    } else if (code === 'parallax') {
      note(d, code, verdictOf(code), `near and far things do not line up, ${percent(p.misfit ?? 0)} of the overlap off`);
      d.actions.push("turn the camera about the lens's entrance pupil and reshoot if the seam crosses near things");
    } else if (code === 'movement') {
      note(d, code, verdictOf(code), 'something moved between them');
      d.actions.push('reshoot one of them once it has passed');
      if (d.action === 'look') d.action = 'reshoot-station';
    } else if (code === 'lens-misfit') continue;
    else note(d, code, verdictOf(code), null);
  }
}

/** The item between stations `i` and `j` asks for added stations: how many, and where to aim them. */
function askForStations(ctx: PlanContext, d: Draft, i: number, j: number, hole: CoverageHole | undefined, seqTurn: SequenceTurn): void {
  const { typicalStep, direction } = seqTurn;
  d.action = 'add-stations';
  d.settings = true;
  const a = ctx.poseOf.get(i), b = ctx.poseOf.get(j);
  let count = 1;
  if (hole) d.aim.push({ yawDeg: wrap360(hole.yawDeg), pitchDeg: hole.pitchDeg });
  else if (a && b) {
    // From the earlier station of the pair in shooting order to the later (the closing pair turns from the last to the first).
    const [from, to] = d.stations[0] === i ? [a, b] : [b, a];
    // The closing pair turns on the way the sequence turned, however far that is.
    const step = d.closing && direction !== 0 ? direction * wrap360(direction * (to.yawDeg - from.yawDeg)) : turn(from.yawDeg, to.yawDeg);
    // As many as keep the steps about as wide as the rest of the sequence's.
    count = typicalStep !== null && typicalStep > 0 ? Math.max(1, Math.ceil(Math.abs(step) / typicalStep - 0.05) - 1) : 1;
    for (let n = 1; n <= count; n++) d.aim.push({ yawDeg: wrap360(from.yawDeg + (step * n) / (count + 1)), pitchDeg: from.pitchDeg + ((to.pitchDeg - from.pitchDeg) * n) / (count + 1) });
  }
  const rows = ctx.geometry?.rows.length ?? 1;
  const what = ctx.bracketed ? `${countWord(count)} bracketed station${count === 1 ? '' : 's'}` : `${countWord(count)} frame${count === 1 ? '' : 's'}`;
  const aimWords = d.aim.length
    ? `, aimed at yaw ${andList(d.aim.map((x) => String(Math.round(x.yawDeg))))} degrees${rows > 1 ? `, pitch ${andList([...new Set(d.aim.map((x) => String(Math.round(x.pitchDeg))))])}` : ''}`
    : '';
  d.actions.unshift(`add ${what}${aimWords}`);
}

/** A fit that fails for the typical pair is the sequence's, not a link's: one item for it. */
function draftLensMisfit(ctx: PlanContext): void {
  const misfit = ctx.linkPairs.filter((p) => p.reasons.includes('lens-misfit'));
  if (!misfit.length) return;
  const involved = [...new Set(misfit.flatMap((p) => betweenKey(ctx, p) ?? []))].sort((x, y) => x - y);
  const advice = misfit[0].advice[misfit[0].reasons.indexOf('lens-misfit')] ?? misfit[0].advice[misfit[0].advice.length - 1];
  ctx.drafts.set('lens', {
    order: Number.MAX_SAFE_INTEGER, action: 'look', verdict: 'weak', stations: involved, files: new Set(misfit.flatMap((p) => [p.a, p.b])), reasons: ['lens-misfit'],
    where: 'The whole sequence', why: [], actions: [advice ?? 'the frames do not fit one lens turning about one point'], settings: false, aim: [],
  });
}

/** Holes between no two stations (a pole, a band between rows, a row's end): after the stations. */
function draftHoles(ctx: PlanContext): void {
  const { holes, stations, drafts } = ctx;
  const lastIndex = stations.length ? Math.max(...stations.map((s) => s.index)) : 0;
  holes.forEach((h, n) => {
    if (h.verdict === 'ok') return;
    if (h.between && drafts.has(`b${Math.min(...h.between)}:${Math.max(...h.between)}`)) return;
    if (h.between && ctx.pairs.some((p) => p.reasons.includes('coverage-hole') && p.advice.includes(h.advice))) return;
    const near = h.between ? [...h.between] : [];
    drafts.set(`h${n}`, {
      order: lastIndex + 0.75 + n / (holes.length + 1) / 4, action: 'fill-hole', verdict: h.verdict, stations: near, files: new Set(near.map((s) => ctx.stationByIndex.get(s)?.reference).filter((f): f is string => !!f)),
      reasons: ['coverage-hole'], where: h.pole ? `The ${h.pole}` : 'A hole in the coverage', why: [], actions: [h.advice], settings: !!ctx.settings, aim: [{ yawDeg: h.yawDeg, pitchDeg: h.pole === 'zenith' ? 90 : h.pole === 'nadir' ? -90 : h.pitchDeg }],
    });
  });
}

/** What reshooting one station asks for in words: the bracket or the frame, at which settings, how. */
function reshootStationWords(ctx: PlanContext, d: Draft): string {
  const { settings, usualFocal, usualWhite, bracketed, bracketSize } = ctx;
  const s = ctx.stationByIndex.get(d.stations[0])!;
  const ref = ctx.settingsOf.get(s.reference);
  const at: string[] = [];
  if (settings && d.settings) {
    if (settings.exposureTime !== null) at.push(shutterTime(settings.exposureTime));
    if (settings.fNumber !== null) at.push(fNumber(settings.fNumber));
    if (settings.iso !== null) at.push(isoSpeed(settings.iso));
    if (usualFocal !== null && ref?.focalLength != null && Math.abs(ref.focalLength - usualFocal) > 0.02 * usualFocal) at.push(millimetres(usualFocal));
    if (usualWhite !== null && ref?.whiteBalance != null && ref.whiteBalance !== usualWhite) at.push(`white balance ${usualWhite}`);
  }
  const what = s.frames.length > 1 || bracketed ? 'the bracket' : 'the frame';
  const missingOnly = d.reasons.length === 1 && d.reasons[0] === 'incomplete-bracket';
  const steady = d.reasons.includes('bracket-drift') || d.reasons.includes('blurred') ? ' from a steady support' : '';
  return `reshoot ${what}${missingOnly && bracketed ? ` with all ${bracketSize} frames` : ''}${at.length ? ` at ${at.join(', ')} like the rest` : ''}${steady}`;
}

/** The drafts that found something, in shooting order, as the plan's items. */
function planItems(ctx: PlanContext, sequence: number | null, stationOffset: number): PlanItem[] {
  const out: PlanItem[] = [];
  const prefix = sequence === null ? '' : `Sequence ${sequence}, `;
  const order = [...ctx.drafts.values()].filter((d) => d.verdict !== 'ok').sort((x, y) => x.order - y.order);
  const fileOrder = new Map(ctx.frames.map((f, k) => [f.file, k]));
  for (const d of order) {
    if (d.action === 'reshoot-station' && d.stations.length === 1) d.actions.unshift(reshootStationWords(ctx, d));
    const where = sequence === null ? d.where : d.where.charAt(0).toLowerCase() + d.where.slice(1);
    const why = d.why.length ? ` (${d.why.join('; ')})` : '';
    const text = `${prefix}${where}: ${[...new Set(d.actions)].join('; ')}${why}.`;
    out.push({
      sequence,
      optional: d.verdict !== 'reshoot',
      action: d.action,
      stationIndices: d.stations.map((s) => s + stationOffset),
      stationNumbers: d.stations.map((s) => s + 1),
      files: [...d.files].sort((x, y) => (fileOrder.get(x) ?? 0) - (fileOrder.get(y) ?? 0)),
      reasons: d.reasons,
      text,
      settings: d.action !== 'look' ? ctx.settings : null,
      aim: d.aim.map((x) => ({ yawDeg: Math.round(10 * x.yawDeg) / 10, pitchDeg: Math.round(10 * x.pitchDeg) / 10 })),
    });
  }
  return out;
}

/**
 * The plan of one sequence. `sequence` (counting from 1) is set on a card of several: each item then
 * says its sequence, and `stationOffset` is added to the station indices (the card's lists count
 * stations across the card).
 */
export function reshootPlan(source: PlanSource, sequence: number | null = null, stationOffset = 0): PlanItem[] {
  const ctx = planContext(source);
  // Drafted in this order: items of equal shooting order keep it.
  const jumpCulprit = jumpCulprits(ctx);
  draftJumpStations(ctx, jumpCulprit);
  draftStationFindings(ctx);
  draftFrameFindings(ctx);
  draftLinks(ctx, jumpCulprit);
  draftLensMisfit(ctx);
  draftHoles(ctx);
  return planItems(ctx, sequence, stationOffset);
}

/**
 * The files of a folder that could not be read (damaged, cut short, empty, a read error), as the
 * plan's first item: the quickest fix is a second copy from the card, and where the card's own copy
 * is bad, the frame is still there to be shot again while the tripod stands. Copies, strays, files
 * that are no picture and RAW files without a preview ask for nothing and are not in the plan.
 */
export function copyAgainPlan(skipped: readonly SkippedFile[]): PlanItem[] {
  const bad = skipped.filter((s) => s.code === 'unreadable');
  if (bad.length === 0) return [];
  const why = [...new Set(bad.map((s) => s.reason.split(':')[0]))];
  const names = andList(bad.map((s) => shortName(s.file)));
  const them = bad.length === 1 ? 'it' : 'them';
  return [
    {
      sequence: null,
      optional: false,
      action: 'copy-again',
      stationIndices: [],
      stationNumbers: [],
      files: bad.map((s) => s.file),
      reasons: [],
      text: `${names}: could not be read (${why.join('; ')}). Copy ${them} from the card again; if the card's own copy is bad, reshoot ${them}.`,
      settings: null,
      aim: [],
    },
  ];
}

/** The plan as lines a person reads: what must be done first, then what is worth a look. */
export function planLines(plan: readonly PlanItem[]): { readonly must: readonly string[]; readonly optional: readonly string[] } {
  return { must: plan.filter((i) => !i.optional).map((i) => i.text), optional: plan.filter((i) => i.optional).map((i) => i.text) };
}
