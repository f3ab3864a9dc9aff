// The page's side of the local browser host: the same SeamscoutApi as the desktop bridge, over HTTP
// to this run's own loopback address with its token (given in the address the host printed).
import type { CheckDoneEvent, CheckPartialEvent, CheckProgressEvent, ExportFormat, HostInfo, SeamscoutApi, SettingsInfo, ShotPreference } from '../common/api.js';
import type { MatchBudget } from '../core/sequence/report.js';

function takeToken(): string {
  const params = new URLSearchParams(location.search);
  const fromUrl = params.get('t');
  if (fromUrl) {
    sessionStorage.setItem('seamscout-token', fromUrl);
    // Keep the secret out of the address bar (and of screenshots and history).
    history.replaceState(null, '', location.pathname);
    return fromUrl;
  }
  return sessionStorage.getItem('seamscout-token') ?? '';
}

export function createBrowserClient(): SeamscoutApi {
  const token = takeToken();
  const call = async <T>(method: string, ...args: unknown[]): Promise<T> => {
    const res = await fetch(`/api/${method}`, {
      method: 'POST',
      headers: { 'Content-Type': 'application/json', 'X-Seamscout-Token': token },
      body: JSON.stringify(args),
    });
    if (!res.ok) throw new Error(`${method}: ${res.status} ${await res.text()}`);
    const body = (await res.json()) as { ok?: T; error?: string };
    if (body.error !== undefined) throw new Error(body.error);
    return body.ok as T;
  };
  let source: EventSource | null = null;
  const listen = <E>(type: string, listener: (e: E) => void): (() => void) => {
    source ??= new EventSource(`/api/events?t=${encodeURIComponent(token)}`);
    const handler = (ev: MessageEvent): void => listener(JSON.parse(ev.data) as E);
    source.addEventListener(type, handler as EventListener);
    return () => source?.removeEventListener(type, handler as EventListener);
  };
  return {
    hostInfo: () => call<HostInfo>('hostInfo'),
    chooseFolder: () => call<string | null>('chooseFolder'),
    recentFolders: () => call<string[]>('recentFolders'),
    startCheck: (target) => call<number>('startCheck', target),
    cancelCheck: (id) => call<void>('cancelCheck', id),
    loadBudget: () => call<MatchBudget>('loadBudget'),
    saveBudget: (b) => call<MatchBudget>('saveBudget', b),
    settingsInfo: () => call<SettingsInfo>('settingsInfo'),
    loadShotPreference: () => call<ShotPreference>('loadShotPreference'),
    saveShotPreference: (p) => call<ShotPreference>('saveShotPreference', p),
    exportReport: async (id: number, format: ExportFormat, budget: MatchBudget) => {
      const { text, name } = await call<{ text: string; name: string }>('exportContent', id, format, budget);
      const url = URL.createObjectURL(new Blob([text], { type: 'application/octet-stream' }));
      const a = document.createElement('a');
      a.href = url;
      a.download = name;
      document.body.append(a);
      a.click();
      a.remove();
      setTimeout(() => URL.revokeObjectURL(url), 10_000);
      return name;
    },
    tiePoints: (id, a, b) => call<number[]>('tiePoints', id, a, b),
    frameUrl: (id, file, maxSide) => `/frame/${id}/${encodeURIComponent(file)}?max=${Math.round(maxSide)}&t=${encodeURIComponent(token)}`,
    onProgress: (l) => listen<CheckProgressEvent>('progress', l),
    onDone: (l) => listen<CheckDoneEvent>('done', l),
    onPartial: (l) => listen<CheckPartialEvent>('partial', l),
  };
}
