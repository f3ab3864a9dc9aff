import type { BrowserWindowConstructorOptions } from 'electron';

/** Scheme that serves the page's own files in the desktop window (instead of file://). */
export const appScheme = 'seamscout-app';
export const appOrigin = `${appScheme}://app`;

export const desktopContentSecurityPolicy =
  "default-src 'self'; img-src 'self' data: blob: seamscout-frame:; style-src 'self'; script-src 'self'; connect-src 'self'; object-src 'none'; base-uri 'none'; form-action 'none'; frame-ancestors 'none'";

/**
 * The one window's settings, per Electron's security checklist: context isolation, the sandbox, no
 * Node in the page, web security on, no webview, no insecure content.
 */
export function windowOptions(preload: string): BrowserWindowConstructorOptions {
  return {
    width: 1400,
    height: 900,
    minWidth: 900,
    minHeight: 600,
    title: 'Seamscout',
    show: false,
    backgroundColor: '#111418',
    webPreferences: {
      preload,
      contextIsolation: true,
      sandbox: true,
      nodeIntegration: false,
      nodeIntegrationInWorker: false,
      nodeIntegrationInSubFrames: false,
      webSecurity: true,
      allowRunningInsecureContent: false,
      webviewTag: false,
      spellcheck: false,
      navigateOnDragDrop: false,
    },
  };
}

/** Only our own page may talk to main: checked on every IPC message. */
export function isTrustedSender(url: string | undefined): boolean {
  if (!url) return false;
  try {
    const u = new URL(url);
    return u.protocol === `${appScheme}:` && u.host === 'app';
  } catch {
    return false;
  }
}

/** Navigation stays on our own page. */
export function isAllowedNavigation(url: string): boolean {
  return isTrustedSender(url);
}
