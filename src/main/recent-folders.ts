import { readFile, mkdir } from 'node:fs/promises';
import { join } from 'node:path';
import { configDir } from './user-dirs.js';
import { writeFileAtomic } from './write-file.js';

const file = (): string => join(configDir(), 'recent-folders.json');

export async function readRecentFolders(): Promise<string[]> {
  try {
    const list = JSON.parse(await readFile(file(), 'utf8'));
    return Array.isArray(list) ? list.filter((x): x is string => typeof x === 'string').slice(0, 10) : [];
  } catch {
    return [];
  }
}

/** Puts a folder first in the list of recent folders (at most ten), in the user's settings folder. */
export async function rememberFolder(folder: string): Promise<string[]> {
  const list = [folder, ...(await readRecentFolders()).filter((f) => f !== folder)].slice(0, 10);
  try {
    await mkdir(configDir(), { recursive: true });
    await writeFileAtomic(file(), JSON.stringify(list, null, 2) + '\n', true);
  } catch {
    // Not remembering a folder costs nothing but convenience.
  }
  return list;
}
