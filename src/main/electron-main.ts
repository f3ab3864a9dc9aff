// The desktop window (Electron main process). Loaded only by Electron: nothing in the tests or the
// command line imports this file.
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { app, BrowserWindow, dialog, ipcMain, protocol } from 'electron';
import type { IpcMainInvokeEvent } from 'electron';
import type { ApiCallName } from '../common/api.js';
import { callChannels, eventChannels, frameProtocol } from '../common/api.js';
import { createHandlers, frameAnswer } from './api-handlers.js';
import { AppService } from './app-service.js';
import { ensureDemoShoot } from './demo-shoot.js';
import { readAsset } from './page-assets.js';
import { appOrigin, appScheme, desktopContentSecurityPolicy, hardenEveryContents, isTrustedSender, windowOptions } from './window-options.js';

const here = dirname(fileURLToPath(import.meta.url));
const assets = join(here, '..', 'renderer');

protocol.registerSchemesAsPrivileged([
  { scheme: appScheme, privileges: { standard: true, secure: true, supportFetchAPI: true } },
  { scheme: frameProtocol, privileges: { standard: true, secure: true } },
]);

// Before anything is created: the window's contents, and any other, are hardened as they appear.
hardenEveryContents(app);

let win: BrowserWindow | null = null;
const initial = process.argv.slice(app.isPackaged ? 1 : 2).find((a) => !a.startsWith('-')) ?? null;

const service = new AppService({
  demoFolder: ensureDemoShoot,
  onProgress: (e) => win?.webContents.send(eventChannels.progress, e),
  onDone: (e) => win?.webContents.send(eventChannels.done, e),
  onPartial: (e) => win?.webContents.send(eventChannels.partial, e),
});

app.whenReady().then(async () => {

  protocol.handle(appScheme, async (request) => {
    const url = new URL(request.url);
    if (url.host !== 'app') return new Response('not found', { status: 404 });
    const asset = await readAsset(assets, url.pathname);
    if (!asset) return new Response('not found', { status: 404 });
    return new Response(new Uint8Array(asset.body), { headers: { 'Content-Type': asset.type, 'Content-Security-Policy': desktopContentSecurityPolicy } });
  });
  protocol.handle(frameProtocol, async (request) => {
    const url = new URL(request.url);
    const answer = await frameAnswer(service, { path: url.pathname.slice(1), max: url.searchParams.get('max') });
    if (answer.status === 200) return new Response(new Uint8Array(answer.image), { headers: { 'Content-Type': 'image/jpeg' } });
    return new Response(answer.text, { status: answer.status, headers: { 'Content-Type': 'text/plain; charset=utf-8' } });
  });

  const handlers = createHandlers(service, {
    shell: 'desktop',
    version: app.getVersion(),
    initialTarget: initial ? { folder: initial } : { demo: true },
    chooseFolder: async () => {
      const r = await dialog.showOpenDialog(win!, { properties: ['openDirectory'] });
      return r.canceled ? null : r.filePaths[0] ?? null;
    },
    saveExport: async (checkId, { text, name }) => {
      // The save dialog asks before replacing an existing file.
      const r = await dialog.showSaveDialog(win!, { defaultPath: name });
      if (r.canceled || !r.filePath) return null;
      return service.writeExport(checkId, r.filePath, text);
    },
  });
  for (const name of Object.keys(callChannels) as ApiCallName[]) {
    const handler = handlers[name] as (args: readonly unknown[]) => Promise<unknown>;
    ipcMain.handle(callChannels[name], (event: IpcMainInvokeEvent, ...args: unknown[]) => {
      if (!isTrustedSender(event.senderFrame?.url)) throw new Error('refused: not our page');
      return handler(args);
    });
  }

  win = new BrowserWindow(windowOptions(join(here, 'preload.cjs')));
  win.once('ready-to-show', () => win?.show());
  await win.loadURL(`${appOrigin}/index.html`);
});

app.on('window-all-closed', () => {
  void service.close().finally(() => app.quit());
});
