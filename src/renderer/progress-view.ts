// Progress while a check runs: a bar for the current phase, counts for both phases, time left when
// known, and Cancel. Updated in place so the Cancel button keeps focus between events.
import type { CheckProgressEvent } from '../common/api.js';
import { button, el } from './dom.js';
import { timeLeft } from './format.js';

export interface ProgressModel {
  readonly target: string;
  readonly frames: { readonly done: number; readonly total: number } | null;
  readonly pairs: { readonly done: number; readonly total: number } | null;
  readonly latest: CheckProgressEvent | null;
  readonly cancelling: boolean;
}

export const emptyProgress = (target: string): ProgressModel => ({ target, frames: null, pairs: null, latest: null, cancelling: false });

/** The model after one more event. */
export function withEvent(m: ProgressModel, e: CheckProgressEvent): ProgressModel {
  const counts = { done: e.done, total: e.total };
  return { ...m, latest: e, frames: e.phase === 'frames' ? counts : m.frames, pairs: e.phase === 'pairs' ? counts : m.pairs };
}

export interface ProgressView {
  readonly element: HTMLElement;
  update(m: ProgressModel): void;
}

export function createProgressView(onCancel: () => void): ProgressView {
  const title = el('h2', {});
  const phase = el('p', { class: 'phase' });
  const fill = el('div', { class: 'bar-fill' });
  const bar = el('div', { class: 'bar', role: 'progressbar', 'aria-label': 'Check progress', 'aria-valuemin': 0, 'aria-valuemax': 1, 'aria-valuenow': 0 }, fill);
  const frames = el('span', { class: 'numeral', 'data-count': 'frames' });
  const pairs = el('span', { class: 'numeral', 'data-count': 'pairs' });
  const eta = el('p', { class: 'eta' });
  const file = el('p', { class: 'current-file' });
  const cancel = button({ class: 'cancel', 'data-cancel': '' }, onCancel, 'Cancel');
  const element = el('section', { class: 'progress', 'data-progress': '' }, title, phase, bar, el('p', { class: 'counts' }, frames, pairs), eta, file, cancel);

  const update = (m: ProgressModel): void => {
    title.textContent = `Checking ${m.target}`;
    const e = m.latest;
    phase.textContent = m.cancelling ? 'Cancelling…' : !e ? 'Starting…' : e.phase === 'frames' ? 'Reading frames' : 'Matching pairs';
    const now = e ? e.done : 0;
    const max = e && e.total > 0 ? e.total : 1;
    bar.setAttribute('aria-valuenow', String(Math.min(now, max)));
    bar.setAttribute('aria-valuemax', String(max));
    bar.setAttribute('aria-valuetext', e ? `${e.phase} ${e.done} of ${e.total}` : 'starting');
    fill.style.width = `${(100 * Math.min(now, max)) / max}%`;
    frames.textContent = m.frames ? `frames ${m.frames.done} / ${m.frames.total}` : 'frames …';
    pairs.textContent = m.pairs ? `pairs ${m.pairs.done} / ${m.pairs.total}` : 'pairs …';
    eta.textContent = (e && timeLeft(e.secondsLeft)) ?? (e ? 'working out the time left…' : '');
    file.textContent = e?.file ?? '';
    cancel.disabled = m.cancelling;
  };
  return { element, update };
}
