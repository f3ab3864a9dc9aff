import { readdir, realpath, stat } from 'node:fs/promises';
import { extname, join, relative } from 'node:path';
import { rawExtensions, unreadRawExtensions } from './raw-file.js';

/** File endings of the formats sharp decodes that cameras and phones write, and of camera RAW files. */
export const imageExtensions = new Set(['.jpg', '.jpeg', '.jpe', '.png', '.tif', '.tiff', '.webp', '.avif', '.heic', '.heif', ...rawExtensions, ...unreadRawExtensions]);

export interface ScannedFile {
  readonly path: string;
  /** Path relative to the scanned folder (the base name when not recursive). */
  readonly name: string;
  readonly size: number;
  readonly mtimeMs: number;
}

export interface ScanResult {
  readonly files: ScannedFile[];
  /** Entries that could not be read (permissions, vanished), with the reason. */
  readonly problems: { name: string; reason: string }[];
}

/**
 * Lists the image files of a folder, by ending, skipping hidden files (".", and the "._" files some
 * systems leave on cards). With `recursive`, descends into sub-folders, following each real folder
 * once so that a symbolic-link loop ends. Reads only; writes nothing.
 */
export async function scanFolder(folder: string, recursive: boolean): Promise<ScanResult> {
  const files: ScannedFile[] = [];
  const problems: { name: string; reason: string }[] = [];
  const seen = new Set<string>();
  const walk = async (dir: string): Promise<void> => {
    const real = await realpath(dir);
    if (seen.has(real)) return;
    seen.add(real);
    const entries = await readdir(dir, { withFileTypes: true });
    entries.sort((a, b) => (a.name < b.name ? -1 : a.name > b.name ? 1 : 0));
    for (const e of entries) {
      if (e.name.startsWith('.')) continue;
      const path = join(dir, e.name);
      const name = relative(folder, path);
      try {
        if (e.isDirectory() || (e.isSymbolicLink() && recursive && (await stat(path)).isDirectory())) {
          if (recursive) await walk(path);
          continue;
        }
        if (!imageExtensions.has(extname(e.name).toLowerCase())) continue;
        const st = await stat(path);
        if (!st.isFile()) continue;
        files.push({ path, name, size: st.size, mtimeMs: st.mtimeMs });
      } catch (err) {
        problems.push({ name, reason: (err as NodeJS.ErrnoException).code ?? (err as Error).message });
      }
    }
  };
  await walk(folder);
  return { files, problems };
}
