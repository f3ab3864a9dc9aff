// The desktop bridge: a sandboxed preload exposing one small object to the page, never ipcRenderer
// itself. Sandboxed preloads cannot load our own modules, so the build bundles the contract's
// channel names into this file (vite.preload.config.ts) instead of repeating them here.
// A sandboxed preload is CommonJS; this is its import form.
// eslint-disable-next-line @typescript-eslint/no-require-imports
import electron = require('electron');
import type { IpcRendererEvent } from 'electron';
import type { SeamscoutApi } from '../common/api.js';
// eslint-disable-next-line @typescript-eslint/no-require-imports
import contract = require('../common/api.js');

const { callChannels: ch, eventChannels, frameProtocol } = contract;

function listen<T>(channel: string, listener: (e: T) => void): () => void {
  const handler = (_event: IpcRendererEvent, data: T): void => listener(data);
  electron.ipcRenderer.on(channel, handler);
  return () => electron.ipcRenderer.removeListener(channel, handler);
}

const api: SeamscoutApi & { pathForFile(file: File): string } = {
  hostInfo: () => electron.ipcRenderer.invoke(ch.hostInfo),
  chooseFolder: () => electron.ipcRenderer.invoke(ch.chooseFolder),
  recentFolders: () => electron.ipcRenderer.invoke(ch.recentFolders),
  startCheck: (target) => electron.ipcRenderer.invoke(ch.startCheck, target),
  cancelCheck: (id) => electron.ipcRenderer.invoke(ch.cancelCheck, id),
  loadBudget: () => electron.ipcRenderer.invoke(ch.loadBudget),
  saveBudget: (b) => electron.ipcRenderer.invoke(ch.saveBudget, b),
  settingsInfo: () => electron.ipcRenderer.invoke(ch.settingsInfo),
  loadShotPreference: () => electron.ipcRenderer.invoke(ch.loadShotPreference),
  saveShotPreference: (p) => electron.ipcRenderer.invoke(ch.saveShotPreference, p),
  exportReport: (id, format, budget) => electron.ipcRenderer.invoke(ch.exportReport, id, format, budget),
  tiePoints: (id, a, b) => electron.ipcRenderer.invoke(ch.tiePoints, id, a, b),
  frameUrl: (id, file, maxSide) => `${frameProtocol}://frames/${id}/${encodeURIComponent(file)}?max=${Math.round(maxSide)}`,
  onProgress: (l) => listen(eventChannels.progress, l),
  onDone: (l) => listen(eventChannels.done, l),
  onPartial: (l) => listen(eventChannels.partial, l),
  pathForFile: (file) => electron.webUtils.getPathForFile(file),
};

electron.contextBridge.exposeInMainWorld('seamscout', api);
