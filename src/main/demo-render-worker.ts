/**
 * A worker thread that renders demo-shoot frames (see demo-render-pool.ts): it prepares the scene
 * once, then renders each job it is sent and hands the 8-bit RGB pixels back without copying.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { pixelAngle } from '../core/demo/camera.js';
import { demoCameraModel } from '../core/demo/demo-plan.js';
import type { RenderJob } from '../core/demo/demo-station.js';
import { renderJob } from '../core/demo/demo-station.js';
import { createScene, prepareSceneView } from '../core/demo/scene-radiance.js';

export interface RenderWorkerData {
  readonly seed: number;
  readonly width: number;
  readonly height: number;
}

export interface RenderRequest {
  readonly id: number;
  readonly job: RenderJob;
}

export type RenderReply =
  | { readonly id: number; readonly ok: true; readonly frames: { readonly file: string; readonly pixels: Uint8Array }[] }
  | { readonly id: number; readonly ok: false; readonly message: string };

const port = parentPort;
if (port) {
  const { seed, width, height } = workerData as RenderWorkerData;
  const view = prepareSceneView(createScene(seed), pixelAngle(demoCameraModel(width, height)));
  const scratch = new Float32Array(width * height * 3);
  port.on('message', (req: RenderRequest) => {
    try {
      const images = renderJob(view, width, height, req.job, scratch);
      const frames = req.job.frames.map((f, i) => ({ file: f.file, pixels: images[i].data }));
      const reply: RenderReply = { id: req.id, ok: true, frames };
      port.postMessage(reply, frames.map((f) => f.pixels.buffer as ArrayBuffer));
    } catch (err) {
      const reply: RenderReply = { id: req.id, ok: false, message: (err as Error).message };
      port.postMessage(reply);
    }
  });
}
