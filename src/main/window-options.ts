import type { BrowserWindowConstructorOptions } from 'electron';
import { frameProtocol } from '../common/api.js';
import { buildContentSecurityPolicy } from './page-assets.js';

/** Scheme that serves the page's own files in the desktop window (instead of file://). */
export const appScheme = 'seamscout-app';
export const appOrigin = `${appScheme}://app`;

/** The page's policy, with frames shown from the desktop's frame scheme. */
export const desktopContentSecurityPolicy = buildContentSecurityPolicy([`${frameProtocol}:`]);

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

/** The parts of Electron's session and web contents that the hardening below touches. */
export interface HardenableSession {
  setPermissionRequestHandler(handler: (wc: unknown, permission: string, callback: (granted: boolean) => void) => void): void;
  setPermissionCheckHandler(handler: (...args: unknown[]) => boolean): void;
}
/** A navigation event: Electron passes the target as `url` on the event (and, deprecated, as a second argument). */
export interface NavigationEvent {
  preventDefault(): void;
  readonly url?: string;
}
export interface HardenableContents {
  setWindowOpenHandler(handler: (details: { url: string }) => { action: 'deny' } | { action: 'allow' }): void;
  on(event: 'will-navigate' | 'will-frame-navigate' | 'will-attach-webview' | 'will-redirect', listener: (event: NavigationEvent, url?: string) => void): unknown;
}
/** A web contents with its session, as `web-contents-created` hands it over. */
export interface HardenableWebContents extends HardenableContents {
  readonly session: HardenableSession;
}
/** The part of Electron's `app` that announces every new web contents. */
export interface WebContentsSource {
  on(event: 'web-contents-created', listener: (event: unknown, contents: HardenableWebContents) => void): unknown;
}

/** Every permission request and check denied: the page needs no camera, location or notification. */
export function hardenSession(session: HardenableSession): void {
  session.setPermissionRequestHandler((_wc, _permission, callback) => callback(false));
  session.setPermissionCheckHandler(() => false);
}

/** No new windows; the page and every frame in it navigate and redirect only within our own page; no webviews. */
export function hardenContents(contents: HardenableContents): void {
  contents.setWindowOpenHandler(() => ({ action: 'deny' }));
  const stay = (event: NavigationEvent, url?: string): void => {
    const target = event.url ?? url;
    if (!target || !isAllowedNavigation(target)) event.preventDefault();
  };
  contents.on('will-navigate', stay);
  contents.on('will-frame-navigate', stay);
  contents.on('will-redirect', stay);
  contents.on('will-attach-webview', (event) => event.preventDefault());
}

/**
 * Electron's checklist for the session and the page: every permission request denied, no new
 * windows, navigation and redirects only within our own page, no webviews.
 */
export function harden(session: HardenableSession, contents: HardenableContents): void {
  hardenSession(session);
  hardenContents(contents);
}

/**
 * The same rules for every web contents the app ever makes (its window, and any other a page or a
 * bug might open), the moment it exists (electron docs, tutorial/security: permission requests,
 * webview options, navigation and new windows limited).
 */
export function hardenEveryContents(app: WebContentsSource): void {
  app.on('web-contents-created', (_event, contents) => harden(contents.session, contents));
}
