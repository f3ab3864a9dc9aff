// The strip: stations in shooting order as columns, each with its bracket frames stacked (the
// reference frame on top), and between neighbouring stations a link with overlap, inliers, EV
// difference and the verdict. A pure function of the report: a partial report (pairs still
// missing) renders too, with "not measured yet" in place of the missing links.
import type { FlagCode, Report, ReportFrame, ReportPair, ReportStation, Verdict } from '../core/sequence/report.js';
import type { Child } from './dom.js';
import { button, el } from './dom.js';
import { evOffset, evStep, flagMeaning, flagWords, percent, pixels, plural, verdictWords } from './format.js';
import { verdictBadge, verdictIcon } from './icons.js';
import { bracketPairOf, chainSlots, pairKey } from './pairs.js';

export interface StripContext {
  /** A thumbnail image element for a frame (the caller may reuse elements so images do not reload). */
  readonly thumbnail: (file: string) => HTMLImageElement;
  /** The pair key ("a|b") shown as selected, or null. */
  readonly selected: string | null;
  readonly onOpen: (key: string) => void;
  readonly onSelect?: (key: string) => void;
}

export function flagList(codes: readonly FlagCode[]): HTMLElement | null {
  if (codes.length === 0) return null;
  return el('ul', { class: 'flags' }, codes.map((c) => el('li', { 'data-flag': c, title: flagMeaning[c] }, flagWords(c))));
}

function pairLinkBody(p: ReportPair, heading: Child): Child[] {
  const matched = p.homography !== null;
  const parts: Child[] = [
    heading,
    // "no match" in words is wider than "45 %": its own class lets it wrap at a smaller size inside the card.
    el('span', { class: matched ? 'link-overlap' : 'link-overlap link-no-match' }, matched ? percent(p.overlap) : 'no match'),
    el('span', { class: 'link-label' }, matched ? 'overlap' : 'no overlap found'),
    el('span', { class: 'link-inliers' }, plural(p.inliers, 'inlier')),
    el('span', { class: 'link-ev' }, evStep(p.evDiff)),
    verdictBadge(p.verdict),
    flagList(p.reasons),
  ];
  // Spaces between the parts keep the link's text readable as text ("45 % overlap 212 inliers ...").
  return parts.filter(Boolean).flatMap((x, i) => (i === 0 ? [x] : [' ', x]));
}

function linkLabel(p: ReportPair, what: string): string {
  const reasons = p.reasons.length ? `, ${p.reasons.map((r) => flagWords(r)).join(', ')}` : '';
  return `${what}: overlap ${percent(p.overlap)}, ${plural(p.inliers, 'inlier')}, ${evStep(p.evDiff)}, ${verdictWords[p.verdict]}${reasons}. Enter opens the pair.`;
}

function pairLink(p: ReportPair, what: string, heading: Child, ctx: StripContext, extraClass: string): HTMLButtonElement {
  const key = pairKey(p);
  const selected = ctx.selected === key;
  const b = button(
    {
      class: `link link-${p.verdict} ${extraClass}${selected ? ' is-selected' : ''}`,
      'data-pair': key,
      'data-kind': p.kind,
      'data-verdict': p.verdict,
      'aria-label': linkLabel(p, what),
      'aria-current': selected ? 'true' : null,
    },
    () => ctx.onOpen(key),
    ...pairLinkBody(p, heading),
  );
  if (ctx.onSelect) b.addEventListener('focus', () => ctx.onSelect?.(key));
  return b;
}

function frameTile(report: Report, f: ReportFrame, station: ReportStation, ctx: StripContext): HTMLElement {
  const isRef = f.file === station.reference;
  const k = station.frames.indexOf(f.file);
  const offset = k >= 0 ? station.evOffsets[k] : null;
  const img = ctx.thumbnail(f.file);
  img.alt = f.file;
  if (f.width > 0 && f.height > 0) img.style.aspectRatio = `${f.width} / ${f.height}`;
  const flagged = f.verdict !== 'ok';
  const bracket = isRef ? null : bracketPairOf(report, f.file);
  return el(
    'figure',
    // Focusable from script (not by Tab): the plan's "Show frame" brings the frame into view and focus.
    { class: `frame frame-${f.verdict}${isRef ? ' is-reference' : ''}`, 'data-frame': f.file, 'data-verdict': f.verdict, tabindex: -1 },
    el('div', { class: 'thumb' }, img),
    el(
      'figcaption',
      {},
      el('span', { class: 'frame-name' }, f.file),
      el('span', { class: 'frame-ev' }, isRef ? `reference · ${evOffset(offset)}` : evOffset(offset)),
      flagged ? verdictBadge(f.verdict, 22) : null,
      flagList(f.flags),
      bracket
        ? button(
            {
              class: `bracket-link link-${bracket.verdict}`,
              'data-pair': pairKey(bracket),
              'data-kind': 'bracket',
              'data-verdict': bracket.verdict,
              'aria-label': `${f.file} against its reference ${bracket.a}: ${bracket.homography ? `shift ${pixels(bracket.shiftPx, 0)}` : 'not aligned'}, overlap ${percent(bracket.overlap)}, ${plural(bracket.inliers, 'inlier')}, ${verdictWords[bracket.verdict]}`,
            },
            () => ctx.onOpen(pairKey(bracket)),
            el('span', {}, bracket.homography ? `shift ${pixels(bracket.shiftPx, 0)}` : 'not aligned'),
            el('span', {}, `${percent(bracket.overlap)} · ${plural(bracket.inliers, 'inlier')}`),
          )
        : null,
    ),
  );
}

function stationColumn(report: Report, s: ReportStation, ctx: StripContext): HTMLElement {
  const order = new Map(report.frames.map((f, i) => [f.file, i]));
  const byFile = new Map(report.frames.map((f) => [f.file, f]));
  const files = [...s.frames].sort((x, y) => (x === s.reference ? -1 : y === s.reference ? 1 : (order.get(x) ?? 0) - (order.get(y) ?? 0)));
  const flagged = s.verdict !== 'ok';
  return el(
    'section',
    { class: `station station-${s.verdict}`, 'data-station': s.index, 'data-verdict': s.verdict, 'aria-label': `Station ${s.index + 1}, ${plural(s.frames.length, 'frame')}`, tabindex: -1 },
    el('header', { class: 'station-head' }, el('span', { class: 'station-name' }, `Station ${s.index + 1}`), flagged ? verdictBadge(s.verdict, 20) : null, flagList(s.flags)),
    el('div', { class: 'stack' }, files.flatMap((file) => {
      const f = byFile.get(file);
      return f ? [frameTile(report, f, s, ctx)] : [];
    })),
  );
}

export function renderStrip(report: Report, ctx: StripContext): HTMLElement {
  const strip = el('div', { class: 'strip', role: 'group', 'aria-label': 'Strip: stations in shooting order. Left and right arrows move between pairs.' });
  if (report.stations.length === 0) {
    strip.append(el('p', { class: 'empty' }, 'No frames to show.'));
    return strip;
  }
  const slots = chainSlots(report);
  report.stations.forEach((s, i) => {
    strip.append(stationColumn(report, s, ctx));
    const slot = slots.find((x) => x.from === i && x.to === i + 1);
    if (!slot) return;
    if (slot.pair) strip.append(pairLink(slot.pair, `Station ${i + 1} to ${i + 2}`, null, ctx, 'link-neighbour'));
    else strip.append(el('div', { class: 'link link-missing' }, el('span', { class: 'link-label' }, 'not measured yet')));
  });
  const closure = slots.find((x) => x.pair?.kind === 'closure');
  if (closure?.pair) {
    strip.append(pairLink(closure.pair, `Closure, station ${closure.from + 1} back to 1`, el('span', { class: 'link-heading' }, 'back to station 1'), ctx, 'link-closure'));
  }
  return strip;
}

/**
 * Brings a station or a frame of the strip into view (scrolling the strip sideways and the page as
 * needed) and gives it focus, so the keyboard carries on from there. False when it is not shown.
 */
export function revealInStrip(strip: ParentNode, what: { station: number } | { frame: string }): boolean {
  const selector = 'station' in what ? `[data-station="${what.station}"]` : `[data-frame="${what.frame.replace(/["\\]/g, '\\$&')}"]`;
  const target = strip.querySelector<HTMLElement>(selector);
  if (!target) return false;
  target.scrollIntoView?.({ block: 'nearest', inline: 'center' });
  target.focus({ preventScroll: true });
  return true;
}

export interface OverviewContext {
  readonly onOpen: (key: string) => void;
  readonly onShowStation: (index: number) => void;
}

const rank: Record<Verdict, number> = { ok: 0, weak: 1, reshoot: 2 };
const worst = (vs: readonly Verdict[]): Verdict => vs.reduce<Verdict>((w, v) => (rank[v] > rank[w] ? v : w), 'ok');

/**
 * A station as the overview marks it: the worst of its own verdict, its frames' and the plan's word
 * for it (a station whose exposure jumped is judged on its links, yet the plan reshoots it).
 */
export function stationMark(report: Report, s: ReportStation): Verdict {
  const frames = report.frames.filter((f) => f.station === s.index).map((f) => f.verdict);
  const planned = (report.plan ?? []).filter((i) => i.action === 'reshoot-station' && i.stationIndices.includes(s.index)).map((i): Verdict => (i.optional ? 'weak' : 'reshoot'));
  return worst([s.verdict, ...frames, ...planned]);
}

function overviewCell(kind: 'station' | 'link', verdict: Verdict, main: string, attrs: Record<string, string | number>, label: string, onClick: () => void, sub: string | null = null): HTMLLIElement {
  const flagged = verdict !== 'ok';
  return el(
    'li',
    { class: `ov-item ov-item-${kind}` },
    button(
      { class: `ov ov-${kind} ov-${verdict}`, 'data-overview-verdict': verdict, 'aria-label': label, title: label, ...attrs },
      onClick,
      // The icon beside the number and the word under it keep a flagged cell narrow enough for a whole sequence in one row.
      el('span', { class: 'ov-main' }, flagged ? verdictIcon(verdict, 14) : null, main),
      // Spaces keep the cell's text readable as text ("6 % reshoot"); the grid lays out the spans alone.
      flagged ? [' ', el('span', { class: 'ov-word' }, verdictWords[verdict])] : null,
      sub ? [' ', el('span', { class: 'ov-sub' }, sub)] : null,
    ),
  );
}

/**
 * Every station and every link between them in one compact row, so the whole sequence and each
 * flagged place is seen at once, whatever the strip below shows: a station's cell brings it into
 * view in the strip, a link's cell opens its pair. Flagged cells carry the icon and the word.
 */
export function renderOverview(report: Report, ctx: OverviewContext): HTMLElement | null {
  if (report.stations.length === 0) return null;
  const slots = chainSlots(report);
  const cells: HTMLLIElement[] = [];
  const linkCell = (p: ReportPair, what: string, sub: string | null = null): HTMLLIElement => {
    const reasons = p.reasons.length ? ` (${p.reasons.map(flagWords).join(', ')})` : '';
    return overviewCell('link', p.verdict, p.homography ? percent(p.overlap) : 'no match', { 'data-overview-pair': pairKey(p), ...(p.homography ? {} : { 'data-no-match': '' }) }, `${what}: ${p.homography ? `overlap ${percent(p.overlap)}` : 'no match'}, ${verdictWords[p.verdict]}${reasons}. Opens the pair.`, () => ctx.onOpen(pairKey(p)), sub);
  };
  report.stations.forEach((s, i) => {
    const mark = stationMark(report, s);
    const flags = [...new Set([...s.flags, ...report.frames.filter((f) => f.station === s.index).flatMap((f) => f.flags)])];
    const why = flags.length ? ` (${flags.map(flagWords).join(', ')})` : '';
    cells.push(overviewCell('station', mark, String(s.index + 1), { 'data-overview-station': s.index }, `Station ${s.index + 1}: ${verdictWords[mark]}${why}. Shows it in the strip.`, () => ctx.onShowStation(s.index)));
    const slot = slots.find((x) => x.from === i && x.to === i + 1);
    if (!slot) return;
    if (slot.pair) cells.push(linkCell(slot.pair, `Station ${i + 1} to ${i + 2}`));
    else cells.push(el('li', { class: 'ov-item ov-item-link' }, el('span', { class: 'ov ov-link ov-missing', title: 'not measured yet' }, el('span', { class: 'ov-main' }, '…'))));
  });
  const closure = slots.find((x) => x.pair?.kind === 'closure');
  if (closure?.pair) cells.push(linkCell(closure.pair, `Closure, station ${closure.from + 1} back to 1`, 'to 1'));
  return el('nav', { class: 'overview', 'data-overview': '', 'aria-label': 'Every station and link at a glance' }, el('span', { class: 'ov-title', 'aria-hidden': 'true' }, 'Stations'), el('ol', { class: 'overview-row' }, cells));
}
