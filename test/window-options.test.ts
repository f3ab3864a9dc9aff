// The desktop window's settings against Electron's security checklist (electron docs,
// tutorial/security): isolation, sandbox, no Node in the page, our page only on the IPC bridge.
// No Electron binary is loaded: the settings are plain data.
import { describe, expect, it } from 'vitest';
import { desktopContentSecurityPolicy, isAllowedNavigation, isTrustedSender, windowOptions } from '../src/main/window-options.js';

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
