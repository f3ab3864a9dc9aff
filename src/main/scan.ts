import { isUtf8 } from 'node:buffer';
import { createHash } from 'node:crypto';
import { readdir, readlink, realpath, stat } from 'node:fs/promises';
import { extname, join, sep } from 'node:path';
import type { InputPath } from './input-file.js';
import { nameOf, openInput } from './input-file.js';
import { rawExtensions, unreadRawExtensions } from './raw-file.js';

/** File endings of the formats sharp decodes that cameras and phones write, and of camera RAW files. */
export const imageExtensions = new Set(['.jpg', '.jpeg', '.jpe', '.png', '.tif', '.tiff', '.webp', '.avif', '.heic', '.heif', ...rawExtensions, ...unreadRawExtensions]);

export interface ScannedFile {
  /** The exact path: a string, or its bytes where a name on the way is not valid UTF-8. */
  readonly path: InputPath;
  /**
   * Path relative to the scanned folder (the base name when not recursive), as shown and reported:
   * a name that is not valid UTF-8 has each byte that is not written `\xHH` (input-file.ts, `nameOf`).
   */
  readonly name: string;
  readonly size: number;
  readonly mtimeMs: number;
}

export interface ScanResult {
  readonly files: ScannedFile[];
  /** Entries that could not be read (permissions, vanished, not a picture), with the reason in words. */
  readonly problems: ScanProblem[];
}

/** An entry not read: 'not-a-file' for what is no regular file (a folder, a pipe, a device, a link to nothing), else 'unreadable'. */
export interface ScanProblem {
  readonly name: string;
  readonly code: 'unreadable' | 'not-a-file';
  readonly reason: string;
}

/** Why a folder entry could not be read, in words, from what the system said; a link to nothing says where it leads. */
async function problemOf(path: Buffer, err: unknown): Promise<Omit<ScanProblem, 'name'>> {
  const code = (err as NodeJS.ErrnoException).code;
  const unreadable = (reason: string) => ({ code: 'unreadable' as const, reason });
  if (code === 'EACCES' || code === 'EPERM') return unreadable('no permission to read it');
  if (code === 'ENOENT' || code === 'ELOOP') {
    const target = await readlink(path).catch(() => null);
    if (target !== null) return { code: 'not-a-file', reason: code === 'ELOOP' ? `it is a link that leads round in a loop (${target}): not read` : `it links to ${target}, which is not there: not read` };
  }
  if (code === 'ENOENT') return unreadable('it went away during the check');
  if (code === 'EIO') return unreadable('read error: copy it from the card again');
  return unreadable(`cannot be read: ${code ?? (err as Error).message}`);
}

const slash = Buffer.from(sep);

/**
 * Lists the image files of a folder, by ending, skipping hidden files (".", and the "._" files some
 * systems leave on cards). With `recursive`, descends into sub-folders, following each real folder
 * once so that a symbolic-link loop ends. Names are read as bytes and kept exact, so that a name
 * that is not valid UTF-8 (an old camera's or a FAT tool's Latin-1 name) is opened as it is.
 * Reads only; writes nothing.
 */
export async function scanFolder(folder: string, recursive: boolean): Promise<ScanResult> {
  const files: ScannedFile[] = [];
  const problems: ScanProblem[] = [];
  const seen = new Set<string>();
  const walk = async (dir: Buffer, shownDir: string): Promise<void> => {
    const real = (await realpath(dir, { encoding: 'buffer' })).toString('latin1');
    if (seen.has(real)) return;
    seen.add(real);
    const entries = (await readdir(dir, { withFileTypes: true, encoding: 'buffer' })).map((e) => ({ e, bytes: e.name as unknown as Buffer, shown: nameOf(e.name as unknown as Buffer) }));
    entries.sort((a, b) => (a.shown < b.shown ? -1 : a.shown > b.shown ? 1 : 0));
    for (const { e, bytes, shown } of entries) {
      if (bytes[0] === 0x2e) continue;
      const raw = Buffer.concat([dir, slash, bytes]);
      const name = shownDir ? `${shownDir}${sep}${shown}` : shown;
      const exact = isUtf8(raw) ? join(raw.toString('utf8')) : raw;
      try {
        const image = imageExtensions.has(extname(shown).toLowerCase());
        if (e.isDirectory() || (e.isSymbolicLink() && recursive && (await stat(raw)).isDirectory())) {
          if (recursive) await walk(raw, name);
          // A folder named like a picture is said, not passed over: the photographer looks for it.
          else if (image) problems.push({ name, code: 'not-a-file', reason: 'it is a folder, not a picture' });
          continue;
        }
        if (!image) continue;
        // Never opened unless a regular file: a pipe would wait for ever, a device would be read.
        const st = await stat(raw);
        if (st.isDirectory()) problems.push({ name, code: 'not-a-file', reason: 'it is a folder, not a picture' });
        else if (!st.isFile()) problems.push({ name, code: 'not-a-file', reason: 'it is not a regular file (a pipe, a device or a socket): not read' });
        if (!st.isFile()) continue;
        files.push({ path: exact, name, size: st.size, mtimeMs: st.mtimeMs });
      } catch (err) {
        problems.push({ name, ...(await problemOf(raw, err)) });
      }
    }
  };
  await walk(Buffer.from(folder), '');
  return { files, problems };
}

/**
 * A camera card's folder layout (DCF, "Design rule for Camera File system", JEITA CP-3461: images
 * under DCIM in folders named by three digits from 100 and five more characters, e.g. 100CANON;
 * (memory)): the folder is a DCIM folder, or holds one, or holds such numbered folders itself.
 * A card is read through its numbered folders, since a sequence may run from one into the next.
 */
export async function isCardLayout(folder: string): Promise<boolean> {
  const dcf = /^[1-9]\d{2}[0-9A-Za-z_]{5}$/;
  const subfolders = async (dir: string): Promise<string[]> => {
    try {
      return (await readdir(dir, { withFileTypes: true })).filter((e) => e.isDirectory() && !e.name.startsWith('.')).map((e) => e.name);
    } catch {
      return [];
    }
  };
  const here = await subfolders(folder);
  if (here.some((n) => dcf.test(n))) return true;
  const dcim = here.find((n) => n.toUpperCase() === 'DCIM');
  return dcim !== undefined && (await subfolders(join(folder, dcim))).some((n) => dcf.test(n));
}

/** Bytes compared first, from the start of each file: a camera's files differ there (EXIF capture time, counters). */
const headBytes = 64 * 1024;

async function digestOf(path: InputPath, limit: number): Promise<string> {
  const hash = createHash('sha256');
  const { handle } = await openInput(path);
  try {
    const chunk = Buffer.alloc(Math.min(limit, 1 << 20));
    let at = 0;
    while (at < limit) {
      const { bytesRead } = await handle.read(chunk, 0, Math.min(chunk.length, limit - at), at);
      if (bytesRead === 0) break;
      hash.update(chunk.subarray(0, bytesRead));
      at += bytesRead;
    }
  } finally {
    await handle.close();
  }
  return hash.digest('hex');
}

/**
 * Sets of byte-identical files (a card copied twice into one folder), as indices into `files`:
 * files of one size and one first 64 KiB are compared whole. Reads only; a file that cannot be read
 * is in no set. Copies must be known before stations are grouped, where a copy's repeated exposure
 * would split its station.
 */
export async function byteCopies(files: readonly ScannedFile[]): Promise<number[][]> {
  const bySize = new Map<number, number[]>();
  files.forEach((f, i) => {
    if (f.size > 0) bySize.set(f.size, [...(bySize.get(f.size) ?? []), i]);
  });
  const sets: number[][] = [];
  // Groups of indices whose `limit` first bytes hash alike; files that cannot be read are left out.
  const alike = async (indices: number[], limit: (i: number) => number): Promise<number[][]> => {
    const groups = new Map<string, number[]>();
    for (const i of indices) {
      try {
        const key = await digestOf(files[i].path, limit(i));
        groups.set(key, [...(groups.get(key) ?? []), i]);
      } catch {
        continue;
      }
    }
    return [...groups.values()].filter((g) => g.length > 1);
  };
  for (const same of bySize.values()) {
    if (same.length < 2) continue;
    for (const head of await alike(same, () => headBytes)) {
      if (files[head[0]].size <= headBytes) sets.push(head);
      else sets.push(...(await alike(head, (i) => files[i].size)));
    }
  }
  return sets;
}
