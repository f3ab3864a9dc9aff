import { opendir, realpath, stat } from 'node:fs/promises';
import { isAbsolute, relative, resolve, sep } from 'node:path';
import { budgetFromTyped, pageBudget } from '../core/sequence/budget.js';
import type { MatchBudget, Report } from '../core/sequence/report.js';
import { judge, rejudge } from '../core/sequence/verdicts.js';
import type { AnalysisPool } from './analysis-pool.js';
import { createAnalysisPool } from './analysis-pool.js';
import type { CheckDoneEvent, CheckPartialEvent, CheckProgressEvent, ExportFormat, LatestCheck } from '../common/api.js';
import { exportContent } from './export-content.js';
import { loadStoredBudget, loadStoredPreference } from './settings-store.js';
import type { TiePointSet } from './check.js';
import { checkCard } from './card-check.js';
import { isCardLayout } from './scan.js';
import { frameForDisplay } from './decode.js';
import { pathOfName } from './input-file.js';
import { createFeatureCache } from './feature-cache.js';
import { rememberFolder } from './recent-folders.js';
import { writeFileAtomic } from './write-file.js';
import type { DemoWriting } from './demo-shoot.js';

/** Bytes of rendered frames kept for the page to show again (a strip of thumbnails is a few megabytes). */
const frameCacheLimit = 48 * 1024 * 1024;

/**
 * The sizes a frame is served at (px, longer side). The page asks for 320 (strip) and 1200
 * (detail); twice the larger is the most served. A JPEG then decodes shrunk on load, where a 24 MP
 * frame at full size holds 72 MB per render.
 */
export const frameSides = { least: 32, most: 2400, unasked: 320 } as const;

interface CheckState {
  readonly id: number;
  folder: string;
  readonly demo: boolean;
  readonly controller: AbortController;
  report: Report | null;
  /** The results so far, while it runs. */
  partial: Report | null;
  /** Ended: with a report, an error or cancelled. */
  ended: boolean;
  /** Frames of the check known so far (images of these may be shown while it runs). */
  files: Set<string>;
  tiePoints: readonly TiePointSet[];
  /** Real path of the folder, for containment checks. */
  realFolder: string | null;
}

export interface AppServiceOptions {
  /** Makes (once, reporting how it goes when it must be written) and returns the demo shoot's folder. */
  readonly demoFolder: (writing?: DemoWriting) => Promise<string>;
  readonly threads?: number;
  readonly onProgress: (e: CheckProgressEvent) => void;
  readonly onDone: (e: CheckDoneEvent) => void;
  readonly onPartial?: (e: CheckPartialEvent) => void;
}

/**
 * A match budget sent by the page (either shell), checked before anything is judged or written by
 * it: a complete budget, or an error naming the field as the budget panel does, in its units
 * ("Expected a percentage from 0 to 100 for the weak below overlap but received 150").
 */
export function expectBudget(budget: unknown): MatchBudget {
  return budgetFromTyped(pageBudget(expectBudgetFields(budget)));
}

/** A budget's fields by name, before their values are checked: an object, not an array or a word. */
export function expectBudgetFields(budget: unknown): Record<string, unknown> {
  if (typeof budget !== 'object' || budget === null || Array.isArray(budget)) {
    throw new TypeError(`Expected a match budget (its thresholds by name) for budget but received ${JSON.stringify(budget) ?? String(budget)}`);
  }
  return budget as Record<string, unknown>;
}

/**
 * Why a folder could not be opened, in plain words: no system error codes ("no such folder" for
 * ENOENT, "no permission to read it" for EACCES).
 */
export function cannotOpen(folder: string, err: unknown): string {
  const code = (err as NodeJS.ErrnoException).code;
  const why =
    code === 'ENOENT' ? 'there is no such folder' :
    code === 'ENOTDIR' ? 'it is a file, not a folder' :
    code === 'EACCES' || code === 'EPERM' ? 'there is no permission to read it' :
    code === 'ELOOP' ? 'it is a link that leads round in a loop' :
    code === 'EIO' ? 'the card or disk could not be read there' :
    code === 'ENAMETOOLONG' ? 'the path is too long' :
    'it cannot be read';
  return `cannot open ${folder} (${why})`;
}

/**
 * What both shells (the desktop window and the browser host) do for the page: run checks in the
 * worker pool with progress, keep their results, and hand out exports, tie points and frame images
 * of the opened folder only.
 */
export class AppService {
  private readonly checks = new Map<number, CheckState>();
  private nextId = 1;
  private started = false;
  private pool: AnalysisPool | null = null;
  private readonly frameCache = new Map<string, Buffer>();
  private frameCacheBytes = 0;

  constructor(private readonly options: AppServiceOptions) {}

  private getPool(): AnalysisPool {
    this.pool ??= createAnalysisPool(this.options.threads);
    return this.pool;
  }

  /** Whether any check was started (a page loaded again must not start its first one again). */
  get hasStarted(): boolean {
    return this.started;
  }

  /** The latest check, for a page loaded again: running, or finished with its report; null when there is none or it failed. */
  latest(): LatestCheck | null {
    const s = [...this.checks.values()].at(-1);
    if (!s || (s.ended && !s.report)) return null;
    return { checkId: s.id, folder: s.folder, demo: s.demo, running: !s.ended, report: s.report ?? s.partial };
  }

  async startCheck(target: { folder: string } | { demo: true }): Promise<number> {
    const id = this.nextId++;
    this.started = true;
    const demo = 'demo' in target;
    const state: CheckState = { id, folder: demo ? '' : resolve(target.folder), demo, controller: new AbortController(), report: null, partial: null, ended: false, files: new Set(), tiePoints: [], realFolder: null };
    // Only the latest check is kept: frames of older ones stop resolving.
    for (const old of this.checks.values()) old.controller.abort();
    this.checks.clear();
    this.checks.set(id, state);
    void this.run(state, !demo);
    return id;
  }

  private async run(state: CheckState, remember: boolean): Promise<void> {
    let started = Date.now();
    try {
      if (state.demo) {
        // Written on first use: its frames are told as progress of phase 'demo', the first with the time it should take.
        let estimate: number | null = null;
        state.folder = await this.options.demoFolder({
          onStart: (frames, seconds) => {
            estimate = seconds;
            this.options.onProgress({ checkId: state.id, phase: 'demo', done: 0, total: frames, secondsLeft: seconds });
          },
          onFrame: (file, done, total) => {
            const elapsed = (Date.now() - started) / 1000;
            const secondsLeft = estimate === null ? null : Math.max(0, done > 0 ? (elapsed / done) * (total - done) : estimate - elapsed);
            this.options.onProgress({ checkId: state.id, phase: 'demo', done, total, file, secondsLeft });
          },
        });
        started = Date.now();
      }
      if (state.controller.signal.aborted) throw new Error('cancelled');
      try {
        state.realFolder = await realpath(state.folder);
        if (!(await stat(state.realFolder)).isDirectory()) throw Object.assign(new Error('not a folder'), { code: 'ENOTDIR' });
        await (await opendir(state.realFolder)).close();
      } catch (err) {
        throw new Error(cannotOpen(state.folder, err), { cause: err });
      }
      if (remember) await rememberFolder(state.folder);
      const [budget, prefer] = await Promise.all([loadStoredBudget(), loadStoredPreference()]);
      const result = await checkCard(state.folder, {
        prefer,
        recursive: await isCardLayout(state.folder),
        pool: this.getPool(),
        cache: createFeatureCache(),
        signal: state.controller.signal,
        onPartial: this.options.onPartial
          ? (analysis) => {
              if (state.controller.signal.aborted) return;
              state.files = new Set(analysis.frames.map((f) => f.file));
              state.partial = judge(analysis, budget);
              this.options.onPartial?.({ checkId: state.id, report: state.partial });
            }
          : undefined,
        onProgress: (p) => {
          const elapsed = (Date.now() - started) / 1000;
          const secondsLeft = p.phase === 'frames' && p.done > 0 ? (elapsed / p.done) * (p.total - p.done) : null;
          this.options.onProgress({ checkId: state.id, ...p, secondsLeft });
        },
      });
      state.report = judge(result.analysis, budget);
      state.files = new Set(result.analysis.frames.map((f) => f.file));
      state.tiePoints = result.tiePoints;
      state.ended = true;
      this.options.onDone({ checkId: state.id, report: state.report, error: null, cancelled: false });
    } catch (err) {
      const cancelled = state.controller.signal.aborted;
      state.ended = true;
      this.options.onDone({ checkId: state.id, report: null, error: cancelled ? null : (err as Error).message, cancelled });
    }
  }

  cancelCheck(id: number): void {
    this.checks.get(id)?.controller.abort();
  }

  private state(id: number): CheckState {
    const s = this.checks.get(id);
    if (!s) throw new Error(`Expected the id of the current check but received ${id}`);
    return s;
  }

  /** The report of a finished check, judged against `budget`. */
  report(id: number, budget?: MatchBudget): Report {
    const s = this.state(id);
    if (!s.report) throw new Error(`Expected a finished check but check ${id} is still running`);
    return budget ? rejudge(s.report, budget) : s.report;
  }

  /** An export of a finished check judged against `budget` (checked here, for both shells). */
  exportReport(id: number, format: ExportFormat, budget: unknown): { text: string; name: string } {
    return exportContent(this.report(id, expectBudget(budget)), format);
  }

  /**
   * Writes an export's text where the user chose (the desktop's save dialog, which has asked before
   * replacing a file): atomically, never into the check's folder, never over anything but a regular
   * file. Returns the path written.
   */
  async writeExport(id: number, path: string, text: string): Promise<string> {
    const s = this.state(id);
    if (typeof path !== 'string' || !isAbsolute(path)) throw new TypeError(`Expected an absolute path for the export but received ${String(path)}`);
    await writeFileAtomic(path, text, { overwrite: true, outside: s.folder });
    return path;
  }

  tiePoints(id: number, a: string, b: string): number[] {
    const s = this.state(id);
    const set = s.tiePoints.find((t) => t.a === a && t.b === b);
    return set ? Array.from(set.points) : [];
  }

  /**
   * A JPEG of one frame of the check at most `maxSide` px, or null when `file` is not a frame of
   * that check or resolves outside its folder (a symbolic link leading out, say).
   */
  async frameImage(id: number, file: string, maxSide: number): Promise<Buffer | null> {
    const s = this.checks.get(id);
    if (!s || !s.realFolder || !s.files.has(file)) return null;
    if (isAbsolute(file) || file.split(/[\\/]/).includes('..')) return null;
    const side = Math.max(frameSides.least, Math.min(frameSides.most, Math.round(maxSide) || frameSides.unasked));
    const key = `${id}:${file}:${side}`;
    const cached = this.frameCache.get(key);
    if (cached) return cached;
    let real: string | Buffer;
    try {
      real = await realpath(resolve(s.folder, file));
    } catch {
      // A name that is not valid UTF-8 is reported with its bytes escaped (input-file.ts, nameOf).
      const exact = pathOfName(s.folder, file);
      if (typeof exact === 'string') return null;
      try {
        real = await realpath(exact, { encoding: 'buffer' });
      } catch {
        return null;
      }
    }
    if (typeof real === 'string') {
      const rel = relative(s.realFolder, real);
      if (rel === '' || rel.startsWith('..' + sep) || rel === '..' || isAbsolute(rel)) return null;
    } else if (!real.subarray(0, Buffer.byteLength(s.realFolder) + 1).equals(Buffer.from(s.realFolder + sep))) return null;
    const jpeg = await frameForDisplay(real, side);
    // Two requests for the same frame may both have rendered it.
    this.frameCacheBytes -= this.frameCache.get(key)?.length ?? 0;
    this.frameCache.set(key, jpeg);
    this.frameCacheBytes += jpeg.length;
    // Kept by bytes, not by count: two hundred frames at full size would hold most of a gigabyte.
    for (const [k, v] of this.frameCache) {
      if (this.frameCacheBytes <= frameCacheLimit) break;
      this.frameCache.delete(k);
      this.frameCacheBytes -= v.length;
    }
    return jpeg;
  }

  async close(): Promise<void> {
    for (const s of this.checks.values()) s.controller.abort();
    await this.pool?.destroy();
    this.pool = null;
  }
}
