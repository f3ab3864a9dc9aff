import { randomBytes } from 'node:crypto';
import { closeSync, constants as fsConstants, openSync, renameSync, unlinkSync } from 'node:fs';
import type { Stats } from 'node:fs';
import { access, link, lstat, open, readdir, realpath, rename, stat, unlink } from 'node:fs/promises';
import { basename, dirname, isAbsolute, join, relative, sep } from 'node:path';

// Our temp files say whose they are, so a later run can tell its own leftovers from anything else.
const tempPattern = /^\..+\.seamscout-(\d+)-[0-9a-f]{8}\.tmp$/;
// How temp files were named before they carried our name (`.<name>.<pid>.<8 hex>.tmp`).
const legacyTempPattern = /^\..+\.(\d+)\.[0-9a-f]{8}\.tmp$/;
/** A temp file older than this belongs to no write in progress, whoever's pid it names (a write takes seconds). */
const staleAfterMs = 60 * 60 * 1000;

/** Name of a temp file beside `target`: `.<name>.seamscout-<pid>-<random>.tmp`. */
export function tempPathFor(target: string): string {
  // Cut to 50 characters (at most 200 bytes of UTF-8): the temp name stays within the 255 bytes most
  // file systems allow.
  return join(dirname(target), `.${Array.from(basename(target)).slice(0, 50).join('')}.seamscout-${process.pid}-${randomBytes(4).toString('hex')}.tmp`);
}

// Temp files of writes in progress, removed on every way out we can see: an error, exit, a signal.
const live = new Set<string>();
const signals = ['SIGINT', 'SIGTERM', 'SIGHUP'] as const;

function removeLive(): void {
  for (const path of live) {
    try {
      unlinkSync(path);
    } catch {
      // Gone already, or never made.
    }
  }
  live.clear();
}

function onSignal(signal: NodeJS.Signals): void {
  removeLive();
  setHandlers(false);
  // Where someone else listens (the browser host's shutdown), they decide what follows; alone, the
  // process ends as the signal would have ended it (exit status 128 + signal for the shell).
  if (process.listenerCount(signal) === 0) process.kill(process.pid, signal);
}

let handlersOn = false;
function setHandlers(on: boolean): void {
  if (on === handlersOn) return;
  handlersOn = on;
  // Listening only while a write is in progress leaves the default Ctrl-C behaviour alone otherwise.
  for (const s of signals) {
    if (on) process.on(s, onSignal);
    else process.off(s, onSignal);
  }
}
process.on('exit', removeLive);

function track(path: string): void {
  live.add(path);
  setHandlers(true);
}

function untrack(path: string): void {
  live.delete(path);
  if (live.size === 0) setHandlers(false);
}

function pidAlive(pid: number): boolean {
  if (pid === process.pid) return true;
  try {
    process.kill(pid, 0);
    return true;
  } catch (err) {
    return (err as NodeJS.ErrnoException).code === 'EPERM';
  }
}

const swept = new Set<string>();

/**
 * Removes our own temp files left in `dir` by a run that ended without cleaning up (power cut,
 * SIGKILL): those whose process is gone, and any older than an hour. Once per folder per process;
 * returns the names removed. Other files are never touched.
 */
export async function sweepStaleTemps(dir: string, now = Date.now()): Promise<string[]> {
  if (swept.has(dir)) return [];
  swept.add(dir);
  const removed: string[] = [];
  let names: string[];
  try {
    names = await readdir(dir);
  } catch {
    return removed;
  }
  for (const name of names) {
    const ours = tempPattern.exec(name);
    const legacy = ours ? null : legacyTempPattern.exec(name);
    if (!ours && !legacy) continue;
    const path = join(dir, name);
    if (live.has(path)) continue;
    try {
      const st = await lstat(path);
      if (!st.isFile()) continue;
      const pid = Number((ours ?? legacy)![1]);
      // One of ours not in progress here is stale when its process is gone or it is old; an old-style
      // name carries no mark of ours, so it goes only when its process is gone.
      const stale = ours ? pid === process.pid || !pidAlive(pid) || now - st.mtimeMs > staleAfterMs : !pidAlive(pid);
      if (!stale) continue;
      await unlink(path);
      removed.push(name);
    } catch {
      // Taken by someone else meanwhile, or not ours to remove.
    }
  }
  return removed;
}

function kindOf(st: Stats): string {
  if (st.isDirectory()) return 'a folder';
  if (st.isCharacterDevice() || st.isBlockDevice()) return 'a device';
  if (st.isFIFO()) return 'a named pipe';
  if (st.isSocket()) return 'a socket';
  return 'not a regular file';
}

/** The target's real path: symbolic links and `..` resolved as far as the path exists. */
async function realTarget(target: string): Promise<string> {
  let head = target;
  const tail: string[] = [];
  for (;;) {
    try {
      return join(await realpath(head), ...tail);
    } catch (err) {
      const parent = dirname(head);
      if (parent === head || (err as NodeJS.ErrnoException).code !== 'ENOENT') return target;
      tail.unshift(basename(head));
      head = parent;
    }
  }
}

async function isInside(target: string, folder: string): Promise<boolean> {
  let realFolder: string, folderStat: Stats;
  try {
    realFolder = await realpath(folder);
    folderStat = await stat(realFolder);
  } catch {
    return false;
  }
  const real = await realTarget(target);
  const rel = relative(realFolder, real);
  if (rel === '' || (rel !== '..' && !rel.startsWith('..' + sep) && !isAbsolute(rel))) return true;
  // The same folder under another spelling (a case-insensitive card, a bind mount) is the same file
  // system object: compare device and inode up the target's folders.
  for (let p = dirname(real); ; p = dirname(p)) {
    try {
      const st = await stat(p);
      if (st.dev === folderStat.dev && st.ino === folderStat.ino) return true;
    } catch {
      // A folder that does not exist yet is not the checked one.
    }
    if (dirname(p) === p) return false;
  }
}

export interface ExportTargetOptions {
  /** The folder being checked: nothing is written into it or below it. */
  readonly outside?: string;
  /** Replace an existing regular file (otherwise an existing target is an error and left untouched). */
  readonly overwrite?: boolean;
}

/**
 * Refuses an export target that must never be written: one inside the checked folder (by real path,
 * so a symbolic link or `..` does not get round it), anything but a regular file (a device, a named
 * pipe, a folder, or a symbolic link to one), which an export must never replace, one whose folder
 * is missing or takes no new files (read-only, or no permission), and without `overwrite` any
 * existing file.
 */
export async function expectExportTarget(target: string, options: ExportTargetOptions = {}): Promise<void> {
  if (options.outside !== undefined && (await isInside(target, options.outside))) {
    throw new Error(`Cannot write ${target}: it is inside the folder being checked (${options.outside}), which is never written to; choose a place outside it`);
  }
  // The folder it goes into must exist and take new files (the temp file is made there first).
  const folder = dirname(target);
  let inFolder: Stats | null = null;
  try {
    inFolder = await stat(folder);
  } catch {
    // Said below.
  }
  if (!inFolder) throw new Error(`Cannot write ${target}: its folder ${folder} does not exist`);
  if (!inFolder.isDirectory()) throw new Error(`Cannot write ${target}: ${folder} is not a folder`);
  try {
    await access(folder, fsConstants.W_OK | fsConstants.X_OK);
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    throw new Error(`Cannot write ${target}: ${code === 'EROFS' ? 'the disk is read-only' : `no permission to write in ${folder}`}`, { cause: err });
  }
  let st: Stats;
  try {
    st = await lstat(target);
  } catch {
    return;
  }
  if (st.isSymbolicLink()) {
    let to: Stats | null = null;
    try {
      to = await stat(target);
    } catch {
      // A link to nothing: only the link is replaced, nothing it points at.
    }
    if (to && !to.isFile()) throw new Error(`Cannot write ${target}: it is a symbolic link to ${kindOf(to)}, and only regular files are ever replaced`);
  } else if (!st.isFile()) throw new Error(`Cannot write ${target}: it is ${kindOf(st)}, and only regular files are ever replaced`);
  if (!options.overwrite) throw existsError(target);
}

/** The reason a write failed, in words: what the user can do something about. */
function writeError(target: string, err: unknown): Error {
  const code = (err as NodeJS.ErrnoException).code;
  const why =
    code === 'ENOSPC' || code === 'EDQUOT' ? 'the disk is full'
      : code === 'EROFS' ? 'the disk is read-only'
        : code === 'EACCES' || code === 'EPERM' ? 'no permission to write there'
          : code === 'ENOENT' || code === 'ENOTDIR' ? 'its folder does not exist'
            : (err as Error).message;
  return new Error(`Could not write ${target}: ${why}`, { cause: err });
}

// File systems without hard links (FAT, exFAT, some network shares) refuse link() with these.
const noHardLinks = new Set(['EPERM', 'ENOTSUP', 'EOPNOTSUPP', 'ENOSYS']);

// For tests of interrupted writes only: pause this many ms half-way through writing the temp file.
const slowWriteMs = (): number => Number(process.env.SEAMSCOUT_TEST_SLOW_WRITE_MS) || 0;

/**
 * Writes a file atomically: into a temp file beside the target, flushed, then moved into place, so
 * a reader never sees half a file. Without `overwrite`, an existing target is an error and is left
 * untouched: the final step is a hard link (which fails if the name exists), or, where the file
 * system has none (FAT, exFAT), the name is reserved by an exclusive create and the temp file
 * renamed over the reservation. Only a regular file is ever replaced; `outside` names a folder the
 * target must not be in. The temp file is removed on error, exit and SIGINT/SIGTERM/SIGHUP, and our
 * stale temp files in the target's folder are swept first.
 */
export async function writeFileAtomic(target: string, content: string | Uint8Array, options: ExportTargetOptions | boolean = {}): Promise<void> {
  const { overwrite = false, outside } = typeof options === 'boolean' ? { overwrite: options, outside: undefined } : options;
  await expectExportTarget(target, { outside, overwrite });
  await sweepStaleTemps(dirname(target));
  const tmp = tempPathFor(target);
  track(tmp);
  try {
    let fh;
    try {
      fh = await open(tmp, 'wx');
    } catch (err) {
      throw writeError(target, err);
    }
    let failure: unknown = null;
    try {
      const data = typeof content === 'string' ? Buffer.from(content) : content;
      const pause = slowWriteMs();
      if (pause > 0) {
        const half = data.subarray(0, data.length >> 1);
        await fh.writeFile(half);
        await new Promise((r) => setTimeout(r, pause));
        await fh.writeFile(data.subarray(half.length));
      } else await fh.writeFile(data);
      await fh.sync();
    } catch (err) {
      failure = err;
    }
    // Some file systems (network, FUSE) report a full disk only when the file is closed.
    try {
      await fh.close();
    } catch (err) {
      failure ??= err;
    }
    if (failure) throw writeError(target, failure);
    if (overwrite) {
      try {
        await rename(tmp, target);
      } catch (err) {
        throw writeError(target, err);
      }
      return;
    }
    try {
      await link(tmp, target);
    } catch (err) {
      const code = (err as NodeJS.ErrnoException).code ?? '';
      if (code === 'EEXIST') throw existsError(target, err);
      if (!noHardLinks.has(code)) throw writeError(target, err);
      // No hard links here. Synchronous, so no signal handler runs between the reservation and the
      // rename: the name is never left holding an empty file by a Ctrl-C.
      try {
        closeSync(openSync(target, 'wx'));
      } catch (e) {
        if ((e as NodeJS.ErrnoException).code === 'EEXIST') throw existsError(target, e);
        throw writeError(target, e);
      }
      try {
        renameSync(tmp, target);
      } catch (e) {
        try {
          unlinkSync(target);
        } catch {
          // The reservation is ours; if it cannot be removed, the rename's error says enough.
        }
        throw writeError(target, e);
      }
    }
  } finally {
    await unlink(tmp).catch(() => {});
    untrack(tmp);
  }
}

function existsError(target: string, cause?: unknown): Error {
  return new Error(`Expected a new file for ${target} but it exists (use --force to overwrite)`, { cause });
}
