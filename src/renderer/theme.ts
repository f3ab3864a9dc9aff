// Light and dark themes: the system's preference unless the user chose one with the toggle, which
// is remembered in localStorage.
import { button } from './dom.js';
import { themeIcon } from './icons.js';

export type Theme = 'light' | 'dark';
const key = 'seamscout.theme';

function storedTheme(storage: Storage | null): Theme | null {
  try {
    const v = storage?.getItem(key);
    return v === 'light' || v === 'dark' ? v : null;
  } catch {
    return null;
  }
}

function systemTheme(win: Window): Theme {
  return typeof win.matchMedia === 'function' && win.matchMedia('(prefers-color-scheme: dark)').matches ? 'dark' : 'light';
}

/** Sets data-theme on the root element when the user chose one; without it the CSS follows the system. */
export function applyStoredTheme(doc: Document, storage: Storage | null): void {
  const t = storedTheme(storage);
  if (t) doc.documentElement.dataset.theme = t;
  else delete doc.documentElement.dataset.theme;
}

export function themeToggle(doc: Document, win: Window, storage: Storage | null): HTMLButtonElement {
  let chosen = storedTheme(storage);
  const current = (): Theme => chosen ?? systemTheme(win);
  const text = doc.createElement('span');
  const label = (): void => {
    text.textContent = current() === 'dark' ? 'Light theme' : 'Dark theme';
  };
  label();
  return button({ class: 'theme-toggle small', 'data-theme-toggle': '' }, () => {
    chosen = current() === 'dark' ? 'light' : 'dark';
    try {
      storage?.setItem(key, chosen);
    } catch {
      // Storage may be unavailable (private windows); the choice then lasts for this page only.
    }
    doc.documentElement.dataset.theme = chosen;
    label();
  }, themeIcon(), text);
}
