// The start screen: open a folder (dialog, typed path in the browser shell, or drop), recent
// folders, the demo shoot, and which file of a RAW+JPEG shot to check.
import type { ShotPreference } from '../common/api.js';
import { button, el } from './dom.js';
import { timeLeft } from './format.js';
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
  /** The demo shoot being written on first use. */
  readonly writing?: DemoWriting | null;
}

export interface DemoWriting {
  readonly done: number;
  readonly total: number;
  /** The estimate said when the writing began. */
  readonly seconds: number | null;
  readonly secondsLeft: number | null;
}

/** The demo shoot being written: what and how long, in the command's words, and a bar. */
export function demoWritingBlock(w: DemoWriting): HTMLElement {
  const fill = el('div', { class: 'bar-fill' });
  fill.style.width = `${w.total > 0 ? (100 * Math.min(w.done, w.total)) / w.total : 0}%`;
  const left = timeLeft(w.secondsLeft);
  return el(
    'div',
    { class: 'message demo-writing', role: 'status', 'data-demo-writing': '' },
    el('p', { class: 'phase' }, w.seconds !== null ? `Writing the demo shoot (about ${w.seconds} s)` : 'Writing the demo shoot'),
    el('p', {}, 'On first use only: its frames are made on this computer, then checked.'),
    el('div', { class: 'bar', role: 'progressbar', 'aria-label': 'Demo shoot written', 'aria-valuemin': 0, 'aria-valuemax': Math.max(1, w.total), 'aria-valuenow': Math.min(w.done, w.total) }, fill),
    el('p', { class: 'eta' }, `${w.done} of ${w.total} frames${left ? `, ${left}` : ''}`),
  );
}

export interface StartActions {
  readonly chooseFolder: () => void;
  readonly openFolder: (path: string) => void;
  readonly tryDemo: () => void;
  readonly backToResults: () => void;
  readonly setPrefer: (prefer: ShotPreference) => void;
}

/**
 * The choice of which file of a RAW+JPEG shot to check: two radio buttons (on the start screen, and
 * in the budget panel under a name and hook of its own).
 */
export function preferenceChoice(prefer: ShotPreference, setPrefer: (p: ShotPreference) => void, as: { name: string; hook: string } = { name: 'prefer', hook: 'data-shot-preference' }): HTMLElement {
  const option = (value: ShotPreference, label: string): HTMLElement => {
    const input = el('input', { type: 'radio', name: as.name, value, checked: prefer === value });
    input.addEventListener('change', () => {
      if (input.checked) setPrefer(value);
    });
    return el('label', { class: 'choice' }, input, label);
  };
  return el(
    'fieldset',
    { class: 'shot-preference', [as.hook]: '' },
    el('legend', {}, 'Shots on the card as both RAW and JPEG'),
    option('jpeg', 'Check the JPEG'),
    option('raw', 'Check the RAW file (through its embedded preview)'),
  );
}

export function renderStart(m: StartModel, act: StartActions): HTMLElement {
  const pathInput = el('input', { type: 'text', name: 'folder', autocomplete: 'off', spellcheck: 'false', placeholder: '/media/card/DCIM/100CAMERA', 'aria-label': 'Folder path' });
  const pathForm = el('form', { class: 'path-form', 'data-path-form': '' }, el('label', { for: 'start-path' }, 'Folder path'), pathInput, el('button', { type: 'submit' }, 'Open'));
  pathInput.id = 'start-path';
  pathForm.addEventListener('submit', (e) => {
    e.preventDefault();
    const path = pathInput.value.trim();
    if (path) act.openFolder(path);
  });
  const folderName = (p: string): string => p.split(/[\\/]/).filter(Boolean).pop() ?? p;
  // While the demo shoot is written nothing else may start.
  const busy = { disabled: !!m.writing };
  return el(
    'section',
    { class: 'start', 'data-start': '' },
    el('h1', {}, 'Seamscout'),
    el('p', { class: 'lead' }, 'Which frames to reshoot, and why, before you leave the site.'),
    m.message ? el('p', { class: `message message-${m.message.kind}`, role: m.message.kind === 'error' ? 'alert' : 'status' }, m.message.text) : null,
    m.writing ? demoWritingBlock(m.writing) : null,
    el(
      'div',
      { class: 'start-actions' },
      button({ class: 'primary', 'data-choose-folder': '', ...busy }, act.chooseFolder, folderIcon(), 'Open folder…'),
      button({ 'data-demo': '', ...busy }, act.tryDemo, 'Try the demo shoot'),
      m.hasResults ? button({ 'data-back-to-results': '' }, act.backToResults, 'Back to the results') : null,
    ),
    m.showPathField ? pathForm : null,
    el(
      'div',
      { class: 'drop-zone', 'data-drop-zone': '' },
      m.canDrop ? 'Or drop a folder anywhere on this window.' : 'Dropping a folder needs the desktop app: here, use Open folder… or type its path.',
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
