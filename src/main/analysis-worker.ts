// The worker side of the analysis pool: one task at a time, no state kept between tasks.
import type { FrameAnalysis, PairOptions } from './frame-analysis.js';
import { analyseFrameFile, analysePair } from './frame-analysis.js';

export type AnalysisTask =
  | { kind: 'frame'; path: string; maxSide: number }
  | { kind: 'pair'; a: FrameAnalysis; b: FrameAnalysis; options: PairOptions };

export default async function runTask(task: AnalysisTask): Promise<unknown> {
  if (task.kind === 'frame') return analyseFrameFile(task.path, task.maxSide);
  return analysePair(task.a, task.b, task.options);
}
