// The start screen: open a folder (dialog, typed path in the browser shell, or drop), recent
// folders, the demo shoot, and which file of a RAW+JPEG shot to check.
import type { ShotPreference } from '../main/app-api.js';
import { button, el } from './dom.js';
import { folderIcon } from './icons.js';

export interface StartModel {
  readonly shell: 'desktop' | 'browser' | null;
  readonly recent: readonly string[];
  /** A field to type a folder path (the browser shell has no folder dialog). */
  readonly showPathField: boolean;
  /** Whether a dropped folder's path can be read here (desktop app only). */
  readonly canDrop: boolean;
  readonly message: { readonly kind: 'info' | 'error'; readonly text: string } | null;
  readonly hasResults: boolean;
  /** Which file of a shot written as RAW and JPEG the next check reads. */
  readonly prefer: ShotPreference;
}

export interface StartActions {
  readonly chooseFolder: () => void;
  readonly openFolder: (path: string) => void;
  readonly tryDemo: () => void;
  readonly backToResults: () => void;
  readonly setPrefer: (prefer: ShotPreference) => void;
}

/** The choice of which file of a RAW+JPEG shot to check: two radio buttons. */
function preferenceChoice(prefer: ShotPreference, setPrefer: (p: ShotPreference) => void): HTMLElement {
  const option = (value: ShotPreference, label: string): HTMLElement => {
    const input = el('input', { type: 'radio', name: 'prefer', value, checked: prefer === value });
    input.addEventListener('change', () => {
      if (input.checked) setPrefer(value);
    });
    return el('label', { class: 'choice' }, input, label);
  };
  return el(
    'fieldset',
    { class: 'shot-preference', 'data-shot-preference': '' },
    el('legend', {}, 'Shots on the card as both RAW and JPEG'),
    option('jpeg', 'Check the JPEG'),
    option('raw', 'Check the RAW file (through its embedded preview)'),
  );
}

export function renderStart(m: StartModel, act: StartActions): HTMLElement {
  const pathInput = el('input', { type: 'text', name: 'folder', autocomplete: 'off', spellcheck: 'false', placeholder: '/path/to/the/card/DCIM/100CANON', 'aria-label': 'Folder path' });
  const pathForm = el('form', { class: 'path-form', 'data-path-form': '' }, el('label', { for: 'start-path' }, 'Folder path'), pathInput, el('button', { type: 'submit' }, 'Open'));
  pathInput.id = 'start-path';
  pathForm.addEventListener('submit', (e) => {
    e.preventDefault();
    const path = pathInput.value.trim();
    if (path) act.openFolder(path);
  });
  const folderName = (p: string): string => p.split(/[\\/]/).filter(Boolean).pop() ?? p;
  return el(
    'section',
    { class: 'start', 'data-start': '' },
    el('h1', {}, 'Seamscout'),
    el('p', { class: 'lead' }, 'Which frames to reshoot, and why, before you leave the site.'),
    m.message ? el('p', { class: `message message-${m.message.kind}`, role: m.message.kind === 'error' ? 'alert' : 'status' }, m.message.text) : null,
    el(
      'div',
      { class: 'start-actions' },
      button({ class: 'primary', 'data-choose-folder': '' }, act.chooseFolder, folderIcon(), 'Open folder…'),
      button({ 'data-demo': '' }, act.tryDemo, 'Try the demo shoot'),
      m.hasResults ? button({ 'data-back-to-results': '' }, act.backToResults, 'Back to the results') : null,
    ),
    m.showPathField ? pathForm : null,
    el(
      'div',
      { class: 'drop-zone', 'data-drop-zone': '' },
      m.canDrop ? 'Or drop a folder anywhere on this window.' : 'Dropping a folder needs the desktop app: here, type its path or use Open folder….',
    ),
    preferenceChoice(m.prefer, act.setPrefer),
    m.recent.length
      ? el(
          'section',
          { class: 'recent', 'aria-label': 'Recent folders' },
          el('h2', {}, 'Recent folders'),
          el('ul', {}, m.recent.map((p) => el('li', {}, button({ class: 'recent-folder', 'data-recent': p, title: p }, () => act.openFolder(p), el('span', { class: 'recent-name' }, folderName(p)), el('span', { class: 'recent-path' }, p))))),
        )
      : null,
  );
}
