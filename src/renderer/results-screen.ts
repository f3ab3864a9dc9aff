// The results screen: the summary, a card's list of sequences or one sequence's strip, coverage,
// the pair detail and the exports. It keeps where the user is within the results (navigation, tie
// points fetched, the export's outcome); the check's life cycle stays with the page's controller,
// which it reads through `ResultsDeps`.
import type { ExportFormat, HostInfo, SeamscoutApi } from '../common/api.js';
import type { Report } from '../core/sequence/report.js';
import { sequenceReport } from '../core/sequence/sequence-report.js';
import { renderAdvice } from './advice-view.js';
import type { CheckState } from './check-state.js';
import type { TiePointState } from './detail-view.js';
import { renderDetail } from './detail-view.js';
import { el, replaceChildren } from './dom.js';
import { renderCoverage } from './coverage-view.js';
import type { ExportResult } from './export-panel.js';
import { renderExport } from './export-panel.js';
import { messageOf } from './format.js';
import type { FrameImages } from './frame-images.js';
import { createFrameImages } from './frame-images.js';
import type { KeyTargets } from './keyboard.js';
import type { Navigation } from './navigation.js';
import { afterReport, backToList as listNav, openedSequence, startNavigation, stepTo, withDetail, withoutDetail } from './navigation.js';
import { chainPairs, findPair, pairKey } from './pairs.js';
import { isCard, renderSequenceBar, renderSequenceList } from './sequence-list-view.js';
import { renderStrip, revealInStrip } from './strip-view.js';
import { focusedInSummary, renderSummary } from './summary-view.js';

/** What the results screen needs from the page's controller. */
export interface ResultsDeps {
  readonly doc: Document;
  readonly api: Pick<SeamscoutApi, 'frameUrl' | 'tiePoints' | 'exportReport'>;
  /** The check's life cycle now (read afresh after every await: it may have moved on). */
  state(): CheckState;
  /** The host, once known: an export written says where by its shell. */
  host(): HostInfo | null;
  /** The side column's parts kept by the controller (the budget panel and its saving line), above the exports. */
  readonly side: readonly Node[];
  /** Checks the shown folder again, reading the other file of each RAW+JPEG shot. */
  switchPreference(): void;
}

/** What the controller gets back. */
export interface ResultsScreen {
  /** Built once; the controller puts it into the view. */
  readonly element: HTMLElement;
  /** Fills the parts that depend on the report, the budget and where the user is. */
  fill(): void;
  /** The card's list is shown (rather than a strip). */
  listing(): boolean;
  /** What the keyboard moves through on this screen. */
  readonly keys: Pick<KeyTargets, 'list' | 'strip'>;
  /** Another check: what was shown of the old one is forgotten. */
  forgetCheck(): void;
  /** A new or re-judged report: the selection follows it. */
  reportChanged(report: Report): void;
}

/** The screen's parts and its own state, shared by the functions below. */
interface Screen {
  readonly deps: ResultsDeps;
  readonly frames: FrameImages;
  readonly summarySlot: HTMLElement;
  readonly listSlot: HTMLElement;
  readonly stripSlot: HTMLElement;
  readonly stripSection: HTMLElement;
  readonly coverageSlot: HTMLElement;
  readonly detailSlot: HTMLElement;
  readonly adviceSlot: HTMLElement;
  readonly exportSlot: HTMLElement;
  readonly wide: HTMLElement;
  // Where the user is in the results: a card's opened sequence, the selected entries, the open detail.
  nav: Navigation;
  lines: boolean;
  ties: Map<string, TiePointState>;
  exportResult: ExportResult;
}

export function createResultsScreen(deps: ResultsDeps): ResultsScreen {
  const stripSlot = el('div', { class: 'strip-slot' });
  const stripSection = el('section', { class: 'strip-section', 'aria-label': 'Strip' }, el('h2', { class: 'visually-hidden' }, 'Strip'), stripSlot);
  const coverageSlot = el('div', { class: 'coverage-slot' });
  const detailSlot = el('div', { class: 'detail-slot' });
  const s: Screen = {
    deps,
    frames: createFrameImages((file, maxSide) => deps.api.frameUrl(deps.state().checkId ?? 0, file, maxSide)),
    summarySlot: el('div', { class: 'summary-slot' }),
    listSlot: el('div', { class: 'list-slot' }),
    stripSlot,
    stripSection,
    coverageSlot,
    detailSlot,
    adviceSlot: el('div', { class: 'advice-slot' }),
    exportSlot: el('div', { class: 'export-slot' }),
    wide: el('div', { class: 'results-wide' }, stripSection, coverageSlot, detailSlot),
    nav: startNavigation,
    lines: true,
    ties: new Map(),
    exportResult: { state: 'idle' },
  };
  const element = el(
    'div',
    { class: 'results' },
    s.summarySlot,
    s.wide,
    // The card's list sits beside the budget, where a sequence's advice goes.
    el('div', { class: 'results-main' }, s.listSlot, s.adviceSlot),
    el('aside', { class: 'results-side' }, ...deps.side, s.exportSlot),
  );
  return {
    element,
    fill: () => fill(s),
    listing: () => listing(s),
    keys: {
      list: { selected: () => s.nav.listSelected, move: (step) => moveInList(s, step), open: (i) => openSequence(s, i) },
      strip: {
        selected: () => s.nav.selected,
        detailOpen: () => s.nav.detail !== null,
        move: (step) => move(s, step),
        open: (key) => openDetail(s, key),
        closeDetail: () => closeDetail(s),
        inCard: () => s.nav.openSeq !== null && isCardShown(s),
        backToList: () => backToList(s),
      },
    },
    forgetCheck: () => {
      s.nav = startNavigation;
      s.ties = new Map();
      s.frames.forget();
      s.exportResult = { state: 'idle' };
    },
    reportChanged: (report) => {
      s.nav = afterReport(s.nav, report);
    },
  };
}

function isCardShown(s: Screen): boolean {
  const report = s.deps.state().report;
  return report !== null && isCard(report);
}

/** The card shows its list; a sequence opened from it, or a report of one sequence, shows the strip. */
function listing(s: Screen): boolean {
  return isCardShown(s) && s.nav.openSeq === null;
}

/** The report the strip, detail, coverage and advice are built from: the opened sequence alone, or the whole report. */
function shown(s: Screen): Report | null {
  const report = s.deps.state().report;
  if (!report) return null;
  return isCard(report) && s.nav.openSeq !== null ? sequenceReport(report, s.nav.openSeq) : report;
}

function fill(s: Screen): void {
  const one = shown(s);
  const card = s.deps.state().report;
  if (!card || !one) return;
  if (listing(s)) fillList(s, card);
  else fillSequence(s, card, one);
}

function summaryActions(s: Screen): { switchPreference?: () => void; checking: boolean } {
  const running = s.deps.state().running;
  return { switchPreference: running ? undefined : s.deps.switchPreference, checking: running !== null };
}

function fillList(s: Screen, report: Report): void {
  const { doc } = s.deps;
  const { listSlot } = s;
  const hadFocus = listSlot.contains(doc.activeElement) ? doc.activeElement?.getAttribute('data-sequence') ?? null : null;
  replaceChildren(s.summarySlot, renderSummary(report, summaryActions(s)));
  replaceChildren(listSlot, renderSequenceList(report, { thumbnail: s.frames.thumbnail, selected: s.nav.listSelected, onOpen: (i) => openSequence(s, i), onSelect: (i) => selectSequence(s, i, false) }));
  listSlot.hidden = false;
  s.wide.hidden = true;
  replaceChildren(s.stripSlot);
  s.stripSection.hidden = true;
  replaceChildren(s.coverageSlot);
  replaceChildren(s.detailSlot);
  // Advice names stations, counted within each sequence: it is read in the sequence it belongs to.
  replaceChildren(s.adviceSlot);
  s.adviceSlot.hidden = true;
  drawExport(s);
  if (hadFocus) listSlot.querySelector<HTMLElement>(`[data-sequence="${cssEscape(hadFocus)}"]`)?.focus();
}

function fillSequence(s: Screen, card: Report, report: Report): void {
  const { doc } = s.deps;
  const { stripSlot, summarySlot } = s;
  replaceChildren(s.listSlot);
  s.listSlot.hidden = true;
  s.wide.hidden = false;
  const hadFocus = stripSlot.contains(doc.activeElement) ? doc.activeElement?.getAttribute('data-pair') ?? null : null;
  const summaryFocus = focusedInSummary(summarySlot);
  const { openSeq, selected, detail } = s.nav;
  const bar = isCard(card) && openSeq !== null ? renderSequenceBar(card, openSeq, () => backToList(s)) : null;
  replaceChildren(summarySlot, bar, renderSummary(report, { ...summaryActions(s), show: showActions(s) }));
  // While the detail is open the strip is out of the document, so that [data-pair="a|b"] names
  // one element only (the detail); thumbnails are kept and come back without reloading.
  if (detail) replaceChildren(stripSlot);
  else replaceChildren(stripSlot, renderStrip(report, { thumbnail: s.frames.thumbnail, selected, onOpen: (k) => openDetail(s, k), onSelect: (k) => select(s, k, false) }));
  // The plan, with a button to each item's pair or frame, is what to do; a report from before plans lists the advice.
  replaceChildren(s.adviceSlot, report.plan ? null : renderAdvice(report, (k) => openDetail(s, k)));
  replaceChildren(s.coverageSlot, detail ? null : renderCoverage(report));
  drawExport(s);
  s.stripSection.hidden = detail !== null;
  s.adviceSlot.hidden = detail !== null || !!report.plan;
  if (detail) {
    const onToggleLines = (): void => {
      s.lines = !s.lines;
      refreshDetail(s);
    };
    replaceChildren(s.detailSlot, renderDetail(report, detail, { image: s.frames.full, tiePoints: s.ties.get(detail) ?? { state: 'loading' }, lines: s.lines, onBack: () => closeDetail(s), onToggleLines }));
  } else {
    replaceChildren(s.detailSlot);
  }
  if (hadFocus) stripSlot.querySelector<HTMLElement>(`[data-pair="${cssEscape(hadFocus)}"]`)?.focus();
  if (summaryFocus) summarySlot.querySelector<HTMLElement>(summaryFocus)?.focus();
}

/** Where the plan's and the overview's buttons lead. */
function showActions(s: Screen): { onOpenPair: (key: string) => void; onShowStation: (station: number) => void; onShowFrame: (frame: string) => void } {
  return { onOpenPair: (key) => openDetail(s, key), onShowStation: (station) => reveal(s, { station }), onShowFrame: (frame) => reveal(s, { frame }) };
}

/** Redraws an open detail (tie points arrived, lines toggled), keeping focus on the same control. */
function refreshDetail(s: Screen): void {
  const { state, doc } = s.deps;
  const now = state();
  if (now.screen !== 'results' || !now.report || !s.nav.detail) return;
  const a = doc.activeElement;
  const focused = a && s.detailSlot.contains(a) ? (a.hasAttribute('data-toggle-lines') ? '[data-toggle-lines]' : '.back') : null;
  fill(s);
  if (focused) s.detailSlot.querySelector<HTMLElement>(focused)?.focus();
}

// Selection and the detail.
function markSelection(s: Screen): void {
  for (const n of s.stripSlot.querySelectorAll<HTMLElement>('[data-pair]')) {
    const on = n.getAttribute('data-pair') === s.nav.selected;
    n.classList.toggle('is-selected', on);
    if (on) n.setAttribute('aria-current', 'true');
    else n.removeAttribute('aria-current');
  }
}

function select(s: Screen, key: string, focus: boolean): void {
  s.nav = { ...s.nav, selected: key };
  markSelection(s);
  if (focus) s.stripSlot.querySelector<HTMLElement>(`[data-pair="${cssEscape(key)}"]`)?.focus();
}

function move(s: Screen, step: 1 | -1): void {
  const report = shown(s);
  if (!report) return;
  const next = stepTo(chainPairs(report).map(pairKey), s.nav.selected, step);
  if (next === undefined) return;
  if (s.nav.detail) {
    if (next !== s.nav.detail) openDetail(s, next);
  } else {
    select(s, next, true);
  }
}

function openDetail(s: Screen, key: string): void {
  const report = shown(s);
  const checkId = s.deps.state().checkId;
  if (!report || checkId === null) return;
  const p = findPair(report, key);
  if (!p) return;
  s.nav = withDetail(s.nav, key, chainPairs(report).some((q) => pairKey(q) === key));
  if (!s.ties.has(key)) loadTiePoints(s, key, checkId, p);
  fill(s);
  // The detail opens at the top of the window, its measures in sight whatever stands above it.
  s.detailSlot.scrollIntoView?.({ block: 'start' });
  s.detailSlot.querySelector<HTMLElement>('.back')?.focus({ preventScroll: true });
}

/** Asks the host for a pair's tie points once; the detail is drawn again when they arrive. */
function loadTiePoints(s: Screen, key: string, id: number, p: { readonly a: string; readonly b: string }): void {
  s.ties.set(key, { state: 'loading' });
  const arrived = (t: TiePointState): void => {
    if (s.deps.state().checkId !== id) return;
    s.ties.set(key, t);
    if (s.nav.detail === key) refreshDetail(s);
  };
  s.deps.api.tiePoints(id, p.a, p.b).then(
    (points) => arrived({ state: 'ready', points }),
    (e) => arrived({ state: 'failed', message: messageOf(e) }),
  );
}

/** Shows a station or frame of the strip (closing the detail first): the plan's and the overview's buttons. */
function reveal(s: Screen, what: { station: number } | { frame: string }): void {
  if (s.nav.detail) {
    s.nav = withoutDetail(s.nav);
    fill(s);
  }
  revealInStrip(s.stripSlot, what);
}

function closeDetail(s: Screen): void {
  const { detail: key, selected } = s.nav;
  s.nav = withoutDetail(s.nav);
  fill(s);
  const { stripSlot } = s;
  const target = (selected && stripSlot.querySelector<HTMLElement>(`[data-pair="${cssEscape(selected)}"]`)) || (key && stripSlot.querySelector<HTMLElement>(`[data-pair="${cssEscape(key)}"]`));
  if (target) target.focus();
}

// The card's list.
function selectSequence(s: Screen, index: number, focus: boolean): void {
  s.nav = { ...s.nav, listSelected: index };
  for (const n of s.listSlot.querySelectorAll<HTMLElement>('[data-sequence]')) {
    const on = Number(n.getAttribute('data-sequence')) === index;
    n.classList.toggle('is-selected', on);
    if (on) n.setAttribute('aria-current', 'true');
    else n.removeAttribute('aria-current');
  }
  if (focus) s.listSlot.querySelector<HTMLElement>(`[data-sequence="${index}"]`)?.focus();
}

function moveInList(s: Screen, step: 1 | -1): void {
  const next = stepTo((s.deps.state().report?.sequences ?? []).map((q) => q.index), s.nav.listSelected, step);
  if (next !== undefined) selectSequence(s, next, true);
}

function openSequence(s: Screen, index: number): void {
  const report = s.deps.state().report;
  if (!report || !(report.sequences ?? []).some((q) => q.index === index)) return;
  s.nav = openedSequence(index);
  fill(s);
  s.summarySlot.querySelector<HTMLElement>('[data-back-to-list]')?.focus();
}

function backToList(s: Screen): void {
  s.nav = listNav(s.nav);
  fill(s);
  const { listSelected } = s.nav;
  if (listSelected !== null) s.listSlot.querySelector<HTMLElement>(`[data-sequence="${listSelected}"]`)?.focus();
}

// Exports.
function drawExport(s: Screen): void {
  replaceChildren(s.exportSlot, renderExport(s.exportResult, (format) => void doExport(s, format)));
}

async function doExport(s: Screen, format: ExportFormat): Promise<void> {
  const { state, api, host } = s.deps;
  const checkId = state().checkId;
  if (checkId === null || s.exportResult.state === 'busy') return;
  s.exportResult = { state: 'busy', format };
  drawExport(s);
  try {
    const path = await api.exportReport(checkId, format, state().budget);
    s.exportResult = path === null ? { state: 'cancelled' } : { state: 'written', path, shell: host()?.shell ?? 'desktop' };
  } catch (e) {
    s.exportResult = { state: 'failed', message: messageOf(e) };
  }
  if (state().screen === 'results') {
    drawExport(s);
    s.exportSlot.querySelector<HTMLElement>(`[data-export="${format}"]`)?.focus();
  }
}

/** Quotes a value for an attribute selector (file names may hold quotes or backslashes). */
function cssEscape(v: string): string {
  return v.replace(/["\\]/g, '\\$&');
}
