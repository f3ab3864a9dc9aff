// The local browser host's guards (GUIDE section 7; Electron's security checklist applied to a
// local server): a loopback address of its own only, a per-run token, our own Host and Origin only, nothing served
// outside its assets and the check's frames.
import { request } from 'node:http';
import { copyFileSync, mkdirSync, readFileSync, symlinkSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { BrowserHost } from '../../src/main/browser-host.js';
import { startBrowserHost } from '../../src/main/browser-host.js';
import { tempDir } from '../helpers/cli.js';
import { refusedAssetPaths } from '../helpers/asset-paths.js';
import { externalFixture } from '../helpers/images.js';
import { dngAround } from '../helpers/tiff-writer.js';
import sharp from 'sharp';

let host: BrowserHost;
let assets: string;

function get(path: string, headers: Record<string, string> = {}, method = 'GET', body?: string): Promise<{ status: number; body: string; headers: Record<string, string | string[] | undefined> }> {
  return new Promise((resolve, reject) => {
    // A connection per request: a check running in this thread (threads: 0) can hold the event loop
    // past the server's keep-alive timeout, which then closes a connection the client reuses.
    const req = request({ host: host.address, port: host.port, path, method, agent: false, headers: { host: `${host.address}:${host.port}`, ...headers } }, (res) => {
      let text = '';
      res.on('data', (d) => (text += d));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, body: text, headers: res.headers }));
    });
    req.on('error', reject);
    if (body) req.write(body);
    req.end();
  });
}

beforeAll(async () => {
  const root = tempDir('seamscout-host-');
  assets = join(root, 'assets');
  mkdirSync(assets);
  writeFileSync(join(assets, 'index.html'), '<!doctype html><title>test page</title>');
  writeFileSync(join(root, 'secret.txt'), 'outside the assets');
  writeFileSync(join(assets, '.env'), 'hidden');
  process.env.SEAMSCOUT_CONFIG_DIR = join(root, 'config');
  process.env.SEAMSCOUT_CACHE_DIR = join(root, 'cache');
  host = await startBrowserHost({ assets, demoFolder: async () => root, version: 'test', threads: 0 });
});
afterAll(async () => {
  await host?.close();
});

describe('browser host', () => {
  it('listens on one loopback address only', () => {
    const address = host.server.address();
    expect(typeof address === 'object' && address?.address).toBe(host.address);
    expect(host.address).toMatch(/^127\.\d+\.\d+\.\d+$/);
    expect(host.url).toMatch(/^http:\/\/127\.\d+\.\d+\.\d+:\d+\/\?t=[\w-]{20,}$/);
  });

  it('refuses requests without its token, or with a wrong one', async () => {
    expect((await get('/')).status).toBe(401);
    expect((await get('/?t=guess')).status).toBe(401);
    expect((await get(`/?t=${host.token}x`)).status).toBe(401);
    const ok = await get(`/?t=${host.token}`);
    expect(ok.status).toBe(200);
    expect(ok.body).toContain('test page');
    expect(ok.headers['content-security-policy']).toMatch(/default-src 'self'/);
  });

  it('refuses a foreign Host header (DNS rebinding) and a foreign Origin', async () => {
    expect((await get(`/?t=${host.token}`, { host: `evil.example:${host.port}` })).status).toBe(421);
    expect((await get(`/?t=${host.token}`, { host: '127.0.0.1' })).status).toBe(421);
    expect((await get(`/?t=${host.token}`, { origin: 'http://evil.example' })).status).toBe(403);
    expect((await get(`/?t=${host.token}`, { origin: `http://${host.address}:${host.port}` })).status).toBe(200);
  });

  it('takes API calls only as POST with the token header', async () => {
    const body = JSON.stringify([]);
    expect((await get(`/api/hostInfo?t=${host.token}`, {}, 'POST', body)).status).toBe(403);
    const r = await get('/api/hostInfo', { 'x-seamscout-token': host.token, 'content-type': 'application/json' }, 'POST', body);
    expect(r.status).toBe(200);
    expect(JSON.parse(r.body)).toEqual({ ok: { shell: 'browser', version: 'test', initialTarget: null, latest: null } });
    // Names inherited from Object's prototype are not calls.
    expect((await get('/api/constructor', { 'x-seamscout-token': host.token }, 'POST', body)).status).toBe(404);
  });

  it('serves nothing outside its assets, whatever the encoding', async () => {
    const t = `t=${host.token}`;
    // The same paths the resolver refuses when asked directly (test/main/page-assets.test.ts).
    for (const path of refusedAssetPaths) {
      const r = await get(`${path}?${t}`);
      expect(r.status, path).toBe(404);
      expect(r.body).not.toContain('outside the assets');
      expect(r.body).not.toContain('hidden');
    }
    expect((await get(`/?${t}`)).body).toContain('test page');
  });

  it('serves no frame that is not part of the current check', async () => {
    const t = `t=${host.token}`;
    for (const path of ['/frame/1/..%2Fsecret.txt', '/frame/1/%2Fetc%2Fpasswd', '/frame/999/x.jpg']) expect((await get(`${path}?${t}`)).status, path).toBe(404);
  });
});

describe('frames of a check through the host', () => {
  it('serves the check\'s own frames and refuses every way out of its folder', async () => {
    const root = tempDir('seamscout-bridge-');
    const card = join(root, 'card');
    mkdirSync(card);
    copyFileSync(externalFixture('leuvenA.jpg'), join(card, 'a.jpg'));
    copyFileSync(externalFixture('leuvenB.jpg'), join(card, 'b.jpg'));
    // A link inside the card that leads out of it, to a picture beside the card.
    copyFileSync(externalFixture('graf1.png'), join(root, 'outside.png'));
    symlinkSync(join(root, 'outside.png'), join(card, 'escape.png'));
    const headers = { 'x-seamscout-token': host.token, 'content-type': 'application/json' };
    const started = await get('/api/startCheck', headers, 'POST', JSON.stringify([{ folder: card }]));
    const id = JSON.parse(started.body).ok as number;
    expect(typeof id).toBe('number');
    // Wait for the check to finish (its frames resolve only then).
    const t = `t=${host.token}`;
    let ok = 0;
    for (let i = 0; i < 200 && ok !== 200; i++) {
      await new Promise((r) => setTimeout(r, 100));
      ok = (await get(`/frame/${id}/a.jpg?max=200&${t}`)).status;
    }
    expect(ok).toBe(200);
    for (const name of ['escape.png', '..%2Foutside.png', '%2E%2E%2Foutside.png', encodeURIComponent(join(root, 'outside.png')), 'sub%2F..%2F..%2Foutside.png', 'a.jpg%00.png']) {
      expect((await get(`/frame/${id}/${name}?${t}`)).status, name).toBe(404);
    }
    // An older check's frames stop resolving once a new one starts.
    expect((await get(`/frame/${id + 1}/a.jpg?${t}`)).status).toBe(404);
  }, 60_000);
});

describe('RAW+JPEG shots through the host', () => {
  const headers = (): Record<string, string> => ({ 'x-seamscout-token': host.token, 'content-type': 'application/json' });
  const call = async (name: string, ...args: unknown[]): Promise<{ status: number; json: { ok?: unknown; error?: string } }> => {
    const r = await get(`/api/${name}`, headers(), 'POST', JSON.stringify(args));
    return { status: r.status, json: JSON.parse(r.body) };
  };

  it('stores the choice beside the budget, refuses anything but jpeg or raw, and the next check reads the RAW file, shown by its preview', async () => {
    expect((await call('loadShotPreference')).json.ok).toBe('jpeg');
    await call('saveBudget', { minInliers: 44 });
    expect((await call('saveShotPreference', 'raw')).json.ok).toBe('raw');
    expect((await call('saveShotPreference', 'tiff')).json.error).toMatch(/Expected jpeg or raw/);
    expect((await call('loadShotPreference')).json.ok).toBe('raw');
    const settings = JSON.parse(readFileSync(join(process.env.SEAMSCOUT_CONFIG_DIR!, 'settings.json'), 'utf8'));
    expect(settings.prefer).toBe('raw');
    expect(settings.budget.minInliers).toBe(44);

    const card = tempDir('seamscout-host-raw-');
    for (const [name, file] of [['A', 'leuvenA.jpg'], ['B', 'leuvenB.jpg']]) {
      copyFileSync(externalFixture(file), join(card, `${name}.JPG`));
      writeFileSync(join(card, `${name}.DNG`), dngAround(readFileSync(externalFixture(file)), { sensor: [3000, 2000], orientation: 6 }));
    }
    const id = (await call('startCheck', { folder: card })).json.ok as number;
    const t = `t=${host.token}`;
    let frame = await get(`/frame/${id}/A.DNG?max=300&${t}`);
    for (let i = 0; i < 200 && frame.status !== 200; i++) {
      await new Promise((r) => setTimeout(r, 100));
      frame = await get(`/frame/${id}/A.DNG?max=300&${t}`);
    }
    expect(frame.status).toBe(200);
    expect(frame.headers['content-type']).toBe('image/jpeg');
    // The JPEG of the same shot is not a frame of this check.
    expect((await get(`/frame/${id}/A.JPG?max=300&${t}`)).status).toBe(404);
    await call('saveShotPreference', 'jpeg');
  }, 60_000);

  it('shows a RAW frame upright by the RAW file\'s orientation', async () => {
    const card = tempDir('seamscout-host-raw-upright-');
    for (const [name, file] of [['A', 'leuvenA.jpg'], ['B', 'leuvenB.jpg']]) writeFileSync(join(card, `${name}.DNG`), dngAround(readFileSync(externalFixture(file)), { sensor: [3000, 2000], orientation: 6 }));
    const id = (await call('startCheck', { folder: card })).json.ok as number;
    const t = `t=${host.token}`;
    let status = 0;
    let body: Buffer = Buffer.alloc(0);
    for (let i = 0; i < 200 && status !== 200; i++) {
      await new Promise((r) => setTimeout(r, 100));
      const res = await fetch(`${host.url.split('/?')[0]}/frame/${id}/A.DNG?max=300&${t}`);
      status = res.status;
      body = Buffer.from(await res.arrayBuffer());
    }
    expect(status).toBe(200);
    // Orientation 6 turns the landscape preview to portrait (TIFF 6.0, Orientation).
    const meta = await sharp(body).metadata();
    // The preview is 751 x 563: upright it is 225 x 300 at most 300 px, not the 16 x 8 thumbnail
    // a TIFF reader finds first in the file.
    expect([meta.width, meta.height]).toEqual([Math.round((300 * 563) / 751), 300]);
  }, 60_000);
});
