import { access } from 'node:fs/promises';
import { join } from 'node:path';
import { demoTruthFile } from '../core/demo-truth.js';
import { cacheDir } from './user-dirs.js';
import { writeDemoShoot } from './demo-writer.js';

/** Bump when the demo generator's output changes, so an old cached shoot is replaced. */
const demoVersion = 2;
let pending: Promise<string> | null = null;

/**
 * Folder of the built-in demo shoot (12 bracketed stations at 3000x2000 with planted problems) in
 * the user's cache, written on first use and kept for later runs.
 */
export function ensureDemoShoot(onFrame?: (file: string, done: number, total: number) => void): Promise<string> {
  pending ??= (async () => {
    const folder = join(cacheDir(), `demo-shoot-${demoVersion}`);
    try {
      await access(join(folder, demoTruthFile));
      return folder;
    } catch {
      await writeDemoShoot(folder, { onFrame });
      return folder;
    }
  })().finally(() => {
    pending = null;
  });
  return pending;
}
