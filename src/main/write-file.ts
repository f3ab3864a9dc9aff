import { randomBytes } from 'node:crypto';
import { link, open, rename, unlink } from 'node:fs/promises';
import { basename, dirname, join } from 'node:path';

/**
 * Writes a file atomically: into a temporary file beside the target, flushed, then moved into place,
 * so a reader never sees half a file. Without `overwrite`, an existing target is an error and is
 * left untouched (the final step is a hard link, which fails if the name exists).
 */
export async function writeFileAtomic(target: string, content: string | Uint8Array, overwrite = false): Promise<void> {
  const tmp = join(dirname(target), `.${basename(target)}.${process.pid}.${randomBytes(4).toString('hex')}.tmp`);
  const fh = await open(tmp, 'wx');
  try {
    await fh.writeFile(content);
    await fh.sync();
  } finally {
    await fh.close();
  }
  try {
    if (overwrite) await rename(tmp, target);
    else {
      await link(tmp, target);
      await unlink(tmp);
    }
  } catch (err) {
    await unlink(tmp).catch(() => {});
    if ((err as NodeJS.ErrnoException).code === 'EEXIST') {
      throw new Error(`Expected a new file for ${target} but it exists (use --force to overwrite)`, { cause: err });
    }
    throw err;
  }
}
