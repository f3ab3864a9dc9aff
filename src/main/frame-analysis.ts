// Frames decoded from their files and analysed, and pairs measured, on this thread's scratch pool;
// the computation itself is core/pair/pair-analysis.ts.
import type { FeatureParams } from '../core/features/features.js';
import type { FrameAnalysis, PairAnalysis, PairOptions } from '../core/pair/pair-analysis.js';
import { analyseFrame, analysePair as analysePairWith, checkFeatureParams } from '../core/pair/pair-analysis.js';
import { createScratchPool } from '../core/image/scratch.js';
import { decodeForAnalysis } from './decode.js';
import type { InputPath } from './input-file.js';

/** Scratch arrays reused by every frame and pair this thread analyses (one at a time). */
const scratch = createScratchPool();

/** Decodes a frame at the analysis size and extracts everything later steps need from it. */
export async function analyseFrameFile(path: InputPath, maxSide: number, params: FeatureParams = checkFeatureParams): Promise<FrameAnalysis> {
  return analyseFrame(await decodeForAnalysis(path, maxSide), params, scratch);
}

/** core/pair/pair-analysis.ts's analysePair on this thread's scratch pool. */
export function analysePair(a: FrameAnalysis, b: FrameAnalysis, options: PairOptions = { retryAtFullSize: true, overlapBlocks: true }): PairAnalysis {
  return analysePairWith(a, b, options, scratch);
}
