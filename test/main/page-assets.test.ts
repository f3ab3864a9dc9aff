// The page's files as both shells serve them (src/main/page-assets.ts): the browser host answers
// HTTP with readAsset, the desktop window's app scheme answers with the same function, so the paths
// refused here are refused by both.
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { buildContentSecurityPolicy, readAsset, resolveAsset } from '../../src/main/page-assets.js';
import { desktopContentSecurityPolicy } from '../../src/main/window-options.js';
import { tempDir } from '../helpers/cli.js';
import { refusedAssetPaths } from '../helpers/asset-paths.js';

let root: string;
let assets: string;

beforeAll(() => {
  root = tempDir('seamscout-assets-');
  assets = join(root, 'assets');
  mkdirSync(join(assets, 'assets'), { recursive: true });
  writeFileSync(join(assets, 'index.html'), '<!doctype html><title>page</title>');
  writeFileSync(join(assets, 'favicon.svg'), '<svg xmlns="http://www.w3.org/2000/svg"/>');
  writeFileSync(join(assets, 'assets', 'main-1a2b.js'), 'export {};');
  writeFileSync(join(assets, '.env'), 'hidden');
  writeFileSync(join(root, 'secret.txt'), 'outside the assets');
});

describe('the page asset resolver', () => {
  it('resolves the page, its icon and its built files inside the folder', async () => {
    expect(resolveAsset(assets, '/')).toBe(join(assets, 'index.html'));
    expect(resolveAsset(assets, '/favicon.ico')).toBe(join(assets, 'favicon.svg'));
    expect(resolveAsset(assets, '/assets/main-1a2b.js')).toBe(join(assets, 'assets', 'main-1a2b.js'));
    const page = await readAsset(assets, '/');
    expect(page?.name).toBe('index.html');
    expect(page?.type).toBe('text/html; charset=utf-8');
    expect(page?.body.toString()).toContain('<title>page</title>');
    expect((await readAsset(assets, '/assets/main-1a2b.js'))?.type).toBe('text/javascript; charset=utf-8');
    expect(await readAsset(assets, '/missing.js')).toBeNull();
  });

  it('refuses dot-segments, hidden files, encoded slashes, NUL, bad encoding and anything outside the folder', async () => {
    for (const path of refusedAssetPaths) {
      expect(resolveAsset(assets, path), path).toBeNull();
      expect(await readAsset(assets, path), path).toBeNull();
    }
  });
});

describe('the content security policy', () => {
  // The policies the two shells sent before they shared one builder, kept word for word.
  it('is the same policy in both shells, the desktop adding only its frame scheme for images', () => {
    expect(buildContentSecurityPolicy()).toBe(
      "default-src 'self'; img-src 'self' data: blob:; style-src 'self'; script-src 'self'; connect-src 'self'; object-src 'none'; base-uri 'none'; form-action 'none'; frame-ancestors 'none'",
    );
    expect(desktopContentSecurityPolicy).toBe(
      "default-src 'self'; img-src 'self' data: blob: seamscout-frame:; style-src 'self'; script-src 'self'; connect-src 'self'; object-src 'none'; base-uri 'none'; form-action 'none'; frame-ancestors 'none'",
    );
  });
});
