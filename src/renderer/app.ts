// The page's controller: holds the check's life cycle (screen, report, budget), talks to main only
// through the SeamscoutApi object, and wires the start screen, the progress view, the results screen
// (results-screen.ts), the keyboard, drops and the settings; the views build DOM from plain data.
import type { HostInfo, LatestCheck, SeamscoutApi, ShotPreference } from '../common/api.js';
import type { MatchBudget } from '../core/sequence/report.js';
import type { BudgetPanel } from './budget-panel.js';
import { createBudgetPanel } from './budget-panel.js';
import type { BudgetSaving } from './budget-save.js';
import { createBudgetSaving } from './budget-save.js';
import type { ShotPreferenceSaving } from './shot-preference.js';
import { createShotPreference } from './shot-preference.js';
import type { CheckEvent, CheckState, HostEvent, RunningCheck } from './check-state.js';
import { checkIdOf, doneEvent, initialCheckState, reduce } from './check-state.js';
import { button, el, replaceChildren } from './dom.js';
import type { DropTargets } from './drop.js';
import { listenForDrops } from './drop.js';
import { messageOf } from './format.js';
import type { ProgressView } from './progress-view.js';
import { createProgressView } from './progress-view.js';
import type { ResultsScreen } from './results-screen.js';
import { createResultsScreen } from './results-screen.js';
import type { StartActions, StartModel } from './start-view.js';
import { renderStart } from './start-view.js';
import type { KeyTargets } from './keyboard.js';
import { listenForKeys } from './keyboard.js';
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

/** The mounted page: its parts, built once, and the controller's state, shared by the functions below. */
interface Page {
  readonly api: Bridge;
  readonly doc: Document;
  readonly view: HTMLElement;
  readonly newCheck: HTMLButtonElement;
  readonly saving: BudgetSaving;
  readonly shots: ShotPreferenceSaving;
  readonly panel: BudgetPanel;
  readonly results: ResultsScreen;
  readonly startActions: StartActions;
  // State: the check's life cycle (screen, running check, report, budget, message) in one value.
  state: CheckState;
  // The progress view of the running check, made new for each.
  progressView: ProgressView | null;
  host: HostInfo | null;
  recent: string[];
  showPathField: boolean;
}

export function mountApp(root: HTMLElement, api: SeamscoutApi, options: MountOptions = {}): MountedApp {
  const doc = root.ownerDocument;
  const win = doc.defaultView ?? window;
  const storage = options.storage !== undefined ? options.storage : localStorageOf(win);

  // The frame.
  applyStoredTheme(doc, storage);
  const newCheck = button({ class: 'small', 'data-new-check': '' }, () => goStart(page), 'New check');
  const view = el('main', { class: 'view', id: 'view', tabindex: -1 });
  const footer = el('footer', { class: 'footer' });
  replaceChildren(
    root,
    el('div', { class: 'app' }, el('header', { class: 'topbar' }, el('span', { class: 'brand' }, 'Seamscout'), el('span', { class: 'spacer' }), newCheck, themeToggle(doc, win, storage)), view, footer),
  );

  // The settings beside the results, and the results screen, built once; the parts that depend on the report are refilled.
  const saving = createBudgetSaving(api, options.saveDelayMs ?? 400);
  const shots = createShotPreference(api, (p) => page.panel.setPrefer(p));
  const panel = createBudgetPanel(
    initialCheckState.budget,
    (b) => {
      setBudget(page, b);
      saving.edit(b);
    },
    { initial: shots.current, onChange: (p) => void setPrefer(page, p) },
  );
  const results = createResultsScreen({ doc, api, state: () => page.state, host: () => page.host, side: [panel.element, saving.element], switchPreference: () => void switchPreference(page) });
  const page: Page = { api, doc, view, newCheck, saving, shots, panel, results, startActions: startActionsOf(() => page), state: initialCheckState, progressView: null, host: null, recent: [], showPathField: false };

  const offs = [
    listenForKeys(doc, keyTargets(page)),
    listenForDrops(win, root, dropTargets(page)),
    api.onProgress((event) => hostEvent(page, { type: 'progress', event })),
    api.onDone((e) => hostEvent(page, doneEvent(e))),
    api.onPartial((event) => hostEvent(page, { type: 'partial', event })),
  ];

  render(page);
  const ready = askHost(page, footer);

  return {
    ready,
    destroy(): void {
      for (const off of offs) off();
      saving.dispose();
      replaceChildren(root);
    },
  };
}

function localStorageOf(win: Window): Storage | null {
  try {
    return win.localStorage;
  } catch {
    return null;
  }
}

// Rendering.
function render(p: Page): void {
  const { screen, running, report } = p.state;
  const { view, progressView } = p;
  p.newCheck.hidden = screen !== 'results';
  if (screen === 'start' || (screen === 'progress' && running?.writing)) {
    replaceChildren(view, renderStart(startModel(p), p.startActions));
  } else if (screen === 'progress' && running && progressView) {
    replaceChildren(view, progressView.element);
    progressView.update(running.progress);
  } else if (screen === 'results' && report) {
    // While the check still runs, its progress (and Cancel) stays above the results so far.
    // Put in place only when not already there: moving the results out and back would drop the focus.
    const parts = running && progressView ? [progressView.element, p.results.element] : [p.results.element];
    if (view.childNodes.length !== parts.length || parts.some((n, i) => view.childNodes[i] !== n)) replaceChildren(view, ...parts);
    if (running) progressView?.update(running.progress);
    p.results.fill();
  }
}

function startModel(p: Page): StartModel {
  const { state } = p;
  return { shell: p.host?.shell ?? null, recent: p.recent, showPathField: p.showPathField, canDrop: typeof p.api.pathForFile === 'function', message: state.message, hasResults: state.report !== null, prefer: p.shots.current, writing: state.running?.writing ?? null };
}

// Budget.
function setBudget(p: Page, b: MatchBudget): void {
  dispatch(p, { type: 'budget-changed', budget: b });
  if (p.state.raw && p.state.screen === 'results') p.results.fill();
}

// Checks: every change of the life cycle goes through the reducer; what follows draws and calls the host.
/** Applies an event and returns the state before it. A new check forgets what was shown of the old one. */
function dispatch(p: Page, e: CheckEvent): CheckState {
  const prev = p.state;
  p.state = reduce(prev, e);
  if (p.state.checkId !== prev.checkId) p.results.forgetCheck();
  if (p.state.raw !== prev.raw && p.state.report) p.results.reportChanged(p.state.report);
  return prev;
}

/**
 * Draws what host events changed, no more: the progress view is updated in place so Cancel keeps
 * the focus. A report received is drawn again even when it is the same, keeping the focus within.
 */
function drawAfter(p: Page, prev: CheckState, events: readonly HostEvent[]): void {
  const s = p.state;
  if (s === prev) return;
  const received = events.some((e) => e.type === 'partial' || e.type === 'done');
  if (received || s.report !== prev.report || s.screen !== prev.screen || s.message !== prev.message) render(p);
  else if (s.running && s.running.writing !== prev.running?.writing && s.screen === 'progress') render(p);
  else if (s.running && s.running.progress !== prev.running?.progress && s.screen !== 'start') p.progressView?.update(s.running.progress);
  // A check that ended (with its report, cancelled or stopped) is now among the recent folders.
  if (prev.running && !s.running) void refreshRecent(p);
}

const hostEvent = (p: Page, e: HostEvent): void => drawAfter(p, dispatch(p, e), [e]);
// Read after an await: the state may have moved on meanwhile.
const runningNow = (p: Page): RunningCheck | null => p.state.running;

async function startCheck(p: Page, target: { folder: string } | { demo: true }, label: string): Promise<void> {
  if (p.state.running) return;
  dispatch(p, { type: 'started', label });
  const serial = p.state.serial;
  const pv = createProgressView(() => cancel(p));
  p.progressView = pv;
  render(p);
  pv.element.querySelector<HTMLElement>('[data-cancel]')?.focus();
  try {
    const id = await p.api.startCheck(target);
    const r = runningNow(p);
    if (r?.serial !== serial) return;
    const asked = r.cancelAsked;
    const prev = dispatch(p, { type: 'accepted', serial, checkId: id });
    if (asked) void p.api.cancelCheck(id).catch(() => undefined);
    drawAfter(p, prev, prev.early.filter((x) => checkIdOf(x) === id));
  } catch (e) {
    if (runningNow(p)?.serial !== serial) return;
    dispatch(p, { type: 'start-failed', serial, error: messageOf(e) });
    render(p);
  }
}

function cancel(p: Page): void {
  dispatch(p, { type: 'cancel-asked' });
  const r = p.state.running;
  if (!r) return;
  p.progressView?.update(r.progress);
  if (r.id !== null) void p.api.cancelCheck(r.id).catch(() => undefined);
}

/** A page loaded again: the host's latest check, still running or with its report, instead of a new one. */
function resume(p: Page, latest: LatestCheck): void {
  if (latest.running) p.progressView = createProgressView(() => cancel(p));
  dispatch(p, { type: 'resumed', latest });
  render(p);
}

// Which file of a RAW+JPEG shot to check.
async function setPrefer(p: Page, prefer: ShotPreference): Promise<boolean> {
  const error = await p.shots.choose(prefer);
  if (error === null) return true;
  dispatch(p, { type: 'notice', message: { kind: 'error', text: `The choice of RAW or JPEG could not be saved: ${error}` } });
  if (p.state.screen === 'start') render(p);
  return false;
}

/** Checks the shown folder again, reading the other file of each RAW+JPEG shot. */
async function switchPreference(p: Page): Promise<void> {
  const report = p.state.report;
  if (!report?.rawPlusJpeg || p.state.running) return;
  const folder = report.folder;
  if (!(await setPrefer(p, report.rawPlusJpeg.checked === 'raw' ? 'jpeg' : 'raw'))) {
    p.saving.say(p.state.message?.text ?? '');
    return;
  }
  openFolder(p, folder);
}

// Start screen.
function goStart(p: Page): void {
  if (p.state.screen === 'progress') return;
  dispatch(p, { type: 'back-to-start' });
  render(p);
  p.view.querySelector<HTMLElement>('[data-back-to-results], [data-choose-folder]')?.focus();
}

function openFolder(p: Page, folder: string): void {
  void startCheck(p, { folder }, folder.split(/[\\/]/).filter(Boolean).pop() ?? folder);
}

/** The start screen's buttons; `page` is read when one is used (the page is built after them). */
function startActionsOf(page: () => Page): StartActions {
  return {
    chooseFolder: () => void chooseFolder(page()),
    openFolder: (folder) => openFolder(page(), folder),
    tryDemo: () => void startCheck(page(), { demo: true }, 'the demo shoot'),
    setPrefer: (prefer) => void setPrefer(page(), prefer),
    backToResults: () => {
      const p = page();
      if (!p.state.report) return;
      dispatch(p, { type: 'back-to-results' });
      render(p);
    },
  };
}

async function chooseFolder(p: Page): Promise<void> {
  let folder: string | null = null;
  try {
    folder = await p.api.chooseFolder();
  } catch (e) {
    dispatch(p, { type: 'notice', message: { kind: 'error', text: `No folder dialog: ${messageOf(e)}` } });
  }
  if (folder) {
    openFolder(p, folder);
    return;
  }
  if ((p.host ?? (await p.api.hostInfo().catch(() => null)))?.shell === 'browser') p.showPathField = true;
  if (p.state.screen === 'start') {
    render(p);
    p.view.querySelector<HTMLInputElement>('input[name="folder"]')?.focus();
  }
}

async function refreshRecent(p: Page): Promise<void> {
  try {
    p.recent = await p.api.recentFolders();
  } catch {
    p.recent = [];
  }
  if (p.state.screen === 'start') render(p);
}

function keyTargets(p: Page): KeyTargets {
  return {
    showing: () => (p.state.screen !== 'results' || !p.state.report ? null : p.results.listing() ? 'list' : 'strip'),
    ...p.results.keys,
    goStart: () => goStart(p),
  };
}

function dropTargets(p: Page): DropTargets {
  return {
    busy: () => p.state.screen === 'progress',
    pathOf: (file) => p.api.pathForFile?.(file) ?? '',
    open: (folder) => openFolder(p, folder),
    refused: () => {
      if (p.host?.shell === 'browser') p.showPathField = true;
      dispatch(p, { type: 'back-to-start', message: { kind: 'info', text: 'Dropping a folder needs the desktop app: use Open folder… or type the folder path instead.' } });
      render(p);
    },
  };
}

/** Asks the host what it is, the recent folders and the stored settings; then opens what the host says to. */
async function askHost(p: Page, footer: HTMLElement): Promise<void> {
  const { api, saving } = p;
  await Promise.all([
    api.hostInfo().then((h) => {
      p.host = h;
      footer.textContent = `Seamscout ${h.version} · ${h.shell === 'desktop' ? 'desktop app' : 'in the browser'}`;
    }, () => undefined),
    api.recentFolders().then((r) => {
      p.recent = r;
    }, () => undefined),
    api.loadShotPreference().then((prefer) => {
      p.shots.loaded(prefer);
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
      p.panel.set(b);
      setBudget(p, b);
    }, (e) => saving.say(`The stored budget could not be read (${messageOf(e)}); using the defaults.`)),
  ]);
  // Opened with a folder (or, by default, the demo shoot): go straight to its check.
  const first = p.host?.initialTarget;
  if (p.state.screen === 'start' && p.host?.latest) resume(p, p.host.latest);
  else if (p.state.screen === 'start' && first) {
    if ('demo' in first) p.startActions.tryDemo();
    else openFolder(p, first.folder);
  } else if (p.state.screen === 'start') render(p);
}
