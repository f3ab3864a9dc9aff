// The strip: stations in shooting order as columns, each with its bracket frames stacked (the
// reference frame on top), and between neighbouring stations a link with overlap, inliers, EV
// difference and the verdict. A pure function of the report: a partial report (pairs still
// missing) renders too, with "not measured yet" in place of the missing links.
import type { FlagCode, Report, ReportFrame, ReportPair, ReportStation } from '../core/report.js';
import type { Child } from './dom.js';
import { button, el } from './dom.js';
import { evOffset, evStep, flagMeaning, flagWords, percent, pixels, plural, verdictWords } from './format.js';
import { verdictBadge } from './icons.js';
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
    el('span', { class: 'link-overlap' }, matched ? percent(p.overlap) : 'no match'),
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
    { class: `frame frame-${f.verdict}${isRef ? ' is-reference' : ''}`, 'data-frame': f.file, 'data-verdict': f.verdict },
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
    { class: `station station-${s.verdict}`, 'data-station': s.index, 'data-verdict': s.verdict, 'aria-label': `Station ${s.index + 1}, ${plural(s.frames.length, 'frame')}` },
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
