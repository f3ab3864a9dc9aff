// The desktop window, launched through Playwright's Electron support. It needs the Electron binary,
// which comes from outside the npm registry, so it is not part of `npm test` (which skips nothing):
// run it with `npm run test:desktop` where the binary is installed. Without the binary or a build it
// fails and says which is missing; nothing here loads the `electron` package.
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { _electron as electron } from 'playwright-core';
import { describe, expect, it } from 'vitest';
import { findElectronBinary } from '../../src/main/electron-binary.js';
import { projectRoot } from '../helpers/cli.js';

const binary = findElectronBinary();
const built = existsSync(join(projectRoot, 'dist/main/electron-main.js')) && existsSync(join(projectRoot, 'dist/renderer/index.html'));

describe('the desktop window', () => {
  it('opens on the demo shoot with the page isolated from Node', async () => {
    if (!binary) throw new Error('The Electron binary is not installed on this machine: `node node_modules/electron/install.js` fetches it where the network allows');
    if (!built) throw new Error('Expected a build in dist/ but found none: `npm run test:desktop` builds first');
    const app = await electron.launch({ executablePath: binary!, args: [projectRoot], env: { ...process.env, SEAMSCOUT_CACHE_DIR: join(projectRoot, 'test-results', 'electron-cache') } });
    try {
      const win = await app.firstWindow();
      expect(await win.evaluate(() => typeof (globalThis as { require?: unknown }).require)).toBe('undefined');
      expect(await win.evaluate(() => typeof (globalThis as { seamscout?: unknown }).seamscout)).toBe('object');
      await win.locator('[data-summary]').waitFor({ timeout: 180_000 });
      await win.screenshot({ path: join(projectRoot, 'test-results', 'desktop.png') });
    } finally {
      await app.close();
    }
  }, 240_000);
});
