// The desktop window's settings against Electron's security checklist (electron docs,
// tutorial/security): isolation, sandbox, no Node in the page, our page only on the IPC bridge.
// No Electron binary is loaded: the settings are plain data.
import { describe, expect, it } from 'vitest';
import { desktopContentSecurityPolicy, harden, isAllowedNavigation, isTrustedSender, windowOptions } from '../../src/main/window-options.js';

describe('desktop window settings', () => {
  it('isolate the page and keep Node out of it', () => {
    const w = windowOptions('/app/preload.cjs').webPreferences!;
    expect(w.contextIsolation).toBe(true);
    expect(w.sandbox).toBe(true);
    expect(w.nodeIntegration).toBe(false);
    expect(w.nodeIntegrationInWorker).toBe(false);
    expect(w.nodeIntegrationInSubFrames).toBe(false);
    expect(w.webSecurity).toBe(true);
    expect(w.allowRunningInsecureContent).toBe(false);
    expect(w.webviewTag).toBe(false);
  });

  it('has a strict Content-Security-Policy: own scripts only, no remote content', () => {
    expect(desktopContentSecurityPolicy).toMatch(/default-src 'self'/);
    expect(desktopContentSecurityPolicy).toMatch(/script-src 'self';/);
    expect(desktopContentSecurityPolicy).not.toMatch(/unsafe-inline|unsafe-eval|https?:/);
    expect(desktopContentSecurityPolicy).toMatch(/object-src 'none'/);
  });

  it('trusts only our own page as an IPC sender and a navigation target', () => {
    expect(isTrustedSender('seamscout-app://app/index.html')).toBe(true);
    for (const url of ['https://example.com/', 'file:///etc/passwd', 'seamscout-app://evil/index.html', 'seamscout-frame://frames/1/x.jpg', '', undefined, 'not a url']) {
      expect(isTrustedSender(url)).toBe(false);
    }
    expect(isAllowedNavigation('https://example.com/')).toBe(false);
  });
});

describe('hardening of the session and the page', () => {
  it('denies permissions and new windows, and keeps navigation on our page', () => {
    let request: ((wc: unknown, p: string, cb: (g: boolean) => void) => void) | null = null;
    let checkHandler: ((...a: unknown[]) => boolean) | null = null;
    let open: ((d: { url: string }) => { action: string }) | null = null;
    const listeners = new Map<string, (e: { preventDefault(): void }, url?: string) => void>();
    harden(
      { setPermissionRequestHandler: (h) => (request = h), setPermissionCheckHandler: (h) => (checkHandler = h) },
      { setWindowOpenHandler: (h) => (open = h), on: (ev, l) => listeners.set(ev, l) },
    );
    const granted: boolean[] = [];
    for (const p of ['media', 'geolocation', 'notifications', 'openExternal']) request!(null, p, (g) => granted.push(g));
    expect(granted).toEqual([false, false, false, false]);
    expect(checkHandler!()).toBe(false);
    expect(open!({ url: 'https://example.com/' })).toEqual({ action: 'deny' });
    const prevented = (event: string, url?: string): boolean => {
      let p = false;
      listeners.get(event)!({ preventDefault: () => (p = true) }, url);
      return p;
    };
    expect(prevented('will-navigate', 'https://example.com/')).toBe(true);
    expect(prevented('will-navigate', 'file:///etc/passwd')).toBe(true);
    expect(prevented('will-redirect', 'http://127.0.0.1:9/')).toBe(true);
    expect(prevented('will-navigate', 'seamscout-app://app/index.html')).toBe(false);
    expect(prevented('will-attach-webview')).toBe(true);
  });
});
