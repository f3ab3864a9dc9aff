// The one contract between the page (src/renderer) and the Node side (src/main), typed once for
// both shells: the methods with their arguments and results, the channel names, the export formats
// and the RAW+JPEG choice. The preload bridge (Electron) and the browser host's client implement it
// for the page; main's handler table serves it. Pure: core types only, no Node, Electron or DOM.
import type { MatchBudget, RawPlusJpeg, Report } from '../core/sequence/report.js';

/** Progress of a running check, as it streams. */
export interface CheckProgressEvent {
  readonly checkId: number;
  /** 'demo' while the demo shoot is written (on first use, before its check starts). */
  readonly phase: 'demo' | 'frames' | 'pairs';
  readonly done: number;
  readonly total: number;
  readonly file?: string;
  /** Estimated seconds left, or null while unknown. */
  readonly secondsLeft: number | null;
}

/** A finished (or failed, or cancelled) check. */
export interface CheckDoneEvent {
  readonly checkId: number;
  readonly report: Report | null;
  readonly error: string | null;
  readonly cancelled: boolean;
}

/** The results so far of a running check: every frame and station, the pairs matched yet. */
export interface CheckPartialEvent {
  readonly checkId: number;
  readonly report: Report;
}

/** What the page can export: the report, the pair graph three ways, and the coverage map (SVG). */
export const exportFormats = ['json', 'graphml', 'csv', 'dot', 'coverage'] as const;
export type ExportFormat = (typeof exportFormats)[number];

export function expectExportFormat(format: unknown): ExportFormat {
  if (!(exportFormats as readonly unknown[]).includes(format)) throw new TypeError(`Expected one of ${exportFormats.join(', ')} for format but received ${String(format)}`);
  return format as ExportFormat;
}

/** Which file of a RAW+JPEG shot (one shutter press written twice) a check reads: the report's own field. */
export type ShotPreference = RawPlusJpeg['checked'];
export const shotPreferences: readonly ShotPreference[] = ['jpeg', 'raw'];

export function isShotPreference(prefer: unknown): prefer is ShotPreference {
  return (shotPreferences as readonly unknown[]).includes(prefer);
}

export function expectShotPreference(prefer: unknown): ShotPreference {
  if (!isShotPreference(prefer)) throw new TypeError(`Expected jpeg or raw for the RAW+JPEG preference but received ${String(prefer)}`);
  return prefer;
}

/** The latest check the host holds: a page loaded again shows it instead of starting one. */
export interface LatestCheck {
  readonly checkId: number;
  readonly folder: string;
  readonly demo: boolean;
  readonly running: boolean;
  /** Its report, or the results so far while it runs (null before any). */
  readonly report: Report | null;
}

/** The settings file the app keeps its budget and RAW+JPEG choice in (the command reads the same file), and what to say about how it was read. */
export interface SettingsInfo {
  readonly path: string;
  /** How an unusual file was read (overlaps as shares), or why it could not be; null when all is well. */
  readonly note: string | null;
}

export interface HostInfo {
  /** 'desktop' inside the Electron window, 'browser' from the local browser host. */
  readonly shell: 'desktop' | 'browser';
  readonly version: string;
  /** What to open first: the folder given on the command line, the demo shoot, or nothing (start screen). Given only until a check starts. */
  readonly initialTarget?: { folder: string } | { demo: true } | null;
  /** The check this host ran last, when it still has it: what a reloaded page shows. */
  readonly latest?: LatestCheck | null;
}

export interface SeamscoutApi {
  hostInfo(): Promise<HostInfo>;
  /** Native folder dialog (desktop); null when cancelled or where there is none. */
  chooseFolder(): Promise<string | null>;
  recentFolders(): Promise<string[]>;
  /** Starts a check of a folder (absolute path) or of the demo shoot; returns its id. */
  startCheck(target: { folder: string } | { demo: true }): Promise<number>;
  cancelCheck(checkId: number): Promise<void>;
  /** The budget stored between runs. */
  loadBudget(): Promise<MatchBudget>;
  saveBudget(budget: MatchBudget): Promise<MatchBudget>;
  /** Where the budget is saved, and anything to say about how the stored one was read. */
  settingsInfo(): Promise<SettingsInfo>;
  /** Which file of a RAW+JPEG shot checks read, stored between runs (the next check uses it). */
  loadShotPreference(): Promise<ShotPreference>;
  saveShotPreference(prefer: ShotPreference): Promise<ShotPreference>;
  /** Writes an export of the report; asks where (desktop: save dialog; browser: a download). Returns the path or name written, or null when cancelled. */
  exportReport(checkId: number, format: ExportFormat, budget: MatchBudget): Promise<string | null>;
  /** Inlier correspondences of a pair of the check, full-resolution px: xa, ya, xb, yb per point. */
  tiePoints(checkId: number, a: string, b: string): Promise<number[]>;
  /** URL of a frame of the opened folder at display size; only files of the current check resolve. */
  frameUrl(checkId: number, file: string, maxSide: number): string;
  onProgress(listener: (e: CheckProgressEvent) => void): () => void;
  onDone(listener: (e: CheckDoneEvent) => void): () => void;
  /** Results as they arrive, before the check is done. */
  onPartial(listener: (e: CheckPartialEvent) => void): () => void;
}

/**
 * The page's calls that main answers, each with its channel name on the desktop bridge (all under
 * our own prefix); the browser host answers the same names as POST /api/<name>.
 */
export const callChannels = {
  hostInfo: 'seamscout:host-info',
  chooseFolder: 'seamscout:choose-folder',
  recentFolders: 'seamscout:recent-folders',
  startCheck: 'seamscout:start-check',
  cancelCheck: 'seamscout:cancel-check',
  loadBudget: 'seamscout:load-budget',
  saveBudget: 'seamscout:save-budget',
  settingsInfo: 'seamscout:settings-info',
  loadShotPreference: 'seamscout:load-shot-preference',
  saveShotPreference: 'seamscout:save-shot-preference',
  exportReport: 'seamscout:export-report',
  tiePoints: 'seamscout:tie-points',
} as const satisfies { readonly [K in keyof SeamscoutApi]?: string };

/** Events main sends to the page, by channel name on the desktop bridge (event type on the browser host's stream). */
export const eventChannels = {
  progress: 'seamscout:on-progress',
  done: 'seamscout:on-done',
  partial: 'seamscout:on-partial',
} as const;

/** Every channel name of the desktop bridge. */
export const channels = { ...callChannels, ...eventChannels } as const;

export type ApiCallName = keyof typeof callChannels;

/** An export's text and the file name to suggest for it. */
export interface ExportContent {
  readonly text: string;
  readonly name: string;
}

/**
 * Everything main answers: the page's calls, and the browser's export, which hands the text to the
 * page to download (there is no save dialog in a browser) and has no desktop channel.
 */
export type HostCalls = Pick<SeamscoutApi, ApiCallName> & {
  exportContent(checkId: number, format: ExportFormat, budget: MatchBudget): Promise<ExportContent>;
};
export type HostCallName = keyof HostCalls;

export const frameProtocol = 'seamscout-frame';
