import { join } from 'node:path';
import { cacheDir } from './user-dirs.js';

/** Folder of the built-in demo shoot in the user's cache, written on first use. */
export async function ensureDemoShoot(): Promise<string> {
  const folder = join(cacheDir(), 'demo-shoot');
  throw new Error(`the demo shoot is not available yet (${folder})`);
}
