/**
 * Renders demo-shoot jobs either in this thread or on worker threads (one job per worker at a
 * time), with the same results either way: rendering is deterministic and each job carries its
 * own noise seeds.
 */
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { Worker } from 'node:worker_threads';
import { pixelAngle } from '../core/demo/camera.js';
import { demoCameraModel } from '../core/demo/demo-plan.js';
import type { RenderJob } from '../core/demo/demo-station.js';
import { renderJob } from '../core/demo/demo-station.js';
import { createScene, prepareSceneView } from '../core/demo/scene-radiance.js';
import type { RenderReply, RenderRequest, RenderWorkerData } from './demo-render-worker.js';

export interface RenderedFrame {
  readonly file: string;
  /** 8-bit sRGB RGB, interleaved. */
  readonly pixels: Uint8Array;
}

export interface FrameRenderer {
  render(job: RenderJob): Promise<RenderedFrame[]>;
  close(): Promise<void>;
}

/** Renders in the calling thread (blocking it while a job renders). */
export function inThreadRenderer(seed: number, width: number, height: number): FrameRenderer {
  let view: ReturnType<typeof prepareSceneView> | null = null;
  let scratch: Float32Array | undefined;
  return {
    async render(job) {
      view ??= prepareSceneView(createScene(seed), pixelAngle(demoCameraModel(width, height)));
      scratch ??= new Float32Array(width * height * 3);
      const images = renderJob(view, width, height, job, scratch);
      return job.frames.map((f, i) => ({ file: f.file, pixels: images[i].data }));
    },
    async close() {
      view = null;
      scratch = undefined;
    },
  };
}

/** The ES module of tsx's registration API (its `./esm/api` export, as its package.json maps it). */
function tsxRegisterUrl(from: string): string {
  const packageJson = createRequire(from).resolve('tsx/package.json');
  const exportsMap = (JSON.parse(readFileSync(packageJson, 'utf8')) as { exports: Record<string, { import: { default: string } }> }).exports;
  return pathToFileURL(join(dirname(packageJson), exportsMap['./esm/api'].import.default)).href;
}

/**
 * Starts the worker module. From compiled JavaScript it is the sibling .js file; when running from
 * TypeScript sources (tsx, vitest) the worker thread registers tsx's loader first (on Node 20 a
 * worker does not get the loader hooks of the process that started it).
 */
function startWorker(data: RenderWorkerData): Worker {
  const self = import.meta.url;
  const fromSource = self.endsWith('.ts');
  const entry = new URL(fromSource ? './demo-render-worker.ts' : './demo-render-worker.js', self).href;
  const loader = fromSource ? tsxRegisterUrl(self) : null;
  const code = [
    "const { workerData } = require('node:worker_threads');",
    'const ready = workerData.loader ? import(workerData.loader).then((api) => api.register()) : Promise.resolve();',
    'ready.then(() => import(workerData.entry));',
  ].join('\n');
  return new Worker(code, { eval: true, workerData: { ...data, entry, loader } });
}

/** Renders on `count` worker threads. */
export function workerRenderer(seed: number, width: number, height: number, count: number): FrameRenderer {
  if (!Number.isInteger(count) || count < 1) throw new RangeError(`Expected a positive whole number for count but received ${count}`);
  interface Pending {
    readonly job: RenderJob;
    readonly resolve: (frames: RenderedFrame[]) => void;
    readonly reject: (err: Error) => void;
  }
  const queue: Pending[] = [];
  const busy = new Map<Worker, Pending & { id: number }>();
  const idle: Worker[] = [];
  let nextId = 1;
  let failure: Error | null = null;

  const fail = (err: Error): void => {
    failure ??= err;
    for (const p of busy.values()) p.reject(err);
    busy.clear();
    for (const p of queue.splice(0)) p.reject(err);
  };
  const pump = (): void => {
    while (idle.length > 0 && queue.length > 0) {
      const w = idle.pop()!;
      const p = queue.shift()!;
      const id = nextId++;
      busy.set(w, { ...p, id });
      const req: RenderRequest = { id, job: p.job };
      w.postMessage(req);
    }
  };
  const workers: Worker[] = [];
  for (let i = 0; i < count; i++) {
    const w = startWorker({ seed, width, height });
    w.on('message', (reply: RenderReply) => {
      const p = busy.get(w);
      busy.delete(w);
      idle.push(w);
      if (p && reply.id === p.id) {
        if (reply.ok) p.resolve(reply.frames);
        else p.reject(new Error(reply.message));
      }
      pump();
    });
    w.on('error', (err) => fail(err));
    w.on('exit', (code) => {
      if (code !== 0) fail(new Error(`Expected a render worker to keep running but it exited with code ${code}`));
    });
    workers.push(w);
    idle.push(w);
  }
  return {
    render(job) {
      if (failure) return Promise.reject(failure);
      return new Promise<RenderedFrame[]>((resolve, reject) => {
        queue.push({ job, resolve, reject });
        pump();
      });
    },
    async close() {
      failure ??= new Error('Expected an open renderer but received a closed one');
      await Promise.all(workers.map((w) => w.terminate()));
    },
  };
}
