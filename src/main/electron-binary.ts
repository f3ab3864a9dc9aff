import { existsSync, readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';

/**
 * The Electron executable if it is installed, found without loading the `electron` package (which
 * would try to download the binary on machines that cannot reach the download host); else null.
 */
export function findElectronBinary(): string | null {
  try {
    const require = createRequire(import.meta.url);
    const dir = dirname(require.resolve('electron/package.json'));
    const pathFile = join(dir, 'path.txt');
    if (!existsSync(pathFile)) return null;
    const exe = join(dir, 'dist', readFileSync(pathFile, 'utf8').trim());
    return existsSync(exe) ? exe : null;
  } catch {
    return null;
  }
}
