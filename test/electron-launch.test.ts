// The desktop window, launched through Playwright's Electron support where the Electron binary is
// installed. On machines that cannot download it (ours: the binary comes from outside the npm
// registry), the test is skipped and says so; nothing here loads the `electron` package.
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { _electron as electron } from 'playwright-core';
import { describe, expect, it } from 'vitest';
import { findElectronBinary } from '../src/main/electron-binary.js';
import { projectRoot } from './helpers/cli.js';

const binary = findElectronBinary();
const built = existsSync(join(projectRoot, 'dist/main/electron-main.js')) && existsSync(join(projectRoot, 'dist/renderer/index.html'));
const reason = !binary
  ? 'skipped: the Electron binary is not installed on this machine (npm does not download it here)'
  : !built
    ? 'skipped: run `npm run build` first'
    : '';

describe(`the desktop window${reason ? ` (${reason})` : ''}`, () => {
  it.skipIf(reason !== '')('opens on the demo shoot with the page isolated from Node', async () => {
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
