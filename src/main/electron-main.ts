// The desktop window (Electron main process). Loaded only by Electron: nothing in the tests or the
// command line imports this file.
import { dirname, join, isAbsolute } from 'node:path';
import { fileURLToPath } from 'node:url';
import { app, BrowserWindow, dialog, ipcMain, protocol } from 'electron';
import type { IpcMainInvokeEvent } from 'electron';
import { channels, expectExportFormat, frameProtocol } from './app-api.js';
import { AppService } from './app-service.js';
import { loadStoredBudget, loadStoredPreference, storeBudget, storedSettingsInfo, storePreference } from './settings-store.js';
import { ensureDemoShoot } from './demo-shoot.js';
import { readRecentFolders } from './recent-folders.js';
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
  onProgress: (e) => win?.webContents.send(channels.progress, e),
  onDone: (e) => win?.webContents.send(channels.done, e),
  onPartial: (e) => win?.webContents.send(channels.partial, e),
});

function handle(channel: string, fn: (...args: unknown[]) => unknown): void {
  ipcMain.handle(channel, (event: IpcMainInvokeEvent, ...args: unknown[]) => {
    if (!isTrustedSender(event.senderFrame?.url)) throw new Error('refused: not our page');
    return fn(...args);
  });
}

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
    const [, id, ...rest] = url.pathname.split('/');
    const image = await service.frameImage(Number(id), decodeURIComponent(rest.join('/')), Number(url.searchParams.get('max') ?? 320)).catch(() => null);
    return image ? new Response(new Uint8Array(image), { headers: { 'Content-Type': 'image/jpeg' } }) : new Response('not found', { status: 404 });
  });

  // A page loaded again gets the check it started, never its first target again.
  handle(channels.hostInfo, () => ({ shell: 'desktop', version: app.getVersion(), initialTarget: service.hasStarted ? null : initial ? { folder: initial } : { demo: true }, latest: service.latest() }));
  handle(channels.chooseFolder, async () => {
    const r = await dialog.showOpenDialog(win!, { properties: ['openDirectory'] });
    return r.canceled ? null : r.filePaths[0] ?? null;
  });
  handle(channels.recentFolders, () => readRecentFolders());
  handle(channels.startCheck, (target) => {
    const t = target as { folder?: unknown; demo?: unknown };
    if (t?.demo === true) return service.startCheck({ demo: true });
    if (typeof t?.folder === 'string' && isAbsolute(t.folder)) return service.startCheck({ folder: t.folder });
    throw new TypeError('Expected { folder: <absolute path> } or { demo: true } for startCheck');
  });
  handle(channels.cancelCheck, (id) => service.cancelCheck(Number(id)));
  handle(channels.loadBudget, () => loadStoredBudget());
  handle(channels.saveBudget, (b) => storeBudget((b ?? {}) as Record<string, unknown>));
  handle(channels.settingsInfo, () => storedSettingsInfo());
  handle(channels.loadShotPreference, () => loadStoredPreference());
  handle(channels.saveShotPreference, (p) => storePreference(p));
  handle(channels.tiePoints, (id, a, b) => service.tiePoints(Number(id), String(a), String(b)));
  handle(channels.exportReport, async (id, format, budget) => {
    // The budget is checked (by the service) before the dialog opens.
    const { text, name } = service.exportReport(Number(id), expectExportFormat(format), budget);
    // The save dialog asks before replacing an existing file.
    const r = await dialog.showSaveDialog(win!, { defaultPath: name });
    if (r.canceled || !r.filePath) return null;
    return service.writeExport(Number(id), r.filePath, text);
  });

  win = new BrowserWindow(windowOptions(join(here, 'preload.cjs')));
  win.once('ready-to-show', () => win?.show());
  await win.loadURL(`${appOrigin}/index.html`);
});

app.on('window-all-closed', () => {
  void service.close().finally(() => app.quit());
});
