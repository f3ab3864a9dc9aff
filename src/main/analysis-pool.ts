import { availableParallelism } from 'node:os';
import { Piscina } from 'piscina';
import type { AnalysisTask } from './analysis-worker.js';
import type { InputPath } from './input-file.js';
import { byteBudget, inputBudgetBytes } from './input-file.js';
import { decodeCost } from './decode.js';
import { runTaskHere as runTask } from './analysis-worker.js';
import { errorFromCrossing } from './crossing-error.js';
import type { AnalysisLens, FrameAnalysis, LensJudgement, PairAnalysis, PairOptions } from '../core/pair/pair-analysis.js';

const defaultPairOptions: PairOptions = { retryAtFullSize: true, overlapBlocks: true };

export interface AnalysisPool {
  analyseFrame(path: InputPath, maxSide: number, signal?: AbortSignal): Promise<FrameAnalysis>;
  analysePair(a: FrameAnalysis, b: FrameAnalysis, options?: PairOptions, signal?: AbortSignal): Promise<PairAnalysis>;
  /** A measured pair's overlap judged again through the sequence's lens (core/pair/pair-analysis.ts, judgeThroughLens). */
  judgeThroughLens(a: FrameAnalysis, b: FrameAnalysis, tiePoints: Float32Array, lens: AnalysisLens, signal?: AbortSignal): Promise<LensJudgement | null>;
  readonly threads: number;
  /** Worker threads alive right now. */
  liveThreads(): number;
  destroy(): Promise<void>;
}

export interface AnalysisPoolOptions {
  /** Worker entry file (tests use one that wraps the real worker). */
  readonly filename?: string;
}

/**
 * Runs decoding, detection and matching on worker threads (piscina), one per core by default.
 * With `threads` 0 the same tasks run in this thread (tests, tiny jobs). Under tsx (a checkout) the
 * workers load the TypeScript sources through tsx; built, they load the compiled files.
 */
export function createAnalysisPool(threads = availableParallelism(), options: AnalysisPoolOptions = {}): AnalysisPool {
  if (threads <= 0) {
    return {
      threads: 0,
      analyseFrame: (path, maxSide) => runTask({ kind: 'frame', path, maxSide }) as Promise<FrameAnalysis>,
      analysePair: (a, b, options = defaultPairOptions) => runTask({ kind: 'pair', a, b, options }) as Promise<PairAnalysis>,
      judgeThroughLens: (a, b, tiePoints, lens) => runTask({ kind: 'lens', a, b, tiePoints, lens }) as Promise<LensJudgement | null>,
      liveThreads: () => 0,
      destroy: async () => {},
    };
  }
  const self = new URL(import.meta.url);
  const fromSource = self.pathname.endsWith('.ts');
  const filename = options.filename ?? new URL(`./analysis-worker.${fromSource ? 'ts' : 'js'}`, self).href;
  const pool = new Piscina({
    filename,
    minThreads: 1,
    maxThreads: threads,
    idleTimeout: 2000,
    execArgv: fromSource ? ['--import', 'tsx'] : process.execArgv,
  });
  // An aborted task ends its worker thread (piscina replaces it), so a cancel does not wait for it.
  // A task's error crosses back as a record (analysis-worker.ts) and is rebuilt here, typed as it was thrown.
  const run = <T>(task: AnalysisTask, signal?: AbortSignal): Promise<T> =>
    (pool.run(task, { signal }) as Promise<T>).catch((err: unknown) => {
      throw errorFromCrossing(err);
    });
  // Each worker counts what its own decode holds; across the workers, this budget holds a decode
  // back until its bytes fit beside those of the decodes already sent (input-file.ts).
  const decodes = byteBudget(inputBudgetBytes);
  return {
    threads,
    analyseFrame: async (path, maxSide, signal) => decodes.hold(await decodeCost(path), () => run<FrameAnalysis>({ kind: 'frame', path, maxSide }, signal)),
    analysePair: (a, b, options = defaultPairOptions, signal) => run<PairAnalysis>({ kind: 'pair', a, b, options }, signal),
    judgeThroughLens: (a, b, tiePoints, lens, signal) => run<LensJudgement | null>({ kind: 'lens', a, b, tiePoints, lens }, signal),
    liveThreads: () => pool.threads.length,
    destroy: () => pool.destroy(),
  };
}
