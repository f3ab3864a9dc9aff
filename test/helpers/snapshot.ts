import { createHash } from 'node:crypto';
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join, relative } from 'node:path';

/** Every file below a folder with its bytes' hash, and the listing itself. */
export function snapshot(folder: string): string[] {
  const out: string[] = [];
  const walk = (dir: string): void => {
    for (const e of readdirSync(dir, { withFileTypes: true }).sort((a, b) => (a.name < b.name ? -1 : 1))) {
      const p = join(dir, e.name);
      if (e.isSymbolicLink()) out.push(`${relative(folder, p)} -> link`);
      else if (e.isDirectory()) {
        out.push(`${relative(folder, p)}/`);
        walk(p);
      } else {
        const st = statSync(p);
        const hash = st.mode & 0o444 ? createHash('sha256').update(readFileSync(p)).digest('hex') : 'unreadable';
        out.push(`${relative(folder, p)} ${st.size} ${st.mtimeMs} ${hash}`);
      }
    }
  };
  walk(folder);
  return out;
}

