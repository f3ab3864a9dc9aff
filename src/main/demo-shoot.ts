import { access } from 'node:fs/promises';
import { availableParallelism } from 'node:os';
import { join } from 'node:path';
import type { DemoPlanOptions } from '../core/demo/demo-plan.js';
import { defaultDemoPlanOptions } from '../core/demo/demo-plan.js';
import { demoTruthFile } from '../core/demo/demo-truth.js';
import { cacheDir } from './user-dirs.js';
import { writeDemoShoot } from './demo-writer.js';

/** Bump when the demo generator's output changes, so an old cached shoot is replaced. */
const demoVersion = 2;
let pending: Promise<string> | null = null;

/** How the writing of the demo shoot goes, for those who show it: its frame count and the time it should take, then each frame. */
export interface DemoWriting {
  readonly onStart?: (frames: number, seconds: number) => void;
  readonly onFrame?: (file: string, done: number, total: number) => void;
}

/**
 * Seconds that writing `frames` demo frames of width x height should take on `cores` cores.
 * Measured on 2026-12-03 with writeDemoShoot on a 2-core machine shared with other work, 35 frames
 * each time: 3000x2000 in 21.6 s and 33 s, 1200x800 in 4.2 s and 7.5 s, which is between 0.025 +
 * 0.10 and 0.08 + 0.14 s per frame and megapixel; the middle of the two lines is used. Rendering
 * runs on a worker per core, so more cores should be quicker: dividing by cores / 2 is an
 * assumption, not measured.
 */
export function demoWriteSeconds(frames: number, width: number, height: number, cores = availableParallelism()): number {
  const perFrame = 0.05 + 0.12 * ((width * height) / 1e6);
  const seconds = (frames * perFrame) / Math.max(1, cores / 2);
  // Said as a person would guess it: whole seconds when short, else to 5 s.
  return seconds < 10 ? Math.max(1, Math.round(seconds)) : 5 * Math.round(seconds / 5);
}

/**
 * Size of the demo shoot: 3000x2000, or SEAMSCOUT_TEST_DEMO_SIZE (WxH, for tests only, which need a
 * first use that is quick; a shoot of another size is kept in a folder of its own).
 */
function demoSize(): Pick<DemoPlanOptions, 'width' | 'height'> & { suffix: string } {
  const m = /^(\d+)x(\d+)$/.exec(process.env.SEAMSCOUT_TEST_DEMO_SIZE ?? '');
  if (!m) return { width: defaultDemoPlanOptions.width, height: defaultDemoPlanOptions.height, suffix: '' };
  return { width: Number(m[1]), height: Number(m[2]), suffix: `-${m[1]}x${m[2]}` };
}

/**
 * Folder of the built-in demo shoot (12 bracketed stations at 3000x2000 with planted problems) in
 * the user's cache, written on first use (told through `writing`) and kept for later runs.
 */
export function ensureDemoShoot(writing: DemoWriting = {}): Promise<string> {
  pending ??= (async () => {
    const { width, height, suffix } = demoSize();
    const folder = join(cacheDir(), `demo-shoot-${demoVersion}${suffix}`);
    try {
      await access(join(folder, demoTruthFile));
      return folder;
    } catch {
      await writeDemoShoot(folder, {
        width,
        height,
        onStart: (plan) => writing.onStart?.(plan.frames.length, demoWriteSeconds(plan.frames.length, width, height)),
        onFrame: writing.onFrame,
      });
      return folder;
    }
  })().finally(() => {
    pending = null;
  });
  return pending;
}
