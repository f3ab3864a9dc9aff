// The page's controller: holds the state (screen, report, budget, selection), talks to main only
// through the SeamscoutApi object, and hands plain data to the views, which build DOM from it.
import type { ExportFormat, HostInfo, LatestCheck, SeamscoutApi, ShotPreference } from '../common/api.js';
import type { MatchBudget, Report } from '../core/report.js';
import { sequenceReport } from '../core/sequence-report.js';
import { renderAdvice } from './advice-view.js';
import { createBudgetPanel } from './budget-panel.js';
import { createBudgetSaving } from './budget-save.js';
import { createShotPreference } from './shot-preference.js';
import type { CheckEvent, CheckState, HostEvent, RunningCheck } from './check-state.js';
import { checkIdOf, doneEvent, initialCheckState, reduce } from './check-state.js';
import type { TiePointState } from './detail-view.js';
import { renderDetail } from './detail-view.js';
import { button, el, replaceChildren } from './dom.js';
import { listenForDrops } from './drop.js';
import { messageOf } from './format.js';
import type { ExportResult } from './export-panel.js';
import { renderExport } from './export-panel.js';
import type { Navigation } from './navigation.js';
import { afterReport, backToList as listNav, openedSequence, startNavigation, stepTo, withDetail, withoutDetail } from './navigation.js';
import { chainPairs, findPair, pairKey } from './pairs.js';
import type { ProgressView } from './progress-view.js';
import { createProgressView } from './progress-view.js';
import type { StartModel } from './start-view.js';
import { renderStart } from './start-view.js';
import { renderCoverage } from './coverage-view.js';
import { createFrameImages } from './frame-images.js';
import { listenForKeys } from './keyboard.js';
import { isCard, renderSequenceBar, renderSequenceList } from './sequence-list-view.js';
import { renderStrip, revealInStrip } from './strip-view.js';
import { focusedInSummary, renderSummary } from './summary-view.js';
import { applyStoredTheme, themeToggle } from './theme.js';

export interface MountOptions {
  /** Delay before a changed budget is saved (ms); edits within it are saved once. */
  readonly saveDelayMs?: number;
  /** Where the theme choice is kept; defaults to localStorage. */
  readonly storage?: Storage | null;
}

export interface MountedApp {
  /** Settles when host info, recent folders and the stored budget have been asked for. */
  readonly ready: Promise<void>;
  destroy(): void;
}

/** The desktop bridge adds this beside the contract: a dropped file's path (Electron's webUtils). */
type Bridge = SeamscoutApi & { pathForFile?: (file: File) => string };

export function mountApp(root: HTMLElement, api: SeamscoutApi, options: MountOptions = {}): MountedApp {
  const doc = root.ownerDocument;
  const win = doc.defaultView ?? window;
  const storage = options.storage !== undefined ? options.storage : (() => {
    try {
      return win.localStorage;
    } catch {
      return null;
    }
  })();
  const bridge = api as Bridge;

  // State: the check's life cycle (screen, running check, report, budget, message) in one value.
  let state: CheckState = initialCheckState;
  // The progress view of the running check, made new for each.
  let progressView: ProgressView | null = null;
  let host: HostInfo | null = null;
  let recent: string[] = [];
  let showPathField = false;
  // Where the user is in the results: a card's opened sequence, the selected entries, the open detail.
  let nav: Navigation = startNavigation;
  let lines = true;
  let ties = new Map<string, TiePointState>();
  let exportResult: ExportResult = { state: 'idle' };

  // The frame.
  applyStoredTheme(doc, storage);
  const newCheck = button({ class: 'small', 'data-new-check': '' }, () => goStart(), 'New check');
  const view = el('main', { class: 'view', id: 'view', tabindex: -1 });
  const footer = el('footer', { class: 'footer' });
  replaceChildren(
    root,
    el('div', { class: 'app' }, el('header', { class: 'topbar' }, el('span', { class: 'brand' }, 'Seamscout'), el('span', { class: 'spacer' }), newCheck, themeToggle(doc, win, storage)), view, footer),
  );

  // The results screen's parts, built once; the parts that depend on the report are refilled.
  const saving = createBudgetSaving(api, options.saveDelayMs ?? 400);
  const shots = createShotPreference(api, (p) => panel.setPrefer(p));
  const panel = createBudgetPanel(
    state.budget,
    (b) => {
      setBudget(b);
      saving.edit(b);
    },
    { initial: shots.current, onChange: (p) => void setPrefer(p) },
  );
  const summarySlot = el('div', { class: 'summary-slot' });
  const listSlot = el('div', { class: 'list-slot' });
  const stripSlot = el('div', { class: 'strip-slot' });
  const stripSection = el('section', { class: 'strip-section', 'aria-label': 'Strip' }, el('h2', { class: 'visually-hidden' }, 'Strip'), stripSlot);
  const coverageSlot = el('div', { class: 'coverage-slot' });
  const detailSlot = el('div', { class: 'detail-slot' });
  const adviceSlot = el('div', { class: 'advice-slot' });
  const exportSlot = el('div', { class: 'export-slot' });
  const wide = el('div', { class: 'results-wide' }, stripSection, coverageSlot, detailSlot);
  const results = el(
    'div',
    { class: 'results' },
    summarySlot,
    wide,
    // The card's list sits beside the budget, where a sequence's advice goes.
    el('div', { class: 'results-main' }, listSlot, adviceSlot),
    el('aside', { class: 'results-side' }, panel.element, saving.element, exportSlot),
  );

  const frames = createFrameImages((file, maxSide) => api.frameUrl(state.checkId ?? 0, file, maxSide));
  const thumbnail = frames.thumbnail;

  // Rendering.
  function render(): void {
    const { screen, running, report } = state;
    newCheck.hidden = screen !== 'results';
    if (screen === 'start' || (screen === 'progress' && running?.writing)) {
      replaceChildren(view, renderStart(startModel(), startActions));
    } else if (screen === 'progress' && running && progressView) {
      replaceChildren(view, progressView.element);
      progressView.update(running.progress);
    } else if (screen === 'results' && report) {
      // While the check still runs, its progress (and Cancel) stays above the results so far.
      // Put in place only when not already there: moving the results out and back would drop the focus.
      const parts = running && progressView ? [progressView.element, results] : [results];
      if (view.childNodes.length !== parts.length || parts.some((n, i) => view.childNodes[i] !== n)) replaceChildren(view, ...parts);
      if (running) progressView?.update(running.progress);
      fillResults();
    }
  }

  function startModel(): StartModel {
    return { shell: host?.shell ?? null, recent, showPathField, canDrop: typeof bridge.pathForFile === 'function', message: state.message, hasResults: state.report !== null, prefer: shots.current, writing: state.running?.writing ?? null };
  }

  /** The card shows its list; a sequence opened from it, or a report of one sequence, shows the strip. */
  const listing = (): boolean => state.report !== null && isCard(state.report) && nav.openSeq === null;

  /** The report the strip, detail, coverage and advice are built from: the opened sequence alone, or the whole report. */
  function shown(): Report | null {
    const report = state.report;
    if (!report) return null;
    return isCard(report) && nav.openSeq !== null ? sequenceReport(report, nav.openSeq) : report;
  }

  function fillResults(): void {
    const one = shown();
    if (!state.report || !one) return;
    if (listing()) fillList();
    else fillSequence(state.report, one);
  }

  function fillList(): void {
    const { report, running } = state;
    if (!report) return;
    const hadFocus = listSlot.contains(doc.activeElement) ? doc.activeElement?.getAttribute('data-sequence') ?? null : null;
    replaceChildren(summarySlot, renderSummary(report, { switchPreference: running ? undefined : switchPreference, checking: running !== null }));
    replaceChildren(listSlot, renderSequenceList(report, { thumbnail, selected: nav.listSelected, onOpen: openSequence, onSelect: (i) => selectSequence(i, false) }));
    listSlot.hidden = false;
    wide.hidden = true;
    replaceChildren(stripSlot);
    stripSection.hidden = true;
    replaceChildren(coverageSlot);
    replaceChildren(detailSlot);
    // Advice names stations, counted within each sequence: it is read in the sequence it belongs to.
    replaceChildren(adviceSlot);
    adviceSlot.hidden = true;
    replaceChildren(exportSlot, renderExport(exportResult, doExport));
    if (hadFocus) listSlot.querySelector<HTMLElement>(`[data-sequence="${cssEscape(hadFocus)}"]`)?.focus();
  }

  function fillSequence(card: Report, report: Report): void {
    replaceChildren(listSlot);
    listSlot.hidden = true;
    wide.hidden = false;
    const hadFocus = stripSlot.contains(doc.activeElement) ? doc.activeElement?.getAttribute('data-pair') ?? null : null;
    const summaryFocus = focusedInSummary(summarySlot);
    const { openSeq, selected, detail } = nav;
    const bar = isCard(card) && openSeq !== null ? renderSequenceBar(card, openSeq, backToList) : null;
    const running = state.running;
    replaceChildren(summarySlot, bar, renderSummary(report, { switchPreference: running ? undefined : switchPreference, checking: running !== null, show }));
    // While the detail is open the strip is out of the document, so that [data-pair="a|b"] names
    // one element only (the detail); thumbnails are kept and come back without reloading.
    if (detail) replaceChildren(stripSlot);
    else replaceChildren(stripSlot, renderStrip(report, { thumbnail, selected, onOpen: openDetail, onSelect: (k) => select(k, false) }));
    // The plan, with a button to each item's pair or frame, is what to do; a report from before plans lists the advice.
    replaceChildren(adviceSlot, report.plan ? null : renderAdvice(report, openDetail));
    replaceChildren(coverageSlot, detail ? null : renderCoverage(report));
    replaceChildren(exportSlot, renderExport(exportResult, doExport));
    stripSection.hidden = detail !== null;
    adviceSlot.hidden = detail !== null || !!report.plan;
    if (detail) {
      const onToggleLines = (): void => {
        lines = !lines;
        refreshDetail();
      };
      replaceChildren(detailSlot, renderDetail(report, detail, { image: frames.full, tiePoints: ties.get(detail) ?? { state: 'loading' }, lines, onBack: closeDetail, onToggleLines }));
    } else {
      replaceChildren(detailSlot);
    }
    if (hadFocus) stripSlot.querySelector<HTMLElement>(`[data-pair="${cssEscape(hadFocus)}"]`)?.focus();
    if (summaryFocus) summarySlot.querySelector<HTMLElement>(summaryFocus)?.focus();
  }

  /** Redraws an open detail (tie points arrived, lines toggled), keeping focus on the same control. */
  function refreshDetail(): void {
    if (state.screen !== 'results' || !state.report || !nav.detail) return;
    const a = doc.activeElement;
    const focused = a && detailSlot.contains(a) ? (a.hasAttribute('data-toggle-lines') ? '[data-toggle-lines]' : '.back') : null;
    fillResults();
    if (focused) detailSlot.querySelector<HTMLElement>(focused)?.focus();
  }

  // Selection and the detail.
  function markSelection(): void {
    for (const n of stripSlot.querySelectorAll<HTMLElement>('[data-pair]')) {
      const on = n.getAttribute('data-pair') === nav.selected;
      n.classList.toggle('is-selected', on);
      if (on) n.setAttribute('aria-current', 'true');
      else n.removeAttribute('aria-current');
    }
  }

  function select(key: string, focus: boolean): void {
    nav = { ...nav, selected: key };
    markSelection();
    if (focus) stripSlot.querySelector<HTMLElement>(`[data-pair="${cssEscape(key)}"]`)?.focus();
  }

  function move(step: 1 | -1): void {
    const report = shown();
    if (!report) return;
    const next = stepTo(chainPairs(report).map(pairKey), nav.selected, step);
    if (next === undefined) return;
    if (nav.detail) {
      if (next !== nav.detail) openDetail(next);
    } else {
      select(next, true);
    }
  }

  function openDetail(key: string): void {
    const report = shown();
    const checkId = state.checkId;
    if (!report || checkId === null) return;
    const p = findPair(report, key);
    if (!p) return;
    nav = withDetail(nav, key, chainPairs(report).some((q) => pairKey(q) === key));
    if (!ties.has(key)) {
      ties.set(key, { state: 'loading' });
      const id = checkId;
      api.tiePoints(id, p.a, p.b).then(
        (points) => {
          if (state.checkId !== id) return;
          ties.set(key, { state: 'ready', points });
          if (nav.detail === key) refreshDetail();
        },
        (e) => {
          if (state.checkId !== id) return;
          ties.set(key, { state: 'failed', message: messageOf(e) });
          if (nav.detail === key) refreshDetail();
        },
      );
    }
    fillResults();
    // The detail opens at the top of the window, its measures in sight whatever stands above it.
    detailSlot.scrollIntoView?.({ block: 'start' });
    detailSlot.querySelector<HTMLElement>('.back')?.focus({ preventScroll: true });
  }

  /** Shows a station or frame of the strip (closing the detail first): the plan's and the overview's buttons. */
  function reveal(what: { station: number } | { frame: string }): void {
    if (nav.detail) {
      nav = withoutDetail(nav);
      fillResults();
    }
    revealInStrip(stripSlot, what);
  }
  const show = { onOpenPair: (key: string) => openDetail(key), onShowStation: (station: number) => reveal({ station }), onShowFrame: (frame: string) => reveal({ frame }) };

  function closeDetail(): void {
    const { detail: key, selected } = nav;
    nav = withoutDetail(nav);
    fillResults();
    const target = (selected && stripSlot.querySelector<HTMLElement>(`[data-pair="${cssEscape(selected)}"]`)) || (key && stripSlot.querySelector<HTMLElement>(`[data-pair="${cssEscape(key)}"]`));
    if (target) target.focus();
  }

  // The card's list.
  function selectSequence(index: number, focus: boolean): void {
    nav = { ...nav, listSelected: index };
    for (const n of listSlot.querySelectorAll<HTMLElement>('[data-sequence]')) {
      const on = Number(n.getAttribute('data-sequence')) === index;
      n.classList.toggle('is-selected', on);
      if (on) n.setAttribute('aria-current', 'true');
      else n.removeAttribute('aria-current');
    }
    if (focus) listSlot.querySelector<HTMLElement>(`[data-sequence="${index}"]`)?.focus();
  }

  function moveInList(step: 1 | -1): void {
    const next = stepTo((state.report?.sequences ?? []).map((q) => q.index), nav.listSelected, step);
    if (next !== undefined) selectSequence(next, true);
  }

  function openSequence(index: number): void {
    if (!state.report || !(state.report.sequences ?? []).some((q) => q.index === index)) return;
    nav = openedSequence(index);
    fillResults();
    summarySlot.querySelector<HTMLElement>('[data-back-to-list]')?.focus();
  }

  function backToList(): void {
    nav = listNav(nav);
    fillResults();
    const { listSelected } = nav;
    if (listSelected !== null) listSlot.querySelector<HTMLElement>(`[data-sequence="${listSelected}"]`)?.focus();
  }

  // Budget.
  function setBudget(b: MatchBudget): void {
    dispatch({ type: 'budget-changed', budget: b });
    if (state.raw && state.screen === 'results') fillResults();
  }

  // Checks: every change of the life cycle goes through the reducer; what follows draws and calls the host.
  /** Applies an event and returns the state before it. A new check forgets what was shown of the old one. */
  function dispatch(e: CheckEvent): CheckState {
    const prev = state;
    state = reduce(prev, e);
    if (state.checkId !== prev.checkId) {
      nav = startNavigation;
      ties = new Map();
      frames.forget();
      exportResult = { state: 'idle' };
    }
    if (state.raw !== prev.raw && state.report) nav = afterReport(nav, state.report);
    return prev;
  }

  /**
   * Draws what host events changed, no more: the progress view is updated in place so Cancel keeps
   * the focus. A report received is drawn again even when it is the same, keeping the focus within.
   */
  function drawAfter(prev: CheckState, events: readonly HostEvent[]): void {
    const s = state;
    if (s === prev) return;
    const received = events.some((e) => e.type === 'partial' || e.type === 'done');
    if (received || s.report !== prev.report || s.screen !== prev.screen || s.message !== prev.message) render();
    else if (s.running && s.running.writing !== prev.running?.writing && s.screen === 'progress') render();
    else if (s.running && s.running.progress !== prev.running?.progress && s.screen !== 'start') progressView?.update(s.running.progress);
    // A check that ended (with its report, cancelled or stopped) is now among the recent folders.
    if (prev.running && !s.running) void refreshRecent();
  }

  const hostEvent = (e: HostEvent): void => drawAfter(dispatch(e), [e]);
  // Read after an await: the state may have moved on meanwhile.
  const runningNow = (): RunningCheck | null => state.running;

  async function startCheck(target: { folder: string } | { demo: true }, label: string): Promise<void> {
    if (state.running) return;
    dispatch({ type: 'started', label });
    const serial = state.serial;
    const pv = createProgressView(cancel);
    progressView = pv;
    render();
    pv.element.querySelector<HTMLElement>('[data-cancel]')?.focus();
    try {
      const id = await api.startCheck(target);
      const r = runningNow();
      if (r?.serial !== serial) return;
      const asked = r.cancelAsked;
      const prev = dispatch({ type: 'accepted', serial, checkId: id });
      if (asked) void api.cancelCheck(id).catch(() => undefined);
      drawAfter(prev, prev.early.filter((x) => checkIdOf(x) === id));
    } catch (e) {
      if (runningNow()?.serial !== serial) return;
      dispatch({ type: 'start-failed', serial, error: messageOf(e) });
      render();
    }
  }

  function cancel(): void {
    dispatch({ type: 'cancel-asked' });
    const r = state.running;
    if (!r) return;
    progressView?.update(r.progress);
    if (r.id !== null) void api.cancelCheck(r.id).catch(() => undefined);
  }

  /** A page loaded again: the host's latest check, still running or with its report, instead of a new one. */
  function resume(latest: LatestCheck): void {
    if (latest.running) progressView = createProgressView(cancel);
    dispatch({ type: 'resumed', latest });
    render();
  }

  async function doExport(format: ExportFormat): Promise<void> {
    const checkId = state.checkId;
    if (checkId === null || exportResult.state === 'busy') return;
    exportResult = { state: 'busy', format };
    replaceChildren(exportSlot, renderExport(exportResult, doExport));
    try {
      const path = await api.exportReport(checkId, format, state.budget);
      exportResult = path === null ? { state: 'cancelled' } : { state: 'written', path, shell: host?.shell ?? 'desktop' };
    } catch (e) {
      exportResult = { state: 'failed', message: messageOf(e) };
    }
    if (state.screen === 'results') {
      replaceChildren(exportSlot, renderExport(exportResult, doExport));
      exportSlot.querySelector<HTMLElement>(`[data-export="${format}"]`)?.focus();
    }
  }

  // Which file of a RAW+JPEG shot to check.
  async function setPrefer(p: ShotPreference): Promise<boolean> {
    const error = await shots.choose(p);
    if (error === null) return true;
    dispatch({ type: 'notice', message: { kind: 'error', text: `The choice of RAW or JPEG could not be saved: ${error}` } });
    if (state.screen === 'start') render();
    return false;
  }

  /** Checks the shown folder again, reading the other file of each RAW+JPEG shot. */
  async function switchPreference(): Promise<void> {
    const report = state.report;
    if (!report?.rawPlusJpeg || state.running) return;
    const folder = report.folder;
    if (!(await setPrefer(report.rawPlusJpeg.checked === 'raw' ? 'jpeg' : 'raw'))) {
      saving.say(state.message?.text ?? '');
      return;
    }
    openFolder(folder);
  }

  // Start screen.
  function goStart(): void {
    if (state.screen === 'progress') return;
    dispatch({ type: 'back-to-start' });
    render();
    view.querySelector<HTMLElement>('[data-back-to-results], [data-choose-folder]')?.focus();
  }

  const openFolder = (folder: string): void => {
    void startCheck({ folder }, folder.split(/[\\/]/).filter(Boolean).pop() ?? folder);
  };

  const startActions = {
    chooseFolder: async (): Promise<void> => {
      let folder: string | null = null;
      try {
        folder = await api.chooseFolder();
      } catch (e) {
        dispatch({ type: 'notice', message: { kind: 'error', text: `No folder dialog: ${messageOf(e)}` } });
      }
      if (folder) {
        openFolder(folder);
        return;
      }
      if ((host ?? (await api.hostInfo().catch(() => null)))?.shell === 'browser') showPathField = true;
      if (state.screen === 'start') {
        render();
        view.querySelector<HTMLInputElement>('input[name="folder"]')?.focus();
      }
    },
    openFolder,
    tryDemo: (): void => void startCheck({ demo: true }, 'the demo shoot'),
    setPrefer: (p: ShotPreference): void => void setPrefer(p),
    backToResults: (): void => {
      if (!state.report) return;
      dispatch({ type: 'back-to-results' });
      render();
    },
  };

  async function refreshRecent(): Promise<void> {
    try {
      recent = await api.recentFolders();
    } catch {
      recent = [];
    }
    if (state.screen === 'start') render();
  }

  const offKeys = listenForKeys(doc, {
    showing: () => (state.screen !== 'results' || !state.report ? null : listing() ? 'list' : 'strip'),
    list: { selected: () => nav.listSelected, move: moveInList, open: openSequence },
    strip: {
      selected: () => nav.selected,
      detailOpen: () => nav.detail !== null,
      move,
      open: openDetail,
      closeDetail,
      inCard: () => nav.openSeq !== null && state.report !== null && isCard(state.report),
      backToList,
    },
    goStart,
  });

  const offDrops = listenForDrops(win, root, {
    busy: () => state.screen === 'progress',
    pathOf: (file) => bridge.pathForFile?.(file) ?? '',
    open: openFolder,
    refused: () => {
      if (host?.shell === 'browser') showPathField = true;
      dispatch({ type: 'back-to-start', message: { kind: 'info', text: 'Dropping a folder needs the desktop app: use Open folder… or type the folder path instead.' } });
      render();
    },
  });
  const offProgress = api.onProgress((event) => hostEvent({ type: 'progress', event }));
  const offDone = api.onDone((e) => hostEvent(doneEvent(e)));
  const offPartial = api.onPartial((event) => hostEvent({ type: 'partial', event }));

  render();

  const ready = Promise.all([
    api.hostInfo().then((h) => {
      host = h;
      footer.textContent = `Seamscout ${h.version} · ${h.shell === 'desktop' ? 'desktop app' : 'in the browser'}`;
    }, () => undefined),
    api.recentFolders().then((r) => {
      recent = r;
    }, () => undefined),
    api.loadShotPreference().then((p) => {
      shots.loaded(p);
    }, () => undefined),
    // Tolerant of a bridge without it: the path is only said when a budget is saved.
    Promise.resolve()
      .then(() => api.settingsInfo())
      .then((info) => {
        saving.settingsKnown(info);
      })
      .catch(() => undefined),
    api.loadBudget().then((b) => {
      if (saving.edited) return;
      panel.set(b);
      setBudget(b);
    }, (e) => saving.say(`The stored budget could not be read (${messageOf(e)}); using the defaults.`)),
  ]).then(() => {
    // Opened with a folder (or, by default, the demo shoot): go straight to its check.
    const first = host?.initialTarget;
    if (state.screen === 'start' && host?.latest) resume(host.latest);
    else if (state.screen === 'start' && first) {
      if ('demo' in first) startActions.tryDemo();
      else openFolder(first.folder);
    } else if (state.screen === 'start') render();
  });

  return {
    ready,
    destroy(): void {
      offKeys();
      offDrops();
      offProgress();
      offDone();
      offPartial();
      saving.dispose();
      replaceChildren(root);
    },
  };
}

/** Quotes a value for an attribute selector (file names may hold quotes or backslashes). */
function cssEscape(v: string): string {
  return v.replace(/["\\]/g, '\\$&');
}
