// The worker side of the analysis pool: one task at a time, no state kept between tasks.
import type { AnalysisLens, FrameAnalysis, PairOptions } from '../core/pair-analysis.js';
import type { InputPath } from './input-file.js';
import { analyseFrameFile, analysePair } from './frame-analysis.js';
import { judgeThroughLens } from '../core/pair-analysis.js';

export type AnalysisTask =
  | { kind: 'frame'; path: InputPath; maxSide: number }
  | { kind: 'pair'; a: FrameAnalysis; b: FrameAnalysis; options: PairOptions }
  | { kind: 'lens'; a: FrameAnalysis; b: FrameAnalysis; tiePoints: Float32Array; lens: AnalysisLens };

export default async function runTask(task: AnalysisTask): Promise<unknown> {
  if (task.kind === 'frame') return analyseFrameFile(task.path, task.maxSide);
  if (task.kind === 'lens') return judgeThroughLens(task.a, task.b, task.tiePoints, task.lens);
  return analysePair(task.a, task.b, task.options);
}
