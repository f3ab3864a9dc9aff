// The one handler table (src/main/api-handlers.ts) that the desktop bridge and the browser host both
// serve: every argument is checked there, the budget with the command's own validator, and a bad
// one is refused with the same words whichever transport carried it.
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { HostCallName } from '../../src/common/api.js';
import type { FrameAnswer, HandlerTable } from '../../src/main/api-handlers.js';
import { createHandlers, expectFrameRequest, frameAnswer } from '../../src/main/api-handlers.js';
import { AppService } from '../../src/main/app-service.js';
import type { BrowserHost } from '../../src/main/browser-host.js';
import { startBrowserHost } from '../../src/main/browser-host.js';
import { tempDir } from '../helpers/cli.js';

let root: string;
let host: BrowserHost;
let service: AppService;
let desktop: HandlerTable;
const saved: unknown[] = [];

/** Calls the page may send wrongly, and the words each is refused with. */
const badCalls: readonly { name: HostCallName; args: unknown[]; message: string | RegExp }[] = [
  { name: 'exportContent', args: [1, 'json', { weakOverlap: 0.1, reshootOverlap: 0.2 }], message: 'Expected the reshoot below overlap (20 %) not above the weak below overlap (10 %)' },
  { name: 'exportContent', args: [1, 'json', 'strict'], message: 'Expected a match budget (its thresholds by name) for budget but received "strict"' },
  { name: 'exportContent', args: [1, 'json', { weakOverlap: 1.5 }], message: 'Expected a percentage from 0 to 100 for the weak below overlap but received 150' },
  { name: 'exportContent', args: [1, 'tiff', {}], message: 'Expected one of json, graphml, csv, dot, coverage for format but received tiff' },
  { name: 'exportContent', args: ['1', 'json', {}], message: 'Expected a check id (a whole number from 1) for checkId but received "1"' },
  { name: 'exportReport', args: [1, 'json', { minInliers: 'lots' }], message: 'Expected a number from 0 to 10000 for the fewest inliers but received lots' },
  { name: 'saveBudget', args: ['strict'], message: 'Expected a match budget (its thresholds by name) for budget but received "strict"' },
  { name: 'saveBudget', args: [{ weakOverlap: 1.5 }], message: 'Expected a percentage from 0 to 100 for the weak below overlap but received 150' },
  { name: 'saveShotPreference', args: ['tiff'], message: 'Expected jpeg or raw for the RAW+JPEG preference but received tiff' },
  { name: 'startCheck', args: ['/media/card'], message: 'Expected { folder: <absolute path> } or { demo: true } for startCheck' },
  { name: 'startCheck', args: [{ folder: 'DCIM/100CAMERA' }], message: 'Expected the folder\'s full path, such as /media/card/DCIM/100CAMERA, but received DCIM/100CAMERA' },
  { name: 'cancelCheck', args: [-1], message: 'Expected a check id (a whole number from 1) for checkId but received -1' },
  { name: 'tiePoints', args: [1, 'a.jpg', 7], message: 'Expected a file name for b but received 7' },
];

async function overHttp(name: string, args: unknown[]): Promise<{ ok?: unknown; error?: string }> {
  const res = await fetch(`http://${host.address}:${host.port}/api/${name}`, {
    method: 'POST',
    headers: { 'Content-Type': 'application/json', 'X-Seamscout-Token': host.token },
    body: JSON.stringify(args),
  });
  expect(res.status).toBe(200);
  return (await res.json()) as { ok?: unknown; error?: string };
}

async function refusal(promise: Promise<unknown>): Promise<string> {
  try {
    await promise;
  } catch (err) {
    return (err as Error).message;
  }
  throw new Error('expected the call to be refused');
}

beforeAll(async () => {
  root = tempDir('seamscout-handlers-');
  process.env.SEAMSCOUT_CONFIG_DIR = join(root, 'config');
  process.env.SEAMSCOUT_CACHE_DIR = join(root, 'cache');
  service = new AppService({ demoFolder: async () => root, threads: 0, onProgress: () => {}, onDone: () => {} });
  desktop = createHandlers(service, {
    shell: 'desktop',
    version: 'test',
    initialTarget: { demo: true },
    chooseFolder: async () => null,
    saveExport: async (id, content) => {
      saved.push([id, content]);
      return null;
    },
  });
  host = await startBrowserHost({ assets: root, demoFolder: async () => root, version: 'test', threads: 0 });
});
afterAll(async () => {
  await host?.close();
  await service?.close();
});

describe('the handler table both transports serve', () => {
  it('refuses each bad argument with the same words through the table and through the browser host', async () => {
    for (const call of badCalls) {
      const direct = await refusal(desktop[call.name](call.args));
      expect(direct, call.name).toEqual(call.message);
      const http = await overHttp(call.name, call.args);
      expect(http.ok, call.name).toBeUndefined();
      expect(http.error, `${call.name} over HTTP`).toBe(direct);
    }
    // Nothing refused was stored, and the desktop's save dialog never opened for a bad export.
    expect(existsSync(join(root, 'config', 'settings.json'))).toBe(false);
    expect(saved).toEqual([]);
  });

  it('answers good arguments alike through both: the stored choice, and the host as each shell describes it', async () => {
    expect(await desktop.saveShotPreference(['raw'])).toBe('raw');
    expect((await overHttp('loadShotPreference', [])).ok).toBe('raw');
    expect(await desktop.hostInfo([])).toEqual({ shell: 'desktop', version: 'test', initialTarget: { demo: true }, latest: null });
    expect((await overHttp('hostInfo', [])).ok).toEqual({ shell: 'browser', version: 'test', initialTarget: null, latest: null });
    // A check id that is well formed but not the current check's is the service's to refuse.
    expect(await refusal(desktop.tiePoints([5, 'a.jpg', 'b.jpg']))).toBe('Expected the id of the current check but received 5');
  });
});

describe('frame addresses, checked once for both transports', () => {
  /** A frame through the browser host, as the page's img asks for it. */
  async function frameOverHttp(path: string, max: string | null): Promise<{ status: number; text: string }> {
    const query = `${max === null ? '' : `max=${encodeURIComponent(max)}&`}t=${host.token}`;
    const res = await fetch(`http://${host.address}:${host.port}/frame/${path}?${query}`);
    return { status: res.status, text: await res.text() };
  }
  /** The same through the desktop's frame protocol handler (electron-main.ts passes the URL's path and max to frameAnswer). */
  async function frameOverProtocol(path: string, max: string | null): Promise<{ status: number; text: string }> {
    const a: FrameAnswer = await frameAnswer(service, { path, max });
    return a.status === 200 ? { status: 200, text: '' } : { status: a.status, text: a.text };
  }

  const idWords = (v: string): string => `Expected a check id (a whole number from 1) for checkId but received ${JSON.stringify(v)}`;
  const maxWords = (v: string): string => `Expected a whole number of pixels from 32 to 2400 for max but received ${JSON.stringify(v)}`;
  const badFrames: readonly { path: string; max: string | null; text: string }[] = [
    { path: 'abc/a.jpg', max: '320', text: idWords('abc') },
    { path: '0/a.jpg', max: '320', text: idWords('0') },
    { path: '-1/a.jpg', max: '320', text: idWords('-1') },
    { path: '1.5/a.jpg', max: '320', text: idWords('1.5') },
    { path: '1e3/a.jpg', max: '320', text: idWords('1e3') },
    { path: '99999999999999999999/a.jpg', max: '320', text: idWords('99999999999999999999') },
    { path: '1/a.jpg', max: 'abc', text: maxWords('abc') },
    { path: '1/a.jpg', max: '', text: maxWords('') },
    { path: '1/a.jpg', max: '99999', text: maxWords('99999') },
    { path: '1/a.jpg', max: '31', text: maxWords('31') },
    { path: '1/a.jpg', max: '2401', text: maxWords('2401') },
    { path: '1/a.jpg', max: '320.5', text: maxWords('320.5') },
    { path: '1/a.jpg', max: '-320', text: maxWords('-320') },
    { path: '1/%E0%A4%A', max: '320', text: 'Expected a percent-encoded file name for file but received "%E0%A4%A"' },
  ];

  it('refuses a bad check id, size or name with the same words and status from the browser host and the desktop protocol', async () => {
    for (const f of badFrames) {
      const desktopAnswer = await frameOverProtocol(f.path, f.max);
      expect(desktopAnswer, `${f.path} max=${f.max}`).toEqual({ status: 400, text: f.text });
      expect(await frameOverHttp(f.path, f.max), `${f.path} max=${f.max} over HTTP`).toEqual(desktopAnswer);
    }
  });

  it('answers a well-formed address of no check\'s frame alike from both, as not found', async () => {
    for (const [path, max] of [['999/x.jpg', '320'], ['999/x.jpg', null], ['1/..%2Fsecret.txt', '1200']] as const) {
      const desktopAnswer = await frameOverProtocol(path, max);
      expect(desktopAnswer, path).toEqual({ status: 404, text: 'no such frame' });
      expect(await frameOverHttp(path, max), `${path} over HTTP`).toEqual(desktopAnswer);
    }
  });

  it('reads the id, the name and the size the page sends, the ends of the size range included', () => {
    expect(expectFrameRequest({ path: '12/IMG%200001.JPG', max: '1200' })).toEqual({ checkId: 12, file: 'IMG 0001.JPG', maxSide: 1200 });
    expect(expectFrameRequest({ path: '3/sub%2Fa.jpg', max: null })).toEqual({ checkId: 3, file: 'sub/a.jpg', maxSide: 320 });
    expect(expectFrameRequest({ path: '1/a.jpg', max: '32' }).maxSide).toBe(32);
    expect(expectFrameRequest({ path: '1/a.jpg', max: '2400' }).maxSide).toBe(2400);
  });
});
