/**
 * Rendering the frames of a demo plan: frames that share a pose (a station's bracket, unless one
 * drifted) share one radiance render, and each is exposed from it.
 */
import type { Pose } from './camera.js';
import type { DemoPlan, PlannedFrame, Visitor } from './demo-plan.js';
import { demoCameraModel } from './demo-plan.js';
import type { RgbImage } from './render.js';
import type { NearPost } from './render.js';
import { exposeFrame, paintPosts, paintVisitor, renderRadiance } from './render.js';
import type { SceneView } from './scene-radiance.js';
import type { RadialDistortion } from '../geometry/lens.js';

/** One radiance render and the exposures taken from it. */
export interface RenderJob {
  readonly pose: Pose;
  /** A figure in this pose's view (one station's frames), or null. */
  readonly visitor: Visitor | null;
  /** Near posts, and where the camera's centre is (the origin unless off its pivot). */
  readonly posts: readonly NearPost[];
  readonly centre: readonly [number, number, number];
  /** The lens's radial distortion, or null for a pinhole. */
  readonly distortion?: RadialDistortion | null;
  readonly frames: readonly JobFrame[];
}

export interface JobFrame {
  readonly file: string;
  readonly exposureOffsetEv: number;
  readonly blurPx: number;
  readonly noiseSeed: number;
}

/** The plan's frames grouped by identical pose, in shooting order of each group's first frame. */
export function renderJobs(plan: DemoPlan, only?: ReadonlySet<string>): RenderJob[] {
  const jobs = new Map<string, RenderJob & { frames: JobFrame[] }>();
  for (const f of plan.frames) {
    if (only && !only.has(f.file)) continue;
    const key = `${f.station}:${f.yawDeg}:${f.pitchDeg}:${f.rollDeg}`;
    let job = jobs.get(key);
    if (!job) {
      job = { pose: { yawDeg: f.yawDeg, pitchDeg: f.pitchDeg, rollDeg: f.rollDeg }, visitor: f.visitor ?? null, posts: plan.posts, centre: f.centre ?? [0, 0, 0], distortion: plan.camera.distortion ?? null, frames: [] };
      jobs.set(key, job);
    }
    job.frames.push(jobFrame(f));
  }
  return [...jobs.values()];
}

function jobFrame(f: PlannedFrame): JobFrame {
  return { file: f.file, exposureOffsetEv: f.exposureOffsetEv, blurPx: f.blurPx, noiseSeed: f.noiseSeed };
}

/**
 * Renders one job: the radiance once, then each frame's exposure (gain 2^offset, its motion blur,
 * its sensor noise). `scratch` is reused for the radiance when large enough.
 */
export function renderJob(view: SceneView, width: number, height: number, job: RenderJob, scratch?: Float32Array): RgbImage[] {
  const camera = demoCameraModel(width, height);
  const distortion = job.distortion ?? null;
  const radiance = renderRadiance(view, camera, job.pose, { distortion }, scratch);
  if (job.posts.length) paintPosts(radiance, camera, job.pose, job.posts, job.centre, distortion);
  if (job.visitor) paintVisitor(radiance, camera, job.pose, job.visitor, distortion);
  return job.frames.map((f) => exposeFrame(radiance, { ev: f.exposureOffsetEv, blurPx: f.blurPx, noiseSeed: f.noiseSeed }));
}
