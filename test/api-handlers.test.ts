// The one handler table (src/main/api-handlers.ts) that the desktop bridge and the browser host both
// serve: every argument is checked there, the budget with the command's own validator, and a bad
// one is refused with the same words whichever transport carried it.
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { HostCallName } from '../src/common/api.js';
import type { HandlerTable } from '../src/main/api-handlers.js';
import { createHandlers } from '../src/main/api-handlers.js';
import { AppService } from '../src/main/app-service.js';
import type { BrowserHost } from '../src/main/browser-host.js';
import { startBrowserHost } from '../src/main/browser-host.js';
import { tempDir } from './helpers/cli.js';

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
