// A card of several sequences: the list the app opens on (one entry per sequence, in shooting order,
// then the single shots), and the bar above a sequence opened from it. Pure functions of the report.
import { duration, millimetres } from '../core/sequence/number-words.js';
import type { Report, ReportSequence, SequenceSplit, SingleShot } from '../core/sequence/report.js';
import { cardSequences } from '../core/sequence/sequence-report.js';
import { button, el } from './dom.js';
import { plural, verdictWords } from './format.js';
import { backIcon, verdictBadge } from './icons.js';

export interface SequenceListContext {
  /** A thumbnail image element for a frame (the caller may reuse elements so images do not reload). */
  readonly thumbnail: (file: string) => HTMLImageElement;
  /** The sequence (its index) shown as selected, or null. */
  readonly selected: number | null;
  readonly onOpen: (index: number) => void;
  readonly onSelect?: (index: number) => void;
}

/** A few thumbnails are enough to recognise a sequence; more would only load more images. */
const thumbsPerSequence = 5;

/** True when the report holds two or more sequences: the app then opens on the list. */
export const isCard = (report: Report): boolean => cardSequences(report).length >= 2;

/** "19:12" from a local ISO 8601 time, with the date when `withDate`; null when unknown or unreadable. */
function clock(iso: string | null, withDate: boolean): string | null {
  const m = iso ? /^(\d{4}-\d{2}-\d{2})T(\d{2}):(\d{2})/.exec(iso) : null;
  if (!m) return null;
  return withDate ? `${m[1]} ${m[2]}:${m[3]}` : `${m[2]}:${m[3]}`;
}

/** "19:12 to 19:13", "19:12" when both are the same minute, the dates when the span crosses midnight. */
export function timeSpan(start: string | null, end: string | null): string {
  const days = [start, end].map((t) => t?.slice(0, 10) ?? null);
  const withDate = days[0] !== null && days[1] !== null && days[0] !== days[1];
  const a = clock(start, withDate), b = clock(end, withDate);
  if (a === null && b === null) return 'time unknown';
  if (a === null || b === null || a === b) return (a ?? b) as string;
  return `${a} to ${b}`;
}

/** What set a sequence apart from the one before, in words. */
export function splitWords(s: SequenceSplit): string {
  switch (s.by) {
    case 'pause':
      return `after a pause of ${duration(s.seconds)}`;
    case 'camera':
      return s.to ? `another camera (${s.to})` : 'another camera';
    case 'lens':
      return s.to ? `another lens (${s.to})` : 'another lens';
    case 'focal-length':
      return `focal length ${millimetres(s.fromMm)} to ${millimetres(s.toMm)}`;
    case 'orientation':
      return `${s.to} instead of ${s.from}`;
    case 'content':
      return `nothing in common with ${s.after}`;
  }
}

/**
 * What is left to do in a sequence: "2 to reshoot · 1 worth a look" counting its plan's items (as
 * the summary does), or, for a report from before plans, "2 to reshoot · 1 weak" counting findings.
 */
function todoWords(q: ReportSequence): string {
  const must = q.plan ? q.plan.filter((i) => !i.optional).length : q.counts.reshoot;
  const look = q.plan ? q.plan.filter((i) => i.optional).length : q.counts.weak;
  const parts = [must ? `${must} to reshoot` : 'nothing to reshoot', look ? `${look} ${q.plan ? 'worth a look' : 'weak'}` : null];
  return parts.filter(Boolean).join(' · ');
}

/** Up to `n` reference frames spread evenly over the stations, in shooting order. */
function sampleFrames(q: ReportSequence, n: number): string[] {
  const refs = q.stations.length ? q.stations.map((s) => s.reference) : q.frames.map((f) => f.file);
  if (refs.length <= n) return refs;
  return Array.from({ length: n }, (_, k) => refs[Math.round((k * (refs.length - 1)) / (n - 1))]);
}

/** "Sequence 2 of 3". */
export const sequenceName = (q: ReportSequence, total: number): string => `Sequence ${q.index} of ${total}`;

function entry(q: ReportSequence, total: number, ctx: SequenceListContext): HTMLLIElement {
  const name = sequenceName(q, total);
  const files = q.firstFile === q.lastFile ? q.firstFile : `${q.firstFile} to ${q.lastFile}`;
  const span = timeSpan(q.startTime, q.endTime);
  const counts = `${plural(q.counts.frames, 'frame')}, ${plural(q.counts.stations, 'station')}`;
  const todo = todoWords(q);
  const split = q.splitBy.map(splitWords).join(', ');
  const selected = ctx.selected === q.index;
  const thumbs = sampleFrames(q, thumbsPerSequence).map((file) => {
    const img = ctx.thumbnail(file);
    img.alt = file;
    const f = q.frames.find((x) => x.file === file);
    if (f && f.width > 0 && f.height > 0) img.style.aspectRatio = `${f.width} / ${f.height}`;
    return img;
  });
  const b = button(
    {
      class: `sequence sequence-${q.verdict}${selected ? ' is-selected' : ''}`,
      'data-sequence': q.index,
      'data-verdict': q.verdict,
      'aria-label': `${name}: ${files}, ${counts}, ${span}, ${verdictWords[q.verdict]}, ${todo}${split ? `; ${split}` : ''}. Enter opens it.`,
      'aria-current': selected ? 'true' : null,
    },
    () => ctx.onOpen(q.index),
    el(
      'span',
      { class: 'sequence-text' },
      el('span', { class: 'sequence-head' }, el('span', { class: 'sequence-name' }, name), ' ', verdictBadge(q.verdict, 26)),
      el('span', { class: 'sequence-files frame-name' }, files),
      el('span', { class: 'sequence-facts' }, el('span', { 'data-sequence-counts': '' }, counts), ' · ', el('span', { 'data-sequence-time': '' }, span)),
      el('span', { class: 'sequence-todo', 'data-sequence-todo': '' }, todo),
      split ? el('span', { class: 'sequence-split', 'data-sequence-split': '' }, split) : null,
    ),
    el('span', { class: 'sequence-thumbs', 'aria-hidden': 'true' }, thumbs),
  );
  if (ctx.onSelect) b.addEventListener('focus', () => ctx.onSelect?.(q.index));
  return el('li', {}, b);
}

function singleShotList(shots: readonly SingleShot[]): HTMLElement {
  return el(
    'section',
    { class: 'single-shots', 'aria-label': 'Single shots', 'data-single-shots': shots.length },
    el('h2', {}, `${plural(shots.length, 'single shot')}`),
    el('p', { class: 'help' }, 'Frames that belong to no sequence: listed here, not checked as part of one.'),
    el(
      'ul',
      {},
      shots.map((s) => {
        const t = clock(s.captureTime, false);
        return el('li', { 'data-single-shot': s.file }, el('span', { class: 'frame-name' }, s.file), t ? ` · ${t}` : '', ` · ${s.reason}`);
      }),
    ),
  );
}

/** The list of a card's sequences, then its single shots. */
export function renderSequenceList(report: Report, ctx: SequenceListContext): HTMLElement {
  const sequences = cardSequences(report);
  const shots = report.singleShots ?? [];
  return el(
    'div',
    { class: 'card-list' },
    el(
      'section',
      { class: 'sequence-list', 'aria-label': 'Sequences on the card' },
      el('h2', {}, `${plural(sequences.length, 'sequence')} on the card, in shooting order`),
      el('p', { class: 'help' }, 'Choose one to see its strip and coverage. Up and down arrows move, Enter opens.'),
      el('ol', { class: 'sequences', role: 'list' }, sequences.map((q) => entry(q, sequences.length, ctx))),
    ),
    shots.length ? singleShotList(shots) : null,
  );
}

/** Above an opened sequence: the way back to the list and which sequence this is. */
export function renderSequenceBar(report: Report, index: number, onBack: () => void): HTMLElement | null {
  const sequences = cardSequences(report);
  const q = sequences.find((s) => s.index === index);
  if (!q) return null;
  const files = q.firstFile === q.lastFile ? q.firstFile : `${q.firstFile} to ${q.lastFile}`;
  return el(
    'nav',
    { class: 'sequence-bar', 'aria-label': 'Sequence', 'data-sequence-bar': q.index },
    button({ class: 'small', 'data-back-to-list': '' }, () => onBack(), backIcon(), 'All sequences'),
    el('h2', {}, `${sequenceName(q, sequences.length)}: ${files}`),
  );
}

/** The card's verdicts in one line: "3 sequences: 1 ok, 2 to reshoot; 4 single shots". */
export function cardWords(report: Report): string {
  const sequences = cardSequences(report);
  const count = (v: ReportSequence['verdict']): number => sequences.filter((q) => q.verdict === v).length;
  const parts = [
    count('ok') ? `${count('ok')} ok` : null,
    count('weak') ? `${count('weak')} weak` : null,
    count('reshoot') ? `${count('reshoot')} to reshoot` : null,
  ].filter(Boolean);
  const shots = report.singleShots?.length ?? 0;
  return `${plural(sequences.length, 'sequence')}: ${parts.join(', ')}${shots ? `; ${plural(shots, 'single shot')}` : ''}`;
}
