import { closeSync, constants, fstatSync, openSync, readSync } from 'node:fs';
import type { FileHandle } from 'node:fs/promises';
import { open } from 'node:fs/promises';
import { extname, join, sep } from 'node:path';
import { FileProblem } from '../core/image/file-problem.js';

/**
 * A path to an input file: a string, or the exact bytes of a name that is not valid UTF-8 (written
 * by an old camera or a FAT tool), which a string cannot carry.
 */
export type InputPath = string | Uint8Array;

/** A path as text for telling its ending and for messages (bytes that are not UTF-8 escaped, see `nameOf`). */
export const pathText = (p: InputPath): string => (typeof p === 'string' ? p : nameOf(p));

/** The lower-case ending of an input path ('.jpg'). */
export const extensionOf = (p: InputPath): string => extname(pathText(p)).toLowerCase();

const strictUtf8 = new TextDecoder('utf-8', { fatal: true });

/**
 * A file name as it is shown and reported: as it is when its bytes are valid UTF-8; otherwise its
 * valid runs as text and each byte that is not as `\xHH` (two upper-case hex digits), e.g. the
 * Latin-1 name `caf\xE9.jpg`. A name that is valid UTF-8 is never given this form.
 */
export function nameOf(bytes: Uint8Array): string {
  try {
    return strictUtf8.decode(bytes);
  } catch {
    let out = '';
    for (let p = 0; p < bytes.length; ) {
      const n = utf8SequenceLength(bytes, p);
      if (n > 0) {
        out += Buffer.from(bytes.subarray(p, p + n)).toString('utf8');
        p += n;
      } else out += `\\x${bytes[p++].toString(16).toUpperCase().padStart(2, '0')}`;
    }
    return out;
  }
}

/**
 * The exact path of a file inside `folder` from its name as `nameOf` shows it: each `\xHH` back to
 * its byte where the shown name has any (a name that is valid UTF-8 never shows one, see `nameOf`).
 */
export function pathOfName(folder: string, name: string): string | Buffer {
  if (!/\\x[0-9A-F]{2}/.test(name)) return join(folder, name);
  const parts = name.split(/\\x([0-9A-F]{2})/);
  const bytes = parts.map((p, k) => (k % 2 === 1 ? Buffer.from([parseInt(p, 16)]) : Buffer.from(p, 'utf8')));
  return Buffer.concat([Buffer.from(join(folder, sep)), ...bytes]);
}

/** Length of the well-formed UTF-8 sequence at `p` (Unicode 15, table 3-7), or 0 when there is none. */
function utf8SequenceLength(b: Uint8Array, p: number): number {
  const c = b[p];
  if (c < 0x80) return 1;
  const cont = (k: number, lo = 0x80, hi = 0xbf): boolean => p + k < b.length && b[p + k] >= lo && b[p + k] <= hi;
  if (c >= 0xc2 && c <= 0xdf) return cont(1) ? 2 : 0;
  if (c >= 0xe0 && c <= 0xef) {
    const lo = c === 0xe0 ? 0xa0 : 0x80, hi = c === 0xed ? 0x9f : 0xbf;
    return cont(1, lo, hi) && cont(2) ? 3 : 0;
  }
  if (c >= 0xf0 && c <= 0xf4) {
    const lo = c === 0xf0 ? 0x90 : 0x80, hi = c === 0xf4 ? 0x8f : 0xbf;
    return cont(1, lo, hi) && cont(2) && cont(3) ? 4 : 0;
  }
  return 0;
}

/**
 * Most bytes of one input file read into memory (a 16-bit TIFF of a 100 MP sensor is about 600 MB;
 * camera JPEGs and RAW previews are far below). Our own limit: past it a file is "too large".
 */
export const maxInputBytes = 768 * 1024 * 1024;

/**
 * Bytes of input (and of what decoding them is known to need) held at once by the frames being
 * decoded in one thread: lanes wait for room past it, and a file larger than it is decoded alone.
 * With the rest of a check (about 250 MB) this keeps a check well under 1 GiB. Our own figure.
 */
export const inputBudgetBytes = 320 * 1024 * 1024;

/** A path as the file system calls take it (bytes that crossed from a worker thread arrive as a plain Uint8Array). */
const fsPath = (p: InputPath): string | Buffer => (typeof p === 'string' || Buffer.isBuffer(p) ? p : Buffer.from(p.buffer, p.byteOffset, p.byteLength));

/** Flags for opening input: read only, and not blocking on a pipe that has no writer (checked and refused just after). */
const openFlags = constants.O_RDONLY | constants.O_NONBLOCK;

/** Throws unless the open file is a regular file: a pipe waits for ever, a device reads for ever. */
function mustBeRegular(st: { isFile(): boolean; isDirectory(): boolean }, path: InputPath): void {
  if (st.isDirectory()) throw new FileProblem('folder', `${pathText(path)} is a folder, not a picture`);
  if (!st.isFile()) throw new FileProblem('not-regular', `${pathText(path)} is not a regular file (a pipe, a device or a socket): not read`);
}

/** Opens an input file for reading, refusing anything but a regular file; the caller closes it. */
export async function openInput(path: InputPath): Promise<{ handle: FileHandle; size: number }> {
  const handle = await open(fsPath(path), openFlags);
  try {
    const st = await handle.stat();
    mustBeRegular(st, path);
    return { handle, size: st.size };
  } catch (err) {
    await handle.close();
    throw err;
  }
}

/** The same, synchronous, for readers that walk a file's structure a page at a time. */
export function openInputSync(path: InputPath): { fd: number; size: number } {
  const fd = openSync(fsPath(path), openFlags);
  try {
    const st = fstatSync(fd);
    mustBeRegular(st, path);
    return { fd, size: st.size };
  } catch (err) {
    closeSync(fd);
    throw err;
  }
}

/**
 * Reads `length` bytes at `offset` of an open file into a new buffer, all of them or an error: an
 * input error of the medium (EIO) comes as the system's error, a file that ends early (cut short
 * while it was read) as a read error of its own. `length` must have been capped by the caller.
 */
export function readExactSync(fd: number, offset: number, length: number): Buffer {
  const out = Buffer.alloc(length);
  for (let at = 0; at < length; ) {
    const n = readSync(fd, out, at, length - at, offset + at);
    if (n === 0) throw new FileProblem('short-read', `the file ended ${offset + at} bytes in, before the ${offset + length} its size promised`);
    at += n;
  }
  return out;
}

/**
 * A file read whole into memory, so that no decoder maps it: a read fault on a mapping (a bad
 * sector, a card pulled, a file cut short while it is decoded) is a signal that ends the process,
 * while a read fault here is an error for that file alone. Only a regular file is opened; the
 * size comes from the open file (fstat), and a file over `limit` bytes is refused before anything
 * is allocated. `head` reads only that many first bytes.
 */
export async function readInput(path: InputPath, options: { limit?: number; head?: number } = {}): Promise<Buffer> {
  const limit = Math.min(options.limit ?? maxInputBytes, maxInputBytes);
  const { handle, size } = await openInput(path);
  try {
    const want = Math.min(size, options.head ?? size);
    if (want > limit) throw new FileProblem('over-read-limit', `${pathText(path)} is ${size} bytes, over the ${limit} bytes read at most`);
    const out = Buffer.alloc(want);
    await readInto(handle, out, 0);
    return out;
  } finally {
    await handle.close();
  }
}

/** Fills `out` from byte `from` of the file on, at the same offsets, 4 MiB a read; a file that ends sooner is a read error. */
async function readInto(handle: FileHandle, out: Buffer, from: number): Promise<void> {
  for (let at = from; at < out.length; ) {
    const { bytesRead } = await handle.read(out, at, Math.min(out.length - at, 4 << 20), at);
    if (bytesRead === 0) throw new FileProblem('short-read', `the file ended ${at} bytes in, before the ${out.length} its size promised`);
    at += bytesRead;
  }
}

/** The first `n` bytes of an input file (all of it when shorter), and its size. */
export async function readInputHead(path: InputPath, n: number): Promise<{ bytes: Buffer; size: number }> {
  const { handle, size } = await openInput(path);
  try {
    const want = Math.min(size, n);
    const out = Buffer.alloc(want);
    await readInto(handle, out, 0);
    return { bytes: out, size };
  } finally {
    await handle.close();
  }
}

/**
 * A file read whole (as `readInput`) when its first bytes were read already (`head`, of a file of
 * `size` bytes then): only the rest is read, unless the file changed size since.
 */
export async function readInputRest(path: InputPath, head: Buffer, size: number): Promise<Buffer> {
  if (head.length >= size) return head.subarray(0, size);
  const { handle, size: now } = await openInput(path);
  try {
    if (now !== size) return await readInput(path);
    if (size > maxInputBytes) throw new FileProblem('over-read-limit', `${pathText(path)} is ${size} bytes, over the ${maxInputBytes} bytes read at most`);
    const out = Buffer.alloc(size);
    head.copy(out);
    await readInto(handle, out, head.length);
    return out;
  } finally {
    await handle.close();
  }
}

/**
 * A counting budget of bytes in memory: `hold(n, task)` waits until `n` more fit (or nothing else
 * is held, so that one item larger than the budget still runs, alone), runs the task and gives the
 * bytes back.
 */
export function byteBudget(total: number): { hold<T>(bytes: number, task: () => Promise<T>): Promise<T>; readonly held: () => number } {
  let held = 0;
  const waiting: (() => void)[] = [];
  const wake = (): void => {
    for (const w of waiting.splice(0)) w();
  };
  return {
    held: () => held,
    async hold(bytes, task) {
      const n = Math.max(0, bytes);
      while (held > 0 && held + n > total) await new Promise<void>((r) => waiting.push(r));
      held += n;
      try {
        return await task();
      } finally {
        held -= n;
        wake();
      }
    },
  };
}

/** The one budget of the frames being decoded in this thread (each worker thread has its own). */
export const inputBudget = byteBudget(inputBudgetBytes);
