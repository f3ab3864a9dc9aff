// A worker for the analysis pool that dies on any file named *crash*, as a decoder abort would,
// and otherwise does the real worker's job.
import type { AnalysisTask } from '../../src/main/analysis-worker.js';
import runTask from '../../src/main/analysis-worker.js';

export default async function crashingTask(task: AnalysisTask): Promise<unknown> {
  if (task.kind === 'frame' && typeof task.path === 'string' && task.path.includes('crash')) process.exit(1);
  return runTask(task);
}
