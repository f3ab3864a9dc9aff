// @vitest-environment happy-dom
// The mounted page against a fake SeamscoutApi: start screen, progress, results, the budget panel
// re-judging without re-analysis, keyboard navigation, the detail, export, drop and theme. The
// report is four single-frame stations judged by core's `judge` with the default budget.
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import type { CheckDoneEvent, CheckPartialEvent, CheckProgressEvent, ExportFormat, HostInfo, SeamscoutApi, SettingsInfo, ShotPreference } from '../../src/common/api.js';
import type { Analysis, MatchBudget, PairMeasure, Report } from '../../src/core/sequence/report.js';
import { defaultBudget } from '../../src/core/sequence/report.js';
import { judge } from '../../src/core/sequence/verdicts.js';
import type { MountedApp } from '../../src/renderer/app.js';
import { mountApp } from '../../src/renderer/app.js';
import { cardAnalysis } from '../helpers/card-analysis.js';

const W = 4000, H = 6000; // portrait frames
const pair = (a: string, b: string, overlap: number, extra: Partial<PairMeasure> = {}): PairMeasure => ({
  a, b, kind: 'neighbour', matches: 320, inliers: 210, matchesInOverlap: 250, overlap, homography: [1, 0, -W * (1 - overlap), 0, 1, 0, 0, 0, 1], evDiff: 0.1, rmsError: 0.6, shiftPx: null, ...extra,
});
const files = ['F1.jpg', 'F2.jpg', 'F3.jpg', 'F4.jpg'];
const analysis: Analysis = {
  folder: '/card/shoot',
  frames: files.map((file) => ({ file, width: W, height: H, captureTime: null, settings: { exposureTime: 0.01, fNumber: 8, iso: 100, evBias: 0, focalLength: 24, focalLength35: 24, whiteBalance: 'auto', make: null, model: null }, sharpness: 2, keypoints: 1500 })),
  stations: files.map((f, i) => ({ index: i, frames: [f], reference: f, evOffsets: [0], groupedBy: 'single' as const })),
  pairs: [pair('F1.jpg', 'F2.jpg', 0.15), pair('F2.jpg', 'F3.jpg', 0.45), pair('F3.jpg', 'F4.jpg', 0.25)],
  skipped: [],
  sweepDeg: null,
  geometry: null,
};
const report: Report = judge(analysis, defaultBudget);
const K12 = 'F1.jpg|F2.jpg', K23 = 'F2.jpg|F3.jpg', K34 = 'F3.jpg|F4.jpg';

interface Call { readonly name: string; readonly args: unknown[] }

function fakeApi(opts: { prefer?: ShotPreference; shell?: HostInfo['shell']; latest?: HostInfo['latest']; settings?: SettingsInfo; chooseFolder?: string | null; budget?: MatchBudget; exportResult?: () => Promise<string | null>; startCheck?: () => Promise<number>; pathForFile?: (f: File) => string } = {}) {
  const calls: Call[] = [];
  const progress: ((e: CheckProgressEvent) => void)[] = [];
  const done: ((e: CheckDoneEvent) => void)[] = [];
  const partial: ((e: CheckPartialEvent) => void)[] = [];
  const log = <T>(name: string, args: unknown[], value: T): T => {
    calls.push({ name, args });
    return value;
  };
  const api: SeamscoutApi & { pathForFile?: (f: File) => string } = {
    hostInfo: async () => log('hostInfo', [], { shell: opts.shell ?? 'desktop', version: '0.1.0', latest: opts.latest ?? null }),
    chooseFolder: async () => log('chooseFolder', [], opts.chooseFolder ?? null),
    recentFolders: async () => log('recentFolders', [], ['/card/yesterday', '/card/shoot']),
    startCheck: (target) => log('startCheck', [target], opts.startCheck ? opts.startCheck() : Promise.resolve(7)),
    cancelCheck: async (id) => log('cancelCheck', [id], undefined),
    loadBudget: async () => log('loadBudget', [], opts.budget ?? defaultBudget),
    saveBudget: async (b) => log('saveBudget', [b], b),
    settingsInfo: async () => log('settingsInfo', [], opts.settings ?? { path: '/home/me/.config/seamscout/settings.json', note: null }),
    loadShotPreference: async () => log('loadShotPreference', [], opts.prefer ?? 'jpeg'),
    saveShotPreference: async (p) => log('saveShotPreference', [p], p),
    exportReport: (id: number, format: ExportFormat, budget: MatchBudget) => log('exportReport', [id, format, budget], opts.exportResult ? opts.exportResult() : Promise.resolve(`/home/me/shoot.${format}`)),
    tiePoints: async (id, a, b) => log('tiePoints', [id, a, b], [3500, 3000, 100, 3000, 3700, 1000, 300, 1000, 3900, 5000, 500, 5000]),
    frameUrl: (id, file, maxSide) => `seamscout-frame://frames/${id}/${encodeURIComponent(file)}?max=${maxSide}`,
    onProgress: (l) => {
      progress.push(l);
      return () => progress.splice(progress.indexOf(l), 1);
    },
    onDone: (l) => {
      done.push(l);
      return () => done.splice(done.indexOf(l), 1);
    },
    onPartial: (l) => {
      partial.push(l);
      return () => partial.splice(partial.indexOf(l), 1);
    },
  };
  if (opts.pathForFile) api.pathForFile = opts.pathForFile;
  return {
    api,
    calls,
    names: () => calls.map((c) => c.name),
    emitProgress: (e: CheckProgressEvent) => progress.forEach((l) => l(e)),
    emitDone: (e: CheckDoneEvent) => done.forEach((l) => l(e)),
    emitPartial: (e: CheckPartialEvent) => partial.forEach((l) => l(e)),
    listeners: () => progress.length + done.length + partial.length,
  };
}

const tick = (ms = 0): Promise<void> => new Promise((r) => setTimeout(r, ms));
const text = (n: Element | null | undefined): string => (n?.textContent ?? '').replace(/\s+/g, ' ').trim();
const $ = <T extends Element = HTMLElement>(sel: string): T | null => document.querySelector<T>(sel);
const buttonNamed = (label: string): HTMLButtonElement => {
  const b = [...document.querySelectorAll('button')].find((x) => text(x) === label);
  if (!b) throw new Error(`no button "${label}"`);
  return b;
};
const press = (key: string): void => {
  const target = document.activeElement && document.activeElement !== document.body ? document.activeElement : document.body;
  target.dispatchEvent(new KeyboardEvent('keydown', { key, bubbles: true, cancelable: true }));
};
const type = (name: string, value: string): void => {
  const input = $<HTMLInputElement>(`input[name="${name}"]`)!;
  input.value = value;
  input.dispatchEvent(new Event('input', { bubbles: true }));
};

let root: HTMLElement;
let app: MountedApp | null = null;
const storage = new Map<string, string>();
const fakeStorage = { getItem: (k: string) => storage.get(k) ?? null, setItem: (k: string, v: string) => void storage.set(k, v) } as unknown as Storage;

beforeEach(() => {
  storage.clear();
  delete document.documentElement.dataset.theme;
  root = document.createElement('div');
  document.body.replaceChildren(root);
});
afterEach(() => {
  app?.destroy();
  app = null;
});

async function mount(f: ReturnType<typeof fakeApi>): Promise<void> {
  app = mountApp(root, f.api, { saveDelayMs: 0, storage: fakeStorage });
  await app.ready;
}

/** Mounts, starts the demo shoot and delivers the report. */
async function withResults(f: ReturnType<typeof fakeApi>, r: Report = report): Promise<void> {
  await mount(f);
  buttonNamed('Try the demo shoot').click();
  await tick();
  f.emitDone({ checkId: 7, report: r, error: null, cancelled: false });
  await tick();
}

describe('start screen', () => {
  it('offers the folder dialog, the recent folders and the demo shoot', async () => {
    const f = fakeApi();
    await mount(f);
    expect(f.names().sort()).toEqual(['hostInfo', 'loadBudget', 'loadShotPreference', 'recentFolders', 'settingsInfo']);
    expect(text($('[data-choose-folder]'))).toBe('Open folder…');
    expect([...document.querySelectorAll('[data-recent]')].map((b) => b.getAttribute('data-recent'))).toEqual(['/card/yesterday', '/card/shoot']);
    buttonNamed('Try the demo shoot').click();
    expect(f.calls.at(-1)).toEqual({ name: 'startCheck', args: [{ demo: true }] });
  });

  it('opens a recent folder on click, and the dialog\'s folder', async () => {
    const f = fakeApi({ chooseFolder: '/media/card/DCIM' });
    await mount(f);
    ($('[data-recent="/card/yesterday"]') as HTMLElement).click();
    expect(f.calls.at(-1)).toEqual({ name: 'startCheck', args: [{ folder: '/card/yesterday' }] });
    f.emitDone({ checkId: 7, report: null, error: null, cancelled: true });
    await tick();
    ($('[data-choose-folder]') as HTMLElement).click();
    await tick();
    expect(f.calls.filter((c) => c.name === 'startCheck').at(-1)?.args).toEqual([{ folder: '/media/card/DCIM' }]);
  });

  it('shows a path field in the browser shell when there is no folder dialog', async () => {
    const f = fakeApi({ shell: 'browser', chooseFolder: null });
    await mount(f);
    expect($('[data-path-form]')).toBeNull();
    ($('[data-choose-folder]') as HTMLElement).click();
    await tick();
    const form = $<HTMLFormElement>('[data-path-form]')!;
    expect(form).not.toBeNull();
    form.querySelector('input')!.value = '/home/me/card';
    form.requestSubmit();
    expect(f.calls.at(-1)).toEqual({ name: 'startCheck', args: [{ folder: '/home/me/card' }] });
  });

  it('keeps the desktop dialog\'s cancel quiet: no path field, no check', async () => {
    const f = fakeApi({ shell: 'desktop', chooseFolder: null });
    await mount(f);
    ($('[data-choose-folder]') as HTMLElement).click();
    await tick();
    expect($('[data-path-form]')).toBeNull();
    expect(f.names()).not.toContain('startCheck');
  });

  const drop = (file: File): Event => {
    const e = new Event('drop', { bubbles: true, cancelable: true });
    Object.defineProperty(e, 'dataTransfer', { value: { types: ['Files'], files: [file], dropEffect: 'none' } });
    window.dispatchEvent(e);
    return e;
  };

  it('opens a dropped folder where the desktop bridge gives its path', async () => {
    const f = fakeApi({ pathForFile: (file) => `/media/${file.name}` });
    await mount(f);
    const e = drop(new File([], 'DCIM'));
    expect(e.defaultPrevented).toBe(true);
    expect(f.calls.at(-1)).toEqual({ name: 'startCheck', args: [{ folder: '/media/DCIM' }] });
  });

  it('says that dropping needs the desktop app where no path is available', async () => {
    const f = fakeApi({ shell: 'browser' });
    await mount(f);
    expect(text($('[data-drop-zone]'))).toContain('needs the desktop app');
    drop(new File([], 'DCIM'));
    expect(f.names()).not.toContain('startCheck');
    expect(text($('.message'))).toContain('Dropping a folder needs the desktop app');
    expect($('[data-path-form]')).not.toBeNull();
  });
});

describe('RAW+JPEG shots', () => {
  const rawPlusJpeg: Analysis = {
    ...analysis,
    skipped: [
      ...files.map((file) => ({ file: file.replace('.jpg', '.CR3'), code: 'same-shot' as const, reason: `the same shot as ${file} (RAW+JPEG): the JPEG was checked` })),
      { file: 'F9.jpg', code: 'unreadable' as const, reason: 'cannot be read: permission denied' },
    ],
    rawPlusJpeg: { checked: 'jpeg', shots: files.length },
  };

  it('shows the stored choice on the start screen and saves a new one', async () => {
    const f = fakeApi({ prefer: 'raw' });
    await mount(f);
    const checked = (): string | undefined => document.querySelector<HTMLInputElement>('[data-shot-preference] input:checked')?.value;
    expect(checked()).toBe('raw');
    const jpeg = document.querySelector<HTMLInputElement>('[data-shot-preference] input[value="jpeg"]')!;
    jpeg.checked = true;
    jpeg.dispatchEvent(new Event('change', { bubbles: true }));
    await tick();
    expect(f.calls.at(-1)).toEqual({ name: 'saveShotPreference', args: ['jpeg'] });
    expect(checked()).toBe('jpeg');
  });

  it('says which file of each shot was checked, lists only the files really left out, and checks the other on request', async () => {
    const f = fakeApi();
    const r = judge(rawPlusJpeg, defaultBudget);
    await withResults(f, r);
    expect(text($('[data-raw-plus-jpeg]'))).toContain('4 shots on the card as both RAW and JPEG: the JPEG of each was checked.');
    expect(text($('[data-skipped] summary'))).toBe('1 file not checked');
    expect([...document.querySelectorAll('[data-skip]')].map((n) => n.getAttribute('data-skip'))).toEqual(['unreadable']);
    buttonNamed('Check the RAW files instead').click();
    await tick();
    expect(f.calls.slice(-2)).toEqual([
      { name: 'saveShotPreference', args: ['raw'] },
      { name: 'startCheck', args: [{ folder: '/card/shoot' }] },
    ]);
  });
});

describe('progress', () => {
  it('shows phase, counts, time left and a progress bar, from events of its own check only', async () => {
    let resolveId: (id: number) => void = () => undefined;
    const f = fakeApi({ startCheck: () => new Promise<number>((r) => (resolveId = r)) });
    await mount(f);
    buttonNamed('Try the demo shoot').click();
    const bar = $('[role="progressbar"]')!;
    expect(bar).not.toBeNull();
    // An event before startCheck has answered is kept until its id is known.
    f.emitProgress({ checkId: 7, phase: 'frames', done: 3, total: 36, secondsLeft: null });
    resolveId(7);
    await tick();
    expect(text($('[data-count="frames"]'))).toBe('frames 3 / 36');
    expect(text($('.eta'))).toBe('working out the time left…');
    f.emitProgress({ checkId: 7, phase: 'frames', done: 12, total: 36, secondsLeft: 40, file: 'F12.jpg' });
    f.emitProgress({ checkId: 99, phase: 'frames', done: 30, total: 36, secondsLeft: 1 });
    expect(bar.getAttribute('aria-valuenow')).toBe('12');
    expect(bar.getAttribute('aria-valuemax')).toBe('36');
    expect(text($('.phase'))).toBe('Reading frames');
    expect(text($('[data-count="frames"]'))).toBe('frames 12 / 36');
    expect(text($('.eta'))).toBe('about 40 s left');
    expect(text($('.current-file'))).toBe('F12.jpg');
    f.emitProgress({ checkId: 7, phase: 'pairs', done: 4, total: 11, secondsLeft: 12 });
    expect(text($('.phase'))).toBe('Matching pairs');
    expect(text($('[data-count="frames"]'))).toBe('frames 12 / 36');
    expect(text($('[data-count="pairs"]'))).toBe('pairs 4 / 11');
    expect($('[role="progressbar"]')?.getAttribute('aria-valuenow')).toBe('4');
    f.emitDone({ checkId: 7, report, error: null, cancelled: false });
    expect($('[role="progressbar"]')).toBeNull();
    expect($('[data-summary]')).not.toBeNull();
    expect(document.querySelectorAll('[data-pair]').length).toBe(3);
  });

  it('shows results as they arrive, with the progress and Cancel above them until the check is done', async () => {
    const f = fakeApi();
    await mount(f);
    buttonNamed('Try the demo shoot').click();
    await tick();
    f.emitProgress({ checkId: 7, phase: 'pairs', done: 1, total: 3, secondsLeft: 5 });
    // The first pair measured: a report with one pair only.
    const partial = judge({ ...analysis, pairs: analysis.pairs.slice(0, 1) }, defaultBudget);
    f.emitPartial({ checkId: 7, report: partial });
    expect($('[data-summary]')).not.toBeNull();
    expect($('[role="progressbar"]')).not.toBeNull();
    expect(document.querySelector(`[data-pair="${K12}"]`)).not.toBeNull();
    expect(document.querySelector(`[data-pair="${K23}"]`)).toBeNull();
    expect(() => buttonNamed('Cancel')).not.toThrow();
    // Another check's results are not shown.
    f.emitPartial({ checkId: 99, report });
    expect(document.querySelector(`[data-pair="${K23}"]`)).toBeNull();
    f.emitProgress({ checkId: 7, phase: 'pairs', done: 2, total: 3, secondsLeft: 2 });
    expect($('[role="progressbar"]')?.getAttribute('aria-valuenow')).toBe('2');
    f.emitDone({ checkId: 7, report, error: null, cancelled: false });
    expect($('[role="progressbar"]')).toBeNull();
    expect(document.querySelectorAll('[data-pair]').length).toBe(3);
  });

  it('says "checking", never a verdict, while the check runs, however good the results so far look', async () => {
    const f = fakeApi();
    await mount(f);
    buttonNamed('Try the demo shoot').click();
    await tick();
    // The pairs measured so far are all ok: judged alone they would read as a complete sequence.
    const partial = judge({ ...analysis, pairs: analysis.pairs.slice(1, 2) }, defaultBudget);
    expect(partial.verdict).toBe('ok');
    f.emitPartial({ checkId: 7, report: partial });
    expect($('[data-summary] [data-verdict]')?.getAttribute('data-verdict')).toBe('checking');
    expect(text($('[data-summary]'))).not.toMatch(/looks complete/);
    f.emitDone({ checkId: 7, report, error: null, cancelled: false });
    expect($('[data-summary] [data-verdict]')?.getAttribute('data-verdict')).toBe(report.verdict);
  });

  it('leads from the plan and the overview row to the pair or the station, and keeps a plan button focused as fuller results arrive', async () => {
    const f = fakeApi();
    await mount(f);
    buttonNamed('Try the demo shoot').click();
    await tick();
    f.emitPartial({ checkId: 7, report });
    const gap = $<HTMLButtonElement>(`[data-plan] [data-open-pair="${K12}"]`)!;
    expect(gap).not.toBeNull();
    gap.focus();
    // A fuller report of the same check draws the summary again: the focus stays on the same button.
    f.emitPartial({ checkId: 7, report });
    expect(document.activeElement?.getAttribute('data-open-pair')).toBe(K12);
    expect(document.activeElement).not.toBe(gap);
    f.emitDone({ checkId: 7, report, error: null, cancelled: false });
    $<HTMLButtonElement>(`[data-plan] [data-open-pair="${K12}"]`)!.click();
    expect($('[data-detail]')?.getAttribute('data-pair')).toBe(K12);
    // A station's cell closes the detail and gives the focus to that station in the strip.
    $<HTMLButtonElement>('[data-overview-station="3"]')!.click();
    expect($('[data-detail]')).toBeNull();
    expect(document.activeElement?.getAttribute('data-station')).toBe('3');
    // The plan replaces the list of advice.
    expect($('[data-advice]')).toBeNull();
  });

  it('cancels the check and goes back to the start screen', async () => {
    const f = fakeApi();
    await mount(f);
    buttonNamed('Try the demo shoot').click();
    await tick();
    buttonNamed('Cancel').click();
    expect(f.calls.at(-1)).toEqual({ name: 'cancelCheck', args: [7] });
    expect(text($('.phase'))).toBe('Cancelling…');
    f.emitDone({ checkId: 7, report: null, error: null, cancelled: true });
    expect($('[data-start]')).not.toBeNull();
    expect(text($('.message'))).toBe('Check cancelled.');
  });

  it('shows a failed check\'s error on the start screen', async () => {
    const f = fakeApi();
    await mount(f);
    buttonNamed('Try the demo shoot').click();
    await tick();
    f.emitDone({ checkId: 7, report: null, error: 'folder not found', cancelled: false });
    expect(text($('.message'))).toBe('The check stopped: folder not found');
  });
});

describe('results and the budget panel', () => {
  it('shows the summary and the strip with the report\'s verdicts', async () => {
    const f = fakeApi();
    await withResults(f);
    expect($('[data-summary] [data-verdict]')?.getAttribute('data-verdict')).toBe('reshoot');
    expect([...document.querySelectorAll('[data-pair]')].map((n) => [n.getAttribute('data-pair'), n.getAttribute('data-verdict')])).toEqual([[K12, 'reshoot'], [K23, 'ok'], [K34, 'weak']]);
    expect(text($(`[data-pair="${K12}"]`))).toContain('15 %');
    expect($<HTMLImageElement>('[data-frame="F2.jpg"] img')?.getAttribute('src')).toBe('seamscout-frame://frames/7/F2.jpg?max=320');
  });

  it('re-judges at once when the minimum overlap changes, calling no API but saveBudget', async () => {
    const f = fakeApi();
    await withResults(f);
    const before = f.calls.length;
    expect($('[name="reshootOverlap"]')?.getAttribute('value')).toBe('20');
    type('reshootOverlap', '10');
    // At once, before any save: 15 % is now above "reshoot below 10 %" but still under "weak below 30 %".
    expect($(`[data-pair="${K12}"]`)?.getAttribute('data-verdict')).toBe('weak');
    expect(text($(`[data-pair="${K12}"] .badge`))).toBe('weak');
    expect($('[data-summary] [data-verdict]')?.getAttribute('data-verdict')).toBe('weak');
    type('weakOverlap', '50');
    expect($(`[data-pair="${K23}"]`)?.getAttribute('data-verdict')).toBe('weak');
    await tick(5);
    const after = f.calls.slice(before);
    expect(after.map((c) => c.name)).toEqual(['saveBudget']);
    expect(after[0].args[0]).toEqual({ ...defaultBudget, reshootOverlap: 0.1, weakOverlap: 0.5 });
  });

  it('shows the command\'s message for the same mistake beside a bad field, in the panel\'s words and percent, and keeps the last good budget', async () => {
    const f = fakeApi();
    await withResults(f);
    const before = f.calls.length;
    type('weakOverlap', '150');
    const error = $('[data-error-for="weakOverlap"]')!;
    expect(error.hidden).toBe(false);
    expect(text(error)).toBe('Expected a percentage from 0 to 100 for the weak below overlap but received 150');
    expect($('[name="weakOverlap"]')?.getAttribute('aria-invalid')).toBe('true');
    expect($(`[data-pair="${K34}"]`)?.getAttribute('data-verdict')).toBe('weak');
    type('weakOverlap', '30');
    expect(error.hidden).toBe(true);
    type('minInliers', 'many');
    expect(text($('[data-error-for="minInliers"]'))).toBe('Expected a number from 0 to 10000 for the fewest inliers but received many');
    // A share typed where a percentage belongs: refused with the percentage it likely meant, as the command does.
    type('weakOverlap', '0.3');
    expect(text(error)).toBe('Expected a percentage from 0 to 100 for the weak below overlap but received 0.3 (did you mean 30?)');
    type('weakOverlap', '30');
    type('minInliers', '20');
    type('reshootOverlap', '40');
    expect(text($('[data-error-for="reshootOverlap"]'))).toBe('Expected the reshoot below overlap (40 %) not above the weak below overlap (30 %)');
    expect($(`[data-pair="${K12}"]`)?.getAttribute('data-verdict')).toBe('reshoot');
    await tick(5);
    // The only good edits restored the defaults; nothing else was asked of main.
    expect(f.calls.slice(before).map((c) => c.name).every((n) => n === 'saveBudget')).toBe(true);
    expect(f.calls.filter((c) => c.name === 'saveBudget').every((c) => JSON.stringify(c.args[0]) === JSON.stringify(defaultBudget))).toBe(true);
  });

  it('accepts a decimal comma, and restores the defaults with one button', async () => {
    const f = fakeApi();
    await withResults(f);
    type('maxEvDiff', '0,05');
    expect($(`[data-pair="${K12}"] [data-flag="exposure-jump"]`)).not.toBeNull();
    buttonNamed('Defaults').click();
    expect($<HTMLInputElement>('[name="maxEvDiff"]')?.value).toBe('0.5');
    expect($(`[data-pair="${K12}"] [data-flag="exposure-jump"]`)).toBeNull();
    await tick(5);
    expect(f.calls.filter((c) => c.name === 'saveBudget').at(-1)?.args[0]).toEqual(defaultBudget);
  });

  it('declares a full sphere with its checkbox, saved with the budget, kept through other edits, shown when loaded', async () => {
    const f = fakeApi();
    await withResults(f);
    const box = $<HTMLInputElement>('input[name="fullSphere"]')!;
    expect(box.checked).toBe(false);
    box.checked = true;
    box.dispatchEvent(new Event('change', { bubbles: true }));
    type('minInliers', '25');
    await tick(5);
    expect(f.calls.filter((c) => c.name === 'saveBudget').at(-1)?.args[0]).toEqual({ ...defaultBudget, minInliers: 25, fullSphere: true });
    buttonNamed('Defaults').click();
    expect(box.checked).toBe(false);
    app?.destroy();
    app = null;
    document.body.replaceChildren(root);
    await withResults(fakeApi({ budget: { ...defaultBudget, fullSphere: true } }));
    expect($<HTMLInputElement>('input[name="fullSphere"]')?.checked).toBe(true);
  });

  it('loads the stored budget at start and judges the report by it', async () => {
    const f = fakeApi({ budget: { ...defaultBudget, reshootOverlap: 0.1, weakOverlap: 0.14 } });
    await withResults(f);
    expect($<HTMLInputElement>('[name="reshootOverlap"]')?.value).toBe('10');
    expect($<HTMLInputElement>('[name="weakOverlap"]')?.value).toBe('14');
    expect($(`[data-pair="${K12}"]`)?.getAttribute('data-verdict')).toBe('ok');
    expect($('[data-summary] [data-verdict]')?.getAttribute('data-verdict')).toBe('ok');
  });
});

describe('keyboard and the pair detail', () => {
  it('moves between pairs with the arrows, opens with Enter and goes back with Escape', async () => {
    const f = fakeApi();
    await withResults(f);
    press('ArrowRight');
    expect(document.activeElement?.getAttribute('data-pair')).toBe(K12);
    expect($(`[data-pair="${K12}"]`)?.classList.contains('is-selected')).toBe(true);
    press('ArrowRight');
    press('ArrowRight');
    press('ArrowRight');
    expect(document.activeElement?.getAttribute('data-pair')).toBe(K34);
    press('ArrowLeft');
    expect(document.activeElement?.getAttribute('data-pair')).toBe(K23);
    expect(document.querySelectorAll('.is-selected').length).toBe(1);

    press('Enter');
    expect(document.activeElement?.classList.contains('back')).toBe(true);
    const detail = $('[data-detail]')!;
    expect(detail.getAttribute('data-pair')).toBe(K23);
    for (const m of ['overlap', 'inliers', 'matches', 'evDiff', 'rmsError']) expect($(`[data-detail] [data-measure="${m}"]`)).not.toBeNull();
    expect(text($('[data-measure="overlap"] .numeral'))).toBe('45 %');
    expect(f.calls.at(-1)).toEqual({ name: 'tiePoints', args: [7, 'F2.jpg', 'F3.jpg'] });
    await tick();
    expect(document.querySelectorAll('[data-detail] [data-tie]').length).toBe(3);
    // Redrawn with its tie points, the detail keeps focus on its Back button.
    expect(document.activeElement?.classList.contains('back')).toBe(true);
    expect($('[data-detail] .pair-canvas image')?.getAttribute('href')).toBe('seamscout-frame://frames/7/F2.jpg?max=1200');

    press('Escape');
    expect($('[data-detail]')).toBeNull();
    expect(document.activeElement?.getAttribute('data-pair')).toBe(K23);
    press('Escape');
    expect($('[data-start]')).not.toBeNull();
    buttonNamed('Back to the results').click();
    expect($('[data-summary]')).not.toBeNull();
  });

  it('steps to the next pair inside the detail, and loads each pair\'s tie points once', async () => {
    const f = fakeApi();
    await withResults(f);
    ($(`[data-pair="${K12}"]`) as HTMLElement).click();
    expect($('[data-detail]')?.getAttribute('data-pair')).toBe(K12);
    press('ArrowRight');
    expect($('[data-detail]')?.getAttribute('data-pair')).toBe(K23);
    press('ArrowLeft');
    await tick();
    expect(f.calls.filter((c) => c.name === 'tiePoints').map((c) => c.args.slice(1))).toEqual([['F1.jpg', 'F2.jpg'], ['F2.jpg', 'F3.jpg']]);
    buttonNamed('Hide lines').click();
    expect(document.querySelectorAll('[data-detail] .tie-line').length).toBe(0);
    expect(document.querySelectorAll('[data-detail] [data-tie]').length).toBe(3);
    buttonNamed('Back to the strip (Esc)').click();
    expect($('[data-detail]')).toBeNull();
    expect(document.activeElement?.getAttribute('data-pair')).toBe(K12);
  });

  it('leaves arrows and Escape to the budget fields while typing', async () => {
    const f = fakeApi();
    await withResults(f);
    const input = $<HTMLInputElement>('[name="minInliers"]')!;
    input.focus();
    press('ArrowRight');
    expect(document.querySelectorAll('.is-selected').length).toBe(0);
    press('Escape');
    expect($('[data-summary]')).not.toBeNull();
  });

  it('updates an open detail when the budget changes', async () => {
    const f = fakeApi();
    await withResults(f);
    ($(`[data-pair="${K12}"]`) as HTMLElement).click();
    expect($('[data-detail]')?.getAttribute('data-verdict')).toBe('reshoot');
    type('reshootOverlap', '10');
    expect($('[data-detail]')?.getAttribute('data-verdict')).toBe('weak');
    expect(text($('[data-detail] [data-measure="overlap"] .limit'))).toBe('weak below 30 %, reshoot below 10 %');
  });
});

describe('export and theme', () => {
  it('exports each format with the current budget and shows the path written', async () => {
    const f = fakeApi();
    await withResults(f);
    type('minInliers', '50');
    ($('[data-export="graphml"]') as HTMLElement).click();
    expect(f.calls.at(-1)).toEqual({ name: 'exportReport', args: [7, 'graphml', { ...defaultBudget, minInliers: 50 }] });
    await tick();
    expect(text($('[data-export-result]'))).toBe('Saved to /home/me/shoot.graphml');
    expect([...document.querySelectorAll('[data-export]')].map((b) => [b.getAttribute('data-export'), text(b)])).toEqual([
      ['json', 'Export report (JSON)'], ['graphml', 'Export pair graph (GraphML)'], ['csv', 'Export pairs (CSV)'], ['dot', 'Export graph (DOT)'], ['coverage', 'Export coverage map (SVG)'],
    ]);
  });

  it('says where an export went: the full path from the desktop save dialog, the file name and the downloads folder in a browser', async () => {
    const f = fakeApi({ shell: 'browser', exportResult: () => Promise.resolve('shoot.csv') });
    await withResults(f);
    ($('[data-export="csv"]') as HTMLElement).click();
    await tick();
    expect(text($('[data-export-result]'))).toBe("Downloaded as shoot.csv: look in your browser's downloads folder.");
  });

  it('shows an export\'s error or its cancelling', async () => {
    let answer: () => Promise<string | null> = () => Promise.reject(new Error('disk full'));
    const f = fakeApi({ exportResult: () => answer() });
    await withResults(f);
    ($('[data-export="csv"]') as HTMLElement).click();
    await tick();
    expect(text($('[data-export-result]'))).toBe('Export failed: disk full');
    answer = () => Promise.resolve(null);
    ($('[data-export="dot"]') as HTMLElement).click();
    await tick();
    expect(text($('[data-export-result]'))).toBe('Export cancelled.');
  });

  it('toggles the theme and remembers it', async () => {
    const f = fakeApi();
    await mount(f);
    const toggle = $('[data-theme-toggle]') as HTMLElement;
    expect(text(toggle)).toBe('Dark theme');
    toggle.click();
    expect(document.documentElement.dataset.theme).toBe('dark');
    expect(storage.get('seamscout.theme')).toBe('dark');
    expect(text(toggle)).toBe('Light theme');
    app?.destroy();
    delete document.documentElement.dataset.theme;
    app = mountApp(root, f.api, { storage: fakeStorage });
    expect(document.documentElement.dataset.theme).toBe('dark');
  });

  it('lets go of its listeners when destroyed', async () => {
    const f = fakeApi();
    await mount(f);
    expect(f.listeners()).toBe(3);
    app?.destroy();
    app = null;
    expect(f.listeners()).toBe(0);
    expect(root.childElementCount).toBe(0);
  });
});

describe('hooks for the end-to-end tests', () => {
  it('names each pair by one element only, in the strip or, while open, in the detail', async () => {
    const f = fakeApi();
    await withResults(f);
    expect(document.querySelectorAll(`[data-pair="${K12}"]`).length).toBe(1);
    expect(text($(`[data-pair="${K12}"]`))).toContain('15 % overlap 210 inliers +0.1 EV reshoot');
    const thumb = $('[data-frame="F2.jpg"] img');
    ($(`[data-pair="${K12}"]`) as HTMLElement).click();
    expect([...document.querySelectorAll(`[data-pair="${K12}"]`)].map((n) => n.hasAttribute('data-detail'))).toEqual([true]);
    expect(document.querySelectorAll('[data-frame]').length).toBe(0);
    press('Escape');
    expect(document.querySelectorAll(`[data-pair="${K12}"]`).length).toBe(1);
    // The thumbnails come back as the same elements, so they do not load again.
    expect($('[data-frame="F2.jpg"] img')).toBe(thumb);
  });
});

describe('a card of several sequences', () => {
  // Three sequences (reshoot, ok, weak) and two single shots: see test/helpers/card-analysis.ts.
  const card: Report = judge(cardAnalysis, defaultBudget);
  const sequenceOf = (n: Element): string | null => n.getAttribute('data-sequence');

  it('opens on the list, not on a strip, with the card summed up above it', async () => {
    const f = fakeApi();
    await withResults(f, card);
    expect([...document.querySelectorAll('[data-sequence]')].map(sequenceOf)).toEqual(['1', '2', '3']);
    expect(document.querySelectorAll('[data-pair], [data-frame], .coverage, [data-back-to-list]').length).toBe(0);
    expect($('[data-summary] [data-verdict]')?.getAttribute('data-verdict')).toBe('reshoot');
    expect(text($('[data-summary] .overall-words'))).toBe('3 sequences: 1 ok, 1 weak, 1 to reshoot; 2 single shots.');
    expect(document.querySelectorAll('[data-single-shot]').length).toBe(2);
    expect($<HTMLImageElement>('[data-sequence="2"] img')?.getAttribute('src')).toBe('seamscout-frame://frames/7/S2_01.jpg?max=320');
    expect($('[data-export="json"]')).not.toBeNull();
    expect($('[name="weakOverlap"]')).not.toBeNull();
  });

  it('walks the list with the arrows, opens a sequence with Enter, and comes back with Escape', async () => {
    const f = fakeApi();
    await withResults(f, card);
    press('ArrowDown');
    expect(sequenceOf(document.activeElement!)).toBe('1');
    press('ArrowDown');
    press('ArrowDown');
    press('ArrowDown');
    expect(sequenceOf(document.activeElement!)).toBe('3');
    press('ArrowUp');
    expect(sequenceOf(document.activeElement!)).toBe('2');
    press('ArrowRight');
    expect(sequenceOf(document.activeElement!)).toBe('3');
    expect([...document.querySelectorAll('.is-selected')].map(sequenceOf)).toEqual(['3']);

    press('Enter');
    // The sequence alone: its strip, its verdict, and the way back focused.
    expect(document.activeElement?.hasAttribute('data-back-to-list')).toBe(true);
    expect(text($('[data-sequence-bar] h2'))).toBe('Sequence 3 of 3: S3_01.jpg to S3_03.jpg');
    expect($('[data-sequence]')).toBeNull();
    expect([...document.querySelectorAll('[data-pair]')].map((n) => [n.getAttribute('data-pair'), n.getAttribute('data-verdict')])).toEqual([['S3_01.jpg|S3_02.jpg', 'weak'], ['S3_02.jpg|S3_03.jpg', 'ok']]);
    expect([...document.querySelectorAll('[data-station]')].map((n) => n.getAttribute('aria-label'))).toEqual(['Station 1, 1 frame', 'Station 2, 1 frame', 'Station 3, 1 frame']);
    expect($('[data-summary] [data-verdict]')?.getAttribute('data-verdict')).toBe('weak');
    expect(text($('[data-stat="frames"] dd'))).toBe('3');

    // Inside, the strip's keys work as before; Escape steps back one level at a time.
    press('ArrowRight');
    expect(document.activeElement?.getAttribute('data-pair')).toBe('S3_01.jpg|S3_02.jpg');
    press('Enter');
    expect($('[data-detail]')?.getAttribute('data-pair')).toBe('S3_01.jpg|S3_02.jpg');
    expect(f.calls.at(-1)).toEqual({ name: 'tiePoints', args: [7, 'S3_01.jpg', 'S3_02.jpg'] });
    press('Escape');
    expect(document.activeElement?.getAttribute('data-pair')).toBe('S3_01.jpg|S3_02.jpg');
    press('Escape');
    expect(sequenceOf(document.activeElement!)).toBe('3');
    expect(document.querySelectorAll('[data-pair]').length).toBe(0);
    press('Escape');
    expect($('[data-choose-folder]')).not.toBeNull();
  });

  it('opens a sequence on click, goes back with "All sequences", and re-judges the whole card when the budget changes', async () => {
    const f = fakeApi();
    await withResults(f, card);
    ($('[data-sequence="2"]') as HTMLElement).click();
    expect($('[data-pair="S2_01.jpg|S2_04.jpg"]')?.getAttribute('data-verdict')).toBe('ok');
    type('weakOverlap', '50');
    // Re-judged at once: the open sequence's 45 % pair is now weak, and so is the sequence.
    expect($('[data-pair="S2_01.jpg|S2_04.jpg"]')?.getAttribute('data-verdict')).toBe('weak');
    expect($('[data-summary] [data-verdict]')?.getAttribute('data-verdict')).toBe('weak');
    buttonNamed('All sequences').click();
    expect(sequenceOf(document.activeElement!)).toBe('2');
    expect([...document.querySelectorAll('[data-sequence]')].map((n) => n.getAttribute('data-verdict'))).toEqual(['reshoot', 'weak', 'weak']);
    await tick(5);
    expect(f.calls.filter((c) => c.name === 'saveBudget').at(-1)?.args[0]).toEqual({ ...defaultBudget, weakOverlap: 0.5 });
  });

  it('keeps an opened sequence when a fuller report of the same check has it, and goes back to the list when not', async () => {
    const f = fakeApi();
    await mount(f);
    buttonNamed('Try the demo shoot').click();
    await tick();
    f.emitPartial({ checkId: 7, report: card });
    await tick();
    ($('[data-sequence="3"]') as HTMLElement).click();
    f.emitPartial({ checkId: 7, report: card });
    expect($('[data-sequence-bar]')?.getAttribute('data-sequence-bar')).toBe('3');
    const twoOnly = judge({ ...cardAnalysis, sequences: cardAnalysis.sequences!.slice(0, 2) }, defaultBudget);
    f.emitDone({ checkId: 7, report: twoOnly, error: null, cancelled: false });
    await tick();
    expect($('[data-sequence-bar]')).toBeNull();
    expect([...document.querySelectorAll('[data-sequence]')].map(sequenceOf)).toEqual(['1', '2']);
  });

  it('looks and behaves as before with one sequence on the card', async () => {
    const f = fakeApi();
    await withResults(f);
    const before = root.innerHTML;
    app?.destroy();
    const g = fakeApi();
    const one: Report = judge({ ...analysis, sequences: [{ index: 1, splitBy: [], frames: analysis.frames, stations: analysis.stations, pairs: analysis.pairs, sweepDeg: null, geometry: null }], singleShots: [] }, defaultBudget);
    await withResults(g, one);
    expect(root.innerHTML).toBe(before);
    expect($('[data-sequence], [data-back-to-list]')).toBeNull();
    press('Escape');
    expect($('[data-choose-folder]')).not.toBeNull();
  });
});

describe('start screen, settings and reloading', () => {
  it('gives a neutral card folder as the example, and "Open folder…" one full stop wherever it is named', async () => {
    const f = fakeApi({ shell: 'browser' });
    await mount(f);
    ($('[data-choose-folder]') as HTMLElement).click();
    await tick();
    expect($<HTMLInputElement>('input[name="folder"]')?.placeholder).toBe('/media/card/DCIM/100CAMERA');
    const drop = new Event('drop', { bubbles: true, cancelable: true });
    Object.defineProperty(drop, 'dataTransfer', { value: { types: ['Files'], files: [new File([], 'DCIM')], dropEffect: 'none' } });
    window.dispatchEvent(drop);
    expect(text(root)).toContain('Open folder…');
    expect(text(root)).not.toMatch(/…\.|\.\.\.\./);
  });

  it('a page loaded again shows the host\'s finished check instead of starting one', async () => {
    const f = fakeApi({ latest: { checkId: 4, folder: '/card/shoot', demo: false, running: false, report } });
    await mount(f);
    expect(f.names()).not.toContain('startCheck');
    expect($('[data-summary] [data-verdict]')?.getAttribute('data-verdict')).toBe('reshoot');
    expect($<HTMLImageElement>('[data-frame="F2.jpg"] img')?.getAttribute('src')).toBe('seamscout-frame://frames/4/F2.jpg?max=320');
  });

  it('a page loaded again follows the host\'s running check to its end, and can cancel it', async () => {
    const f = fakeApi({ latest: { checkId: 5, folder: '/card/shoot', demo: false, running: true, report: null } });
    await mount(f);
    expect(f.names()).not.toContain('startCheck');
    expect($('[role="progressbar"]')).not.toBeNull();
    expect(text($('[data-progress] h2'))).toBe('Checking shoot');
    f.emitProgress({ checkId: 5, phase: 'frames', done: 2, total: 4, secondsLeft: 3 });
    expect(text($('[data-count="frames"]'))).toBe('frames 2 / 4');
    buttonNamed('Cancel').click();
    expect(f.calls.at(-1)).toEqual({ name: 'cancelCheck', args: [5] });
    f.emitDone({ checkId: 5, report, error: null, cancelled: false });
    expect($('[data-summary] [data-verdict]')?.getAttribute('data-verdict')).toBe('reshoot');
  });

  it('shows the demo shoot being written on the start screen, with its estimate, then the check\'s progress', async () => {
    const f = fakeApi();
    await mount(f);
    buttonNamed('Try the demo shoot').click();
    await tick();
    f.emitProgress({ checkId: 7, phase: 'demo', done: 0, total: 35, secondsLeft: 27.4 });
    expect($('[data-start]')).not.toBeNull();
    expect(text($('[data-demo-writing] .phase'))).toBe('Writing the demo shoot (about 27 s)');
    expect($<HTMLButtonElement>('[data-demo]')?.disabled).toBe(true);
    f.emitProgress({ checkId: 7, phase: 'demo', done: 12, total: 35, secondsLeft: 15, file: 'SSC_0012.jpg' });
    // The estimate stays as it was said; the time left follows the frames.
    expect(text($('[data-demo-writing] .phase'))).toBe('Writing the demo shoot (about 27 s)');
    expect(text($('[data-demo-writing] .eta'))).toBe('12 of 35 frames, about 15 s left');
    expect($('[data-demo-writing] [role="progressbar"]')?.getAttribute('aria-valuenow')).toBe('12');
    f.emitProgress({ checkId: 7, phase: 'frames', done: 1, total: 35, secondsLeft: null });
    expect($('[data-demo-writing]')).toBeNull();
    expect(text($('[data-count="frames"]'))).toBe('frames 1 / 35');
  });

  it('offers the RAW+JPEG choice in the budget panel too, saved with the settings and shown on the start screen', async () => {
    const f = fakeApi({ prefer: 'jpeg' });
    await withResults(f);
    const inPanel = (v: string): HTMLInputElement => document.querySelector<HTMLInputElement>(`[data-budget] [data-panel-shot-preference] input[value="${v}"]`)!;
    expect(inPanel('jpeg').checked).toBe(true);
    inPanel('raw').checked = true;
    inPanel('raw').dispatchEvent(new Event('change', { bubbles: true }));
    await tick();
    expect(f.calls.at(-1)).toEqual({ name: 'saveShotPreference', args: ['raw'] });
    buttonNamed('New check').click();
    expect(document.querySelector<HTMLInputElement>('[data-shot-preference] input:checked')?.value).toBe('raw');
    // And the other way: chosen on the start screen, the panel shows it.
    const jpeg = document.querySelector<HTMLInputElement>('[data-shot-preference] input[value="jpeg"]')!;
    jpeg.checked = true;
    jpeg.dispatchEvent(new Event('change', { bubbles: true }));
    await tick();
    expect(f.calls.at(-1)).toEqual({ name: 'saveShotPreference', args: ['jpeg'] });
    buttonNamed('Back to the results').click();
    expect(inPanel('jpeg').checked).toBe(true);
  });

  it('says where a saved budget went and that the command uses it from now on', async () => {
    const f = fakeApi({ settings: { path: '/home/me/.config/seamscout/settings.json', note: null } });
    await withResults(f);
    type('minInliers', '30');
    await tick(5);
    expect(f.calls.filter((c) => c.name === 'saveBudget').length).toBe(1);
    expect(text($('[data-budget-status]'))).toBe('Saved in /home/me/.config/seamscout/settings.json: the command (seamscout check) uses these values from now on too.');
  });

  it('shows how the stored settings were read when there is something to say', async () => {
    const note = 'The settings file /s.json gives overlaps as shares, as earlier versions wrote them (weakOverlap 0.35): read as weakOverlap 35 %.';
    await withResults(fakeApi({ settings: { path: '/s.json', note } }));
    expect(text($('[data-budget-status]'))).toBe(note);
  });
});
