import type { PairKind, Report, ReportPair, ReportSequence, Verdict } from '../core/sequence/report.js';
import { duration, millimetres } from '../core/sequence/number-words.js';
import { sequenceReport } from '../core/sequence/sequence-report.js';
import { lensSentence } from '../core/sequence/lens-words.js';
import { notChecked } from '../core/sequence/verdicts.js';

/** "1 frame", "35 frames". */
const count = (n: number, one: string): string => `${n} ${one}${n === 1 ? '' : 's'}`;

const word: Record<Verdict, string> = { ok: 'ok', weak: 'WEAK', reshoot: 'RESHOOT' };
const mark: Record<Verdict, string> = { ok: '  ', weak: '~ ', reshoot: '! ' };

function pad(s: string, n: number): string {
  return s.length >= n ? s : s + ' '.repeat(n - s.length);
}

/**
 * A line as a terminal may show it: control characters (ESC, CR, a newline inside a file name) and
 * the bidirectional overrides that reorder what is displayed are written as escapes, so that a file
 * name cannot move the cursor, rewrite a line or hide what it says.
 */
export function forTerminal(line: string): string {
  // eslint-disable-next-line no-control-regex -- control characters are what this finds
  return line.replace(/[\u0000-\u001f\u007f-\u009f\u200e\u200f\u202a-\u202e\u2066-\u2069]/g, (c) => {
    const code = c.charCodeAt(0);
    return code <= 0xff ? `\\x${code.toString(16).padStart(2, '0')}` : `\\u${code.toString(16).padStart(4, '0')}`;
  });
}

/** Why a sequence is apart from the one before it, in words. */
function apartWords(splitBy: ReportSequence['splitBy']): string {
  const words = splitBy.map((e) => {
    switch (e.by) {
      case 'pause':
        return `a pause of ${duration(e.seconds)}`;
      case 'camera':
        return `another camera${e.to ? ` (${e.to})` : ''}`;
      case 'lens':
        return `another lens${e.to ? ` (${e.to})` : ''}`;
      case 'focal-length':
        return `focal length ${millimetres(e.fromMm)} to ${millimetres(e.toMm)}`;
      case 'orientation':
        return `${e.to} instead of ${e.from}`;
      case 'content':
        return `${e.after} and ${e.before} share nothing`;
    }
  });
  return words.join(', ');
}

/** "19:12" from a local ISO 8601 time. */
const clock = (iso: string | null): string | null => (iso ? iso.slice(11, 16) : null);

/**
 * The summary of a card of several sequences (or of one with single shots beside it): a block per
 * sequence, headed by its frames, time span, stations and verdict, each as if it were checked alone;
 * then the single shots, the files not checked, and the card's count and verdict.
 */
function formatCard(report: Report, streamed?: ReadonlyMap<string, ShownPair>): string {
  const seqs = report.sequences ?? [];
  const singles = report.singleShots ?? [];
  const out: string[] = [`Seamscout check of ${report.folder}`];
  out.push(`${seqs.length} sequence${seqs.length === 1 ? '' : 's'}${singles.length ? ` and ${singles.length} single shot${singles.length === 1 ? '' : 's'}` : ''} on the card`);
  for (const q of seqs) {
    const span = [clock(q.startTime), clock(q.endTime)].filter(Boolean);
    const when = span.length === 2 ? (span[0] === span[1] ? `, ${span[0]}` : `, ${span[0]} to ${span[1]}`) : '';
    out.push('', `Sequence ${q.index} of ${seqs.length}: ${q.firstFile} to ${q.lastFile}, ${q.frames.length} frames, ${q.stations.length} stations${when}, ${word[q.verdict]}`);
    if (q.splitBy.length) out.push(`  apart from the sequence before: ${apartWords(q.splitBy)}`);
    // The card's plan at the end has every sequence's items already.
    const body = formatOne(sequenceReport(report, q.index), false, streamed).trimEnd().split('\n').slice(1);
    // The heading has the counts already: what the sequence covers is left of that line.
    const rest = body[0].replace(/^\d+ frames? in \d+ stations?(, )?/, '');
    body[0] = rest.charAt(0).toUpperCase() + rest.slice(1);
    out.push(...body.map((l) => (l ? `  ${l}` : l)));
  }
  if (singles.length) {
    const w = Math.max(...singles.map((s) => s.file.length));
    out.push('', 'Single shots (not part of a sequence, not judged):', ...singles.map((s) => `  ${pad(s.file, w)}  ${clock(s.captureTime) ?? '     '}  ${s.reason}`));
  }
  for (const p of report.folderProblems) out.push('', `! ${p.advice}`);
  const left = notChecked(report.skipped);
  if (left.length) out.push('', 'Not checked:', ...left.map((s) => `! ${s.file}: ${s.reason}`));
  if (report.rawPlusJpeg) out.push('', rawPlusJpegLine(report.rawPlusJpeg));
  const by = (v: string): number => seqs.filter((q) => q.verdict === v).length;
  const tally = [by('ok') ? `${by('ok')} ok` : '', by('weak') ? `${by('weak')} weak` : '', by('reshoot') ? `${by('reshoot')} to reshoot` : ''].filter(Boolean).join(', ');
  out.push('', `${seqs.length} sequence${seqs.length === 1 ? '' : 's'}${tally ? `: ${tally}` : ''}${singles.length ? `; ${singles.length} single shot${singles.length === 1 ? '' : 's'}` : ''}.`);
  // The plan last: it is what stays on screen when the check is over.
  out.push('', ...planBlock(report, report.folder));
  return out.map(forTerminal).join('\n') + '\n';
}

/**
 * The reshoot plan as it leads the summary: what must be done, numbered in shooting order, then
 * what is only worth a look, then the verdict in one line.
 */
function planBlock(report: Report, subject: string): string[] {
  const plan = report.plan ?? [];
  const must = plan.filter((i) => !i.optional), look = plan.filter((i) => i.optional);
  const out: string[] = [];
  if (must.length) out.push(`Reshoot plan for ${subject}, in shooting order:`, ...must.map((i, k) => `  ${String(k + 1).padStart(String(must.length).length)}. ${i.text}`));
  else out.push(`Reshoot plan for ${subject}: nothing to reshoot.`);
  if (look.length) out.push(`Worth a look${must.length ? ' (optional)' : ''}:`, ...look.map((i) => `  - ${i.text}`));
  const counted = [must.length ? count(must.length, 'item') + ' to reshoot' : '', look.length ? `${look.length} worth a look` : ''].filter(Boolean).join(', ');
  // A weak card with nothing in its plan (a file left out, a break between sequences) says why above
  // (the plan and verdict are printed last).
  out.push(report.verdict === 'ok' ? 'Verdict: ok. Every pair and frame is within the match budget.' : `Verdict: ${word[report.verdict]}. ${counted || 'Nothing to reshoot; see above'}.`);
  return out;
}

/**
 * The summary a photographer reads in the terminal once the check is over: what the sequence
 * covers, the pairs, the frames and the findings behind the plan, then the reshoot plan and the
 * verdict in one line, last, so that they are what stays on screen.
 *
 * `streamed` holds the pairs printed while the check ran (by `pairKey`). Those lines are not
 * printed again: only a pair the whole sequence judged otherwise (another verdict, or another kind:
 * a row's closure pair first screened as another pair) and a pair never shown. Without it (or
 * when none of a sequence's pairs was shown) the whole pair table is printed.
 */
export function formatSummary(report: Report, streamed?: ReadonlyMap<string, ShownPair>): string {
  if ((report.sequences?.length ?? 0) > 1 || (report.singleShots?.length ?? 0) > 0) return formatCard(report, streamed);
  return formatOne(report, true, streamed);
}

/** A pair as its line showed it while the check ran. */
export interface ShownPair {
  readonly verdict: Verdict;
  readonly kind: PairKind;
}

/** The key of a pair among those shown while checking: its two files, in order (its kind may change at the end). */
export const pairKey = (p: { a: string; b: string }): string => `${p.a}\n${p.b}`;

/** The heading of the pair table; `w` is the longest file name. */
export function pairTableHeader(w: number): string {
  return `  ${pad('pair', 2 * w + 4)}  ${pad('kind', 9)} overlap  inliers  EV      verdict`;
}

/** One row of the pair table: mark, the two files, kind, overlap, inliers, EV difference, verdict and reasons. */
export function pairRow(p: Pick<ReportPair, 'a' | 'b' | 'kind' | 'overlap' | 'inliers' | 'evDiff' | 'verdict' | 'reasons'>, w: number): string {
  const overlap = p.overlap === null ? '   -  ' : `${(100 * p.overlap).toFixed(0).padStart(4)} %`;
  const ev = p.evDiff === null ? '  -   ' : `${p.evDiff >= 0 ? '+' : ''}${p.evDiff.toFixed(2)}`.padStart(6);
  return `${mark[p.verdict]}${pad(`${p.a} -> ${p.b}`, 2 * w + 4)}  ${pad(p.kind, 9)} ${overlap}  ${String(p.inliers).padStart(7)}  ${ev}  ${word[p.verdict]}${p.reasons.length ? ` (${p.reasons.join(', ')})` : ''}`;
}

function formatOne(report: Report, withPlan = true, streamed?: ReadonlyMap<string, ShownPair>): string {
  const out: string[] = [];
  const g = report.geometry;
  const openTurn = report.pairs.some((p) => p.kind === 'closure' && p.homography === null);
  const closes = g?.closure ? (g.closure.closes ? `, the turn closes (within ${g.closure.misclosureDeg!.toFixed(1)} deg)` : ', the turn does not meet itself') : openTurn ? ', the turn does not close' : '';
  const sweep = g
    ? `, covering ${Math.round(g.horizontalDeg)} deg of the horizon and ${Math.round(g.verticalDeg)} deg vertically${closes}`
    : report.sweepDeg === null ? '' : `, sweep about ${Math.round(report.sweepDeg)} deg`;
  out.push(`Seamscout check of ${report.folder}`);
  out.push(`${count(report.counts.frames, 'frame')} in ${count(report.counts.stations, 'station')}${sweep}`);
  const lens = lensSentence(report);
  if (lens) out.push(`Lens as measured: ${lens}`);
  const w = Math.max(8, ...report.frames.map((f) => f.file.length));
  if (streamed && report.pairs.some((p) => streamed.has(pairKey(p)))) out.push(...pairsSinceShown(report.pairs, streamed, w));
  else {
    out.push('');
    // Bracket pairs are listed only when flagged; the rest are summed up in one line.
    const shown = report.pairs.filter((p) => p.kind !== 'bracket' || p.verdict !== 'ok');
    const quietBrackets = report.pairs.filter((p) => p.kind === 'bracket' && p.verdict === 'ok');
    if (shown.length) out.push(pairTableHeader(w), ...shown.map((p) => pairRow(p, w)));
    if (quietBrackets.length) {
      const worstShift = Math.max(...quietBrackets.map((p) => p.shiftPx ?? 0));
      out.push(`  ${quietBrackets.length} bracket frame${quietBrackets.length === 1 ? '' : 's'} aligned with their reference (largest shift ${worstShift.toFixed(1)} px)`);
    }
  }
  const flaggedFrames = report.frames.filter((f) => f.verdict !== 'ok');
  if (flaggedFrames.length) {
    out.push('', 'Frames:');
    for (const f of flaggedFrames) out.push(`${mark[f.verdict]}${pad(f.file, w)}  station ${f.station + 1}  ${word[f.verdict]} (${f.flags.join(', ')})`);
  }
  if (report.folderProblems.length) {
    out.push('');
    for (const p of report.folderProblems) out.push(`! ${p.advice}`);
  }
  const left = notChecked(report.skipped);
  if (left.length) {
    out.push('', 'Not checked:');
    for (const s of left) out.push(`! ${s.file}: ${s.reason}`);
  }
  if (report.rawPlusJpeg) out.push('', rawPlusJpegLine(report.rawPlusJpeg));
  const advice = [...new Set([...report.pairs.flatMap((p) => p.advice), ...report.frames.flatMap((f) => f.advice), ...(report.holes ?? []).map((h) => h.advice)])];
  // Worth knowing, asking for nothing (an open zenith or nadir the set does not reach toward).
  const notes = report.coverageNotes ?? [];
  if (notes.length) out.push('', 'Notes:', ...notes.map((n) => `  - ${n.text}`));
  if (report.verdict !== 'ok') {
    // The findings behind the plan, each with its measures. What is flagged is counted as pairs and
    // frames, never as "to reshoot": that count is the plan's items, in the verdict line.
    const some = (n: number, what: string): string => (n ? count(n, what) : '');
    const flagged = [some(report.pairs.filter((p) => p.verdict !== 'ok').length, 'pair'), some(flaggedFrames.length, 'frame')].filter(Boolean).join(' and ');
    // Holes no pair carries are counted apart.
    const pairAdvice = new Set(report.pairs.flatMap((p) => p.advice));
    const holes = (report.holes ?? []).filter((h) => h.verdict !== 'ok' && !pairAdvice.has(h.advice)).length;
    const found = [flagged ? `${flagged} flagged` : '', holes ? `${count(holes, 'hole')} in the coverage` : '', left.length ? `${count(left.length, 'file')} not checked` : ''].filter(Boolean).join(', ');
    if (found || advice.length) out.push('', found ? `Findings: ${found}.` : 'Findings:');
    if (advice.length) out.push(...advice.map((a) => `  - ${a}`));
  }
  if (withPlan) out.push('', ...planBlock(report, report.folder));
  return out.map(forTerminal).join('\n') + '\n';
}

/**
 * After the lines shown while checking, only what is new about the pairs: those the whole sequence
 * judged otherwise (with what they were shown as), and any never shown.
 */
function pairsSinceShown(pairs: readonly ReportPair[], streamed: ReadonlyMap<string, ShownPair>, w: number): string[] {
  const out: string[] = [];
  const changed = pairs.filter((p) => {
    const s = streamed.get(pairKey(p));
    return s !== undefined && (s.verdict !== p.verdict || s.kind !== p.kind);
  });
  if (changed.length) {
    out.push('', 'Judged otherwise once the whole sequence was checked:', pairTableHeader(w));
    for (const p of changed) {
      const s = streamed.get(pairKey(p))!;
      out.push(`${pairRow(p, w)}  [shown as ${[s.kind !== p.kind ? s.kind : '', s.verdict !== p.verdict ? word[s.verdict] : ''].filter(Boolean).join(', ')} while checking]`);
    }
  }
  const unseen = pairs.filter((p) => !streamed.has(pairKey(p)));
  if (unseen.length) out.push('', 'Pairs not shown while checking:', pairTableHeader(w), ...unseen.map((p) => pairRow(p, w)));
  return out;
}

/** One line on the shots written as RAW and JPEG: which file of each was checked, and how to check the other. */
export function rawPlusJpegLine(r: NonNullable<Report['rawPlusJpeg']>): string {
  const shots = `${r.shots} shot${r.shots === 1 ? '' : 's'} written as RAW and JPEG`;
  return r.checked === 'raw'
    ? `${shots}: the RAW file of each was checked, through its embedded preview (--prefer jpeg checks the JPEGs).`
    : `${shots}: the JPEG of each was checked (--prefer raw checks the RAW files).`;
}

/** A one-line progress bar for a terminal; a total that grew late (a pair planned last) never overfills it. */
export function progressLine(label: string, done: number, total: number, width = 30): string {
  const f = total > 0 ? Math.max(0, Math.min(1, done / total)) : 0;
  const n = Math.round(f * width);
  return `\r${label.padEnd(7)} [${'#'.repeat(n)}${'.'.repeat(width - n)}] ${done}/${total}`;
}
