// The summary header: the overall verdict, the reshoot plan (each item with a way to see it), the
// numbers in one compact row and, for a sequence, every station and link at a glance.
import { lensSentence } from '../core/sequence/lens-words.js';
import { millimetres } from '../core/sequence/number-words.js';
import type { Report, Verdict } from '../core/sequence/report.js';
import { notChecked } from '../core/sequence/verdicts.js';
import type { PlanActions } from './advice-view.js';
import { planButtons } from './advice-view.js';
import { button, el } from './dom.js';
import { plural } from './format.js';
import { verdictBadge, verdictIcon } from './icons.js';
import { cardWords, isCard } from './sequence-list-view.js';
import { renderOverview } from './strip-view.js';

const overallWords: Record<Verdict, string> = {
  ok: 'The sequence looks complete.',
  weak: 'Some pairs or frames are weak: look at them before you leave.',
  reshoot: 'Some frames need reshooting.',
};

/** The verdict in a sentence; a folder weak only for files it could not check says so, not "weak pairs". */
function overallSentence(report: Report): string {
  const nothingFlagged = report.counts.weak === 0 && report.counts.reshoot === 0 && (report.holes ?? []).every((h) => h.verdict === 'ok');
  if (report.verdict === 'weak' && nothingFlagged && notChecked(report.skipped).length > 0) return 'Every pair and frame checked is fine, but some files could not be checked: look at them before you leave.';
  return overallWords[report.verdict];
}

function stat(name: string, value: string, label: string, icon: SVGSVGElement | null = null, title: string | null = null): HTMLElement {
  return el('div', { class: `stat stat-${name}`, 'data-stat': name, ...(title ? { title } : {}) }, el('dt', {}, icon, label), el('dd', { class: 'numeral' }, value));
}

export interface SummaryActions {
  /** Checks the folder again reading the other file of each RAW+JPEG shot. */
  readonly switchPreference?: () => void;
  /**
   * The check is still running: the report is of the pairs measured so far, so no overall verdict
   * is given (a sequence half checked is not "complete"); the state reads "checking" until the end.
   */
  readonly checking?: boolean;
  /**
   * Where the plan's items and the overview row lead (a sequence shown with its strip): with them,
   * each plan item gets "Show pair" / "Show frame" / "Show station" and the overview row is shown.
   * Without them (a card's list, where stations count per sequence) neither is.
   */
  readonly show?: PlanActions;
}

const checkingWords = 'Checking: results so far. The verdict comes once every pair is checked.';

/** Which file of each RAW+JPEG shot was checked, with a button to check the other. */
function rawPlusJpegNote(r: NonNullable<Report['rawPlusJpeg']>, switchPreference: (() => void) | undefined): HTMLElement {
  const shots = `${plural(r.shots, 'shot')} on the card as both RAW and JPEG:`;
  const which = r.checked === 'raw' ? 'the RAW file of each was checked, through its embedded preview.' : 'the JPEG of each was checked.';
  return el(
    'p',
    { class: 'raw-plus-jpeg', 'data-raw-plus-jpeg': r.checked },
    `${shots} ${which} `,
    switchPreference ? button({ class: 'small', 'data-switch-preference': '' }, switchPreference, r.checked === 'raw' ? 'Check the JPEGs instead' : 'Check the RAW files instead') : null,
  );
}

/** "4 pairs and 4 frames": what the verdicts flagged, in words. */
function flaggedWords(report: Report, v: 'weak' | 'reshoot'): string | null {
  const pairs = report.pairs.filter((p) => p.verdict === v).length, frames = report.frames.filter((f) => f.verdict === v).length;
  const parts = [pairs ? plural(pairs, 'pair') : null, frames ? plural(frames, 'frame') : null].filter(Boolean);
  return parts.length ? `${parts.join(' and ')} flagged ${v}` : null;
}

/**
 * What the plan's numbers count, in words: its items, and the flagged pairs and frames they come
 * from ("5 items, from 4 pairs and 4 frames flagged reshoot"), so that a count of findings is never
 * read as a count of things to do.
 */
export function planCountWords(report: Report): string {
  const plan = report.plan ?? [];
  const must = plan.filter((i) => !i.optional).length, look = plan.length - must;
  const items = [must ? `${plural(must, 'item')} to reshoot` : 'nothing to reshoot', look ? `${look} worth a look` : null].filter(Boolean).join(', ');
  const from = [flaggedWords(report, 'reshoot'), flaggedWords(report, 'weak')].filter(Boolean);
  return from.length ? `${items}, from ${from.join('; ')}` : items;
}

/**
 * The reshoot plan, read first: what must be reshot, numbered in shooting order, then what is worth
 * a look, each item with a button to its pair, frame or station when `show` is given. Nothing when
 * the plan is empty (the overall words say so) or the report has none.
 */
export function renderPlan(report: Report, show?: PlanActions): HTMLElement | null {
  const plan = report.plan ?? [];
  if (plan.length === 0) return null;
  const must = plan.filter((i) => !i.optional), look = plan.filter((i) => i.optional);
  const item = (i: (typeof plan)[number]): HTMLElement => {
    const go = show ? planButtons(report, i, show) : [];
    return el(
      'li',
      { class: `plan-item plan-${i.optional ? 'weak' : 'reshoot'}`, 'data-plan-item': i.action, ...(i.optional ? { 'data-optional': '' } : {}) },
      el('span', { class: 'plan-text' }, verdictIcon(i.optional ? 'weak' : 'reshoot', 18), ` ${i.text}`),
      go.length ? el('span', { class: 'plan-go' }, go) : null,
    );
  };
  return el(
    'section',
    { class: 'plan', 'data-plan': plan.length, 'aria-label': 'Reshoot plan' },
    el('div', { class: 'plan-head' }, must.length ? el('h2', {}, 'Reshoot plan, in shooting order') : null, el('p', { class: 'plan-counted', 'data-plan-counted': '' }, planCountWords(report))),
    must.length ? el('ol', {}, must.map(item)) : null,
    look.length ? el('h3', {}, must.length ? 'Worth a look (optional)' : 'Worth a look') : null,
    look.length ? el('ul', {}, look.map(item)) : null,
  );
}

export function renderSummary(report: Report, act: SummaryActions = {}): HTMLElement {
  const c = report.counts;
  const left = notChecked(report.skipped);
  const folderName = report.folder.split(/[\\/]/).filter(Boolean).pop() ?? report.folder;
  // A card of several sequences is summed up by its sequences' verdicts; its frames and stations are all of theirs.
  const card = isCard(report);
  return el(
    'section',
    { class: `summary summary-${act.checking ? 'checking' : report.verdict}`, 'data-summary': '', 'aria-label': 'Summary' },
    act.checking
      ? el('div', { class: 'overall overall-checking', 'data-verdict': 'checking', role: 'status' }, el('p', { class: 'overall-words' }, checkingWords), el('p', { class: 'folder', title: report.folder }, folderName))
      : el(
          'div',
          { class: `overall overall-${report.verdict}`, 'data-verdict': report.verdict },
          verdictBadge(report.verdict, 44),
          el('p', { class: 'overall-words' }, card ? `${cardWords(report)}.` : overallSentence(report)),
          el('p', { class: 'folder', title: report.folder }, folderName),
        ),
    renderPlan(report, act.show),
    el(
      'dl',
      { class: 'stats' },
      card ? stat('sequences', String(report.sequences?.length ?? 0), 'sequences') : null,
      stat('frames', String(c.frames), 'frames'),
      stat('stations', String(c.stations), 'stations'),
      report.sweepDeg !== null ? stat('sweep', `${Math.round(report.sweepDeg)}°`, 'sweep') : null,
      report.geometry ? stat('vertical', `${Math.round(report.geometry.verticalDeg)}°`, 'vertical') : null,
      report.geometry?.closure ? stat('turn', report.geometry.closure.closes ? 'closes' : 'open', 'full turn') : null,
      report.geometry?.focal35mm !== undefined ? stat('lens', millimetres(report.geometry.focal35mm), 'lens (35 mm eq.)', null, `Lens as measured: ${lensSentence(report)}`) : null,
      // With a plan, what is counted is what to do: its items (the flagged findings they come from are said in words beside the plan).
      ...(report.plan
        ? [
            stat('to-reshoot', String(report.plan.filter((i) => !i.optional).length), act.checking ? 'to reshoot so far' : 'to reshoot', verdictIcon('reshoot', 18), planCountWords(report)),
            // Nothing worth a look is said once, in the words beside the plan, not as a large 0.
            report.plan.some((i) => i.optional) ? stat('worth-a-look', String(report.plan.filter((i) => i.optional).length), 'worth a look', verdictIcon('weak', 18), planCountWords(report)) : null,
          ]
        : [stat('weak', String(c.weak), 'pairs and frames weak', verdictIcon('weak', 18)), stat('reshoot', String(c.reshoot), 'pairs and frames to reshoot', verdictIcon('reshoot', 18))]),
    ),
    act.show && !card ? renderOverview(report, { onOpen: act.show.onOpenPair, onShowStation: act.show.onShowStation }) : null,
    // A folder's problems (no frame, one frame) are judged on the whole folder: not before the check ends.
    !act.checking && (report.folderProblems ?? []).length
      ? el('ul', { class: 'folder-problems', 'data-folder-problems': '' }, report.folderProblems.map((p) => el('li', { 'data-folder-problem': p.code }, verdictIcon('weak', 20), ` ${p.advice}`)))
      : null,
    report.rawPlusJpeg ? rawPlusJpegNote(report.rawPlusJpeg, act.switchPreference) : null,
    left.length
      ? el(
          'details',
          { class: 'skipped', 'data-skipped': left.length },
          el('summary', {}, `${plural(left.length, 'file')} not checked`),
          el('ul', {}, left.map((s) => el('li', { 'data-skip': s.code }, el('span', { class: 'frame-name' }, s.file), `: ${s.reason}`))),
        )
      : null,
  );
}

const focusHooks = ['data-open-pair', 'data-show-frame', 'data-show-station', 'data-overview-station', 'data-overview-pair', 'data-switch-preference'];

/**
 * A selector for the summary's button that has the focus, so that a summary drawn again (a fuller
 * report while the check runs, a new budget) gives the focus back to the same button; null when
 * the focus is elsewhere.
 */
export function focusedInSummary(slot: Element): string | null {
  const a = slot.ownerDocument.activeElement;
  if (!a || !slot.contains(a)) return null;
  const hook = focusHooks.find((k) => a.hasAttribute(k));
  return hook ? `[${hook}="${(a.getAttribute(hook) ?? '').replace(/["\\]/g, '\\$&')}"]` : null;
}
