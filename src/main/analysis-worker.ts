// The worker side of the analysis pool: one task at a time, no state kept between tasks.
import type { AnalysisLens, FrameAnalysis, PairOptions } from '../core/pair/pair-analysis.js';
import type { InputPath } from './input-file.js';
import { analyseFrameFile, analysePair } from './frame-analysis.js';
import { judgeThroughLens } from '../core/pair/pair-analysis.js';
import { errorToCross } from './crossing-error.js';

export type AnalysisTask =
  | { kind: 'frame'; path: InputPath; maxSide: number }
  | { kind: 'pair'; a: FrameAnalysis; b: FrameAnalysis; options: PairOptions }
  | { kind: 'lens'; a: FrameAnalysis; b: FrameAnalysis; tiePoints: Float32Array; lens: AnalysisLens };

/** Runs one task in this thread; what it throws is the error itself. */
export async function runTaskHere(task: AnalysisTask): Promise<unknown> {
  if (task.kind === 'frame') return analyseFrameFile(task.path, task.maxSide);
  if (task.kind === 'lens') return judgeThroughLens(task.a, task.b, task.tiePoints, task.lens);
  return analysePair(task.a, task.b, task.options);
}

/**
 * The worker thread's entry: what a task throws crosses as a plain record (crossing-error.ts),
 * since a thread's messages drop an error's class and its code; the pool rebuilds it.
 */
export default async function runTask(task: AnalysisTask): Promise<unknown> {
  try {
    return await runTaskHere(task);
  } catch (err) {
    throw errorToCross(err);
  }
}
