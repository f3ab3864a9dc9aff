// One handler table for both transports: the desktop bridge (ipcMain.handle) and the browser host's
// HTTP routes call the same functions, which check every argument the page sends before anything
// is read, started or written.
import { homedir } from 'node:os';
import { isAbsolute, join } from 'node:path';
import type { ExportContent, HostCallName, HostCalls, HostInfo } from '../common/api.js';
import { expectExportFormat, expectShotPreference } from '../common/api.js';
import type { AppService } from './app-service.js';
import { expectBudget, expectBudgetFields, frameSides } from './app-service.js';
import { readRecentFolders } from './recent-folders.js';
import { loadStoredBudget, loadStoredPreference, storeBudget, storedSettingsInfo, storePreference } from './settings-store.js';

/** One call's handler: the arguments as the transport received them, in order. */
export type Handler<K extends HostCallName> = (args: readonly unknown[]) => Promise<Awaited<ReturnType<HostCalls[K]>>>;
export type HandlerTable = { readonly [K in HostCallName]: Handler<K> };

/** What differs between the shells. */
export interface ShellHooks {
  readonly shell: HostInfo['shell'];
  readonly version: string;
  /** What the page opens first, until a check starts. */
  readonly initialTarget: NonNullable<HostInfo['initialTarget']> | null;
  /** The desktop's folder dialog; null when cancelled or where there is none. */
  chooseFolder(): Promise<string | null>;
  /**
   * The desktop's save: asks where (the dialog asks before replacing a file) and writes, returning
   * the path or null when cancelled. The browser has none: its page downloads exportContent.
   */
  saveExport?(checkId: number, content: ExportContent): Promise<string | null>;
}

/** The id of a check as the page holds it. */
export function expectCheckId(id: unknown): number {
  if (typeof id !== 'number' || !Number.isSafeInteger(id) || id < 1) throw new TypeError(`Expected a check id (a whole number from 1) for checkId but received ${JSON.stringify(id) ?? String(id)}`);
  return id;
}

function expectText(value: unknown, name: string): string {
  if (typeof value !== 'string') throw new TypeError(`Expected a file name for ${name} but received ${JSON.stringify(value) ?? String(value)}`);
  return value;
}

/**
 * What to check: the demo shoot, or a folder by its full path. A path typed into the page may start
 * with the home folder's short form, read as the shell does; anything else relative is said plainly.
 */
export function expectCheckTarget(target: unknown): { folder: string } | { demo: true } {
  const t = (typeof target === 'object' && target !== null ? target : {}) as { folder?: unknown; demo?: unknown };
  if (t.demo === true) return { demo: true };
  if (typeof t.folder === 'string') {
    if (isAbsolute(t.folder)) return { folder: t.folder };
    if (/^~(\/|$)/.test(t.folder)) return { folder: join(homedir(), t.folder.slice(1)) };
    throw new TypeError(`Expected the folder's full path, such as /media/card/DCIM/100CAMERA, but received ${t.folder}`);
  }
  throw new TypeError('Expected { folder: <absolute path> } or { demo: true } for startCheck');
}

/** The table both transports serve, over one service. */
export function createHandlers(service: AppService, hooks: ShellHooks): HandlerTable {
  const exportContent = async ([id, format, budget]: readonly unknown[]): Promise<ExportContent> => {
    const checkId = expectCheckId(id);
    const checked = { format: expectExportFormat(format), budget: expectBudget(budget) };
    return service.exportReport(checkId, checked.format, checked.budget);
  };
  return {
    // A page loaded again gets the check it started, never its first target again.
    hostInfo: async () => ({ shell: hooks.shell, version: hooks.version, initialTarget: service.hasStarted ? null : hooks.initialTarget, latest: service.latest() }),
    chooseFolder: () => hooks.chooseFolder(),
    recentFolders: () => readRecentFolders(),
    startCheck: async ([target]) => service.startCheck(expectCheckTarget(target)),
    cancelCheck: async ([id]) => service.cancelCheck(expectCheckId(id)),
    loadBudget: () => loadStoredBudget(),
    // A budget left out is the default one; the fields given are checked as the budget panel names them.
    saveBudget: async ([budget]) => storeBudget(expectBudgetFields(budget ?? {})),
    settingsInfo: () => storedSettingsInfo(),
    loadShotPreference: () => loadStoredPreference(),
    saveShotPreference: async ([prefer]) => storePreference(expectShotPreference(prefer)),
    exportContent,
    exportReport: async (args) => {
      // Everything is checked, and the export made, before the dialog opens.
      const content = await exportContent(args);
      if (!hooks.saveExport) throw new TypeError('Expected the desktop window for exportReport: a browser downloads exportContent');
      return hooks.saveExport(expectCheckId(args[0]), content);
    },
    tiePoints: async ([id, a, b]) => service.tiePoints(expectCheckId(id), expectText(a, 'a'), expectText(b, 'b')),
  };
}

/** A frame's address as a transport received it: "<check id>/<file name, percent-encoded>" and the `max` query value. */
export interface FrameAddress {
  readonly path: string;
  readonly max: string | null;
}

export interface FrameRequest {
  readonly checkId: number;
  readonly file: string;
  readonly maxSide: number;
}

/** What either transport answers for a frame: the picture, or why not in words. */
export type FrameAnswer = { readonly status: 200; readonly image: Buffer } | { readonly status: 400 | 404 | 503; readonly text: string };

/** Runs a render, or returns null at once when too many are under way (the browser host bounds them). */
export type FrameRenderGate = (render: () => Promise<Buffer | null>) => Promise<Buffer | null> | null;

const quoted = (v: string | null): string => JSON.stringify(v);

/**
 * A frame's address checked: the check id a whole number from 1, the name percent-decodable, the
 * size a whole number of pixels within what is served (none asked: the strip's size). Whether the
 * check is known and the name one of its frames is the service's to say (a 404, not a refusal).
 */
export function expectFrameRequest({ path, max }: FrameAddress): FrameRequest {
  const [id = '', ...rest] = path.split('/');
  const checkId = /^[1-9][0-9]*$/.test(id) ? Number(id) : NaN;
  if (!Number.isSafeInteger(checkId)) throw new TypeError(`Expected a check id (a whole number from 1) for checkId but received ${quoted(id)}`);
  let file: string;
  try {
    file = decodeURIComponent(rest.join('/'));
  } catch {
    throw new TypeError(`Expected a percent-encoded file name for file but received ${quoted(rest.join('/'))}`);
  }
  const side = max === null ? frameSides.unasked : /^[0-9]{1,5}$/.test(max) ? Number(max) : NaN;
  if (!(side >= frameSides.least && side <= frameSides.most)) {
    throw new TypeError(`Expected a whole number of pixels from ${frameSides.least} to ${frameSides.most} for max but received ${quoted(max)}`);
  }
  return { checkId, file, maxSide: side };
}

/**
 * A frame as both transports serve it: the address checked by `expectFrameRequest`, then rendered
 * by the service through `gate`. Unknown checks and names that are not the check's frames are one
 * answer, so a page cannot tell a missing file from a forbidden one.
 */
export async function frameAnswer(service: Pick<AppService, 'frameImage'>, address: FrameAddress, gate: FrameRenderGate = (render) => render()): Promise<FrameAnswer> {
  let request: FrameRequest;
  try {
    request = expectFrameRequest(address);
  } catch (err) {
    return { status: 400, text: (err as Error).message };
  }
  const rendering = gate(() => service.frameImage(request.checkId, request.file, request.maxSide).catch(() => null));
  if (!rendering) return { status: 503, text: 'busy rendering other frames: try again' };
  const image = await rendering;
  return image ? { status: 200, image } : { status: 404, text: 'no such frame' };
}
