// The app's start: folders that cannot be opened said plainly, the demo shoot's first writing told
// as progress, a page loaded again never starting a check again, the favicon, and settings files
// of earlier versions (overlaps as shares) read with a note in the app and the command.
import { copyFileSync, mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { budgetFromTyped } from '../../src/core/sequence/budget.js';
import { defaultBudget } from '../../src/core/sequence/report.js';
import type { CheckDoneEvent, CheckProgressEvent, HostInfo } from '../../src/common/api.js';
import type { AppServiceOptions } from '../../src/main/app-service.js';
import { AppService, cannotOpen } from '../../src/main/app-service.js';
import type { BrowserHost } from '../../src/main/browser-host.js';
import { startBrowserHost } from '../../src/main/browser-host.js';
import { readSettings, settingsBudget, shareOverlapNote } from '../../src/main/settings.js';
import { loadStoredBudget, storeBudget, storedSettingsInfo } from '../../src/main/settings-store.js';
import { projectRoot, runCli, tempDir } from '../helpers/cli.js';

/** Runs one check through the service and gives its progress events and how it ended. */
async function oneCheck(target: { folder: string } | { demo: true }, demoFolder: AppServiceOptions['demoFolder'] = async () => tempDir()) {
  const progress: CheckProgressEvent[] = [];
  let done: (e: CheckDoneEvent) => void = () => undefined;
  const ended = new Promise<CheckDoneEvent>((r) => (done = r));
  const service = new AppService({ demoFolder, threads: 0, onProgress: (e) => progress.push(e), onDone: (e) => done(e) });
  expect(service.hasStarted).toBe(false);
  const id = await service.startCheck(target);
  expect(service.hasStarted).toBe(true);
  const end = await ended;
  const latest = service.latest();
  await service.close();
  return { id, progress, end, latest };
}

describe('a folder that cannot be opened', () => {
  it('is said in plain words, whatever the system said', () => {
    const err = (code: string): Error => Object.assign(new Error(`${code}: raw system text, realpath '/x'`), { code });
    expect(cannotOpen('/media/card', err('ENOENT'))).toBe('cannot open /media/card (there is no such folder)');
    expect(cannotOpen('/media/card', err('ENOTDIR'))).toBe('cannot open /media/card (it is a file, not a folder)');
    expect(cannotOpen('/media/card', err('EACCES'))).toBe('cannot open /media/card (there is no permission to read it)');
    expect(cannotOpen('/media/card', err('EIO'))).toBe('cannot open /media/card (the card or disk could not be read there)');
    expect(cannotOpen('/media/card', err('EWHATEVER'))).toBe('cannot open /media/card (it cannot be read)');
  });

  it('ends the check with that message for a missing folder and for a file, and the host keeps no check to show again', async () => {
    const dir = tempDir();
    const missing = await oneCheck({ folder: join(dir, 'nowhere') });
    expect(missing.end.error).toBe(`cannot open ${join(dir, 'nowhere')} (there is no such folder)`);
    expect(missing.latest).toBeNull();
    writeFileSync(join(dir, 'a.jpg'), 'x');
    const file = await oneCheck({ folder: join(dir, 'a.jpg') });
    expect(file.end.error).toBe(`cannot open ${join(dir, 'a.jpg')} (it is a file, not a folder)`);
    expect(file.end.error).not.toMatch(/E[A-Z]{3,}/);
  });
});

describe('the demo shoot written on first use', () => {
  it('is told as progress of its check (phase demo, the estimate first), before the check itself', async () => {
    const folder = tempDir();
    const r = await oneCheck({ demo: true }, async (writing) => {
      writing?.onStart?.(3, 27);
      for (let i = 1; i <= 3; i++) writing?.onFrame?.(`F${i}.jpg`, i, 3);
      return folder;
    });
    const demo = r.progress.filter((e) => e.phase === 'demo');
    expect(demo.map((e) => [e.checkId, e.done, e.total])).toEqual([[r.id, 0, 3], [r.id, 1, 3], [r.id, 2, 3], [r.id, 3, 3]]);
    expect(demo[0].secondsLeft).toBe(27);
    expect(demo.at(-1)!.secondsLeft).toBe(0);
    // Every event of the demo comes before any of the check, and the check then reads the demo's folder.
    expect(r.progress.slice(0, demo.length)).toEqual(demo);
    expect(r.end.error).toBeNull();
    expect(r.latest?.folder).toBe(folder);
  });
});

describe('the browser host across page loads', () => {
  let host: BrowserHost;
  let card: string;
  const call = async (name: string, ...args: unknown[]): Promise<unknown> => {
    const res = await fetch(`http://${host.address}:${host.port}/api/${name}`, { method: 'POST', headers: { 'x-seamscout-token': host.token, 'content-type': 'application/json' }, body: JSON.stringify(args) });
    const body = (await res.json()) as { ok?: unknown; error?: string };
    if (body.error) throw new Error(body.error);
    return body.ok;
  };
  beforeAll(async () => {
    const root = tempDir('seamscout-start-');
    const assets = join(root, 'assets');
    mkdirSync(assets);
    writeFileSync(join(assets, 'index.html'), '<!doctype html><title>test page</title>');
    copyFileSync(join(projectRoot, 'src/renderer/public/favicon.svg'), join(assets, 'favicon.svg'));
    card = join(root, 'card');
    mkdirSync(card);
    process.env.SEAMSCOUT_CONFIG_DIR = join(root, 'config');
    process.env.SEAMSCOUT_CACHE_DIR = join(root, 'cache');
    host = await startBrowserHost({ assets, demoFolder: async () => card, version: 'test', threads: 0, initialTarget: { folder: card } });
  });
  afterAll(async () => {
    await host?.close();
  });

  it('serves its own icon for /favicon.ico and the page\'s link', async () => {
    for (const path of ['/favicon.ico', '/favicon.svg']) {
      const res = await fetch(`http://${host.address}:${host.port}${path}?t=${host.token}`);
      expect(res.status).toBe(200);
      expect(res.headers.get('content-type')).toBe('image/svg+xml');
      expect(await res.text()).toMatch(/^<svg /);
    }
  });

  it('gives the first target only until a check starts; a page loaded again gets that check', async () => {
    const before = (await call('hostInfo')) as HostInfo;
    expect(before.initialTarget).toEqual({ folder: card });
    expect(before.latest).toBeNull();
    const id = (await call('startCheck', { folder: card })) as number;
    let after = (await call('hostInfo')) as HostInfo;
    expect(after.initialTarget).toBeNull();
    for (let i = 0; i < 100 && after.latest?.running; i++) {
      await new Promise((r) => setTimeout(r, 50));
      after = (await call('hostInfo')) as HostInfo;
    }
    // An empty folder: the check ends with an empty report, which the page shows again.
    expect(after.latest).toMatchObject({ checkId: id, folder: card, demo: false, running: false });
    expect(after.latest?.report?.frames).toEqual([]);
  });

  it('takes a typed path from the home folder (~/...) and says plainly what a relative one lacks', async () => {
    await expect(call('startCheck', { folder: 'DCIM/100CAMERA' })).rejects.toThrow('Expected the folder\'s full path, such as /media/card/DCIM/100CAMERA, but received DCIM/100CAMERA');
    expect(typeof (await call('startCheck', { folder: '~/seamscout-no-such-folder' }))).toBe('number');
  });
});

describe('a settings file of earlier versions, overlaps as shares', () => {
  const legacy = { budget: { reshootOverlap: 0.15, weakOverlap: 0.25, minInliers: 30 } };

  it('is read as the percentages it meant, with a note that says so', () => {
    expect(budgetFromTyped(settingsBudget(legacy, '/s.json'))).toEqual({ ...defaultBudget, reshootOverlap: 0.15, weakOverlap: 0.25, minInliers: 30 });
    expect(shareOverlapNote(legacy, '/s.json')).toBe(
      'the settings file /s.json gives overlaps as shares, as earlier versions wrote them (reshootOverlap 0.15, weakOverlap 0.25): read as reshootOverlap 15 %, weakOverlap 25 %. ' +
        'Write them in percent ("reshootOverlap": 15, "weakOverlap": 25), or save the budget from the app, which writes percent.',
    );
    // A file in percent says nothing, even with an overlap of 0 or 1 alone.
    expect(shareOverlapNote({ budget: { reshootOverlap: 20, weakOverlap: 30 } }, '/s.json')).toBeNull();
    expect(shareOverlapNote({ budget: { reshootOverlap: 0, weakOverlap: 1 } }, '/s.json')).toBeNull();
    expect(shareOverlapNote({ budget: { minInliers: 30 } }, '/s.json')).toBeNull();
  });

  it('the app: the stored budget is the one meant, the note reaches the page, and saving writes percent', async () => {
    const config = tempDir();
    process.env.SEAMSCOUT_CONFIG_DIR = config;
    const path = join(config, 'settings.json');
    writeFileSync(path, JSON.stringify(legacy));
    expect(await loadStoredBudget()).toEqual({ ...defaultBudget, reshootOverlap: 0.15, weakOverlap: 0.25, minInliers: 30 });
    const info = await storedSettingsInfo();
    expect(info.path).toBe(path);
    expect(info.note).toBe(`The ${shareOverlapNote(legacy, path)!.slice(4)}`);
    await storeBudget({ ...(await loadStoredBudget()) });
    expect((await readSettings(undefined)).budget).toMatchObject({ reshootOverlap: 15, weakOverlap: 25, minInliers: 30 });
    expect((await storedSettingsInfo()).note).toBeNull();
  });

  it('the app says so when the stored budget cannot be used, instead of taking the defaults in silence', async () => {
    const config = tempDir();
    process.env.SEAMSCOUT_CONFIG_DIR = config;
    writeFileSync(join(config, 'settings.json'), JSON.stringify({ budget: { weakOverlap: 250 } }));
    expect(await loadStoredBudget()).toEqual(defaultBudget);
    expect((await storedSettingsInfo()).note).toBe(
      `The stored budget cannot be used (Expected a percentage from 0 to 100 for weakOverlap but received 250 (settings file ${join(config, 'settings.json')})): the app uses the default budget until it is saved here, which replaces the file.`,
    );
  });

  it('the command: a note, and the values it used in percent beside the defaults', async () => {
    const dir = tempDir();
    mkdirSync(join(dir, 'photos'));
    const settings = join(dir, 'settings.json');
    writeFileSync(settings, JSON.stringify(legacy));
    const r = await runCli(['check', join(dir, 'photos'), '--settings', settings]);
    expect(r.stderr).toContain(`Settings from ${settings}: minInliers 30 (default 20), reshootOverlap 15 % (default 20 %), weakOverlap 25 % (default 30 %)\n`);
    expect(r.stderr).toContain(`note: ${shareOverlapNote(legacy, settings)}\n`);
  });
});
