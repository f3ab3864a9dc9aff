// The budget panel: one input per match budget field, in the units a photographer thinks in
// (overlap in percent). A good edit calls onChange at once (the caller re-judges, no re-analysis);
// a bad one shows resolveBudget's message beside the field and keeps the last good budget.
import type { NumericBudgetKey } from '../core/budget.js';
import { resolveBudget } from '../core/budget.js';
import type { MatchBudget } from '../core/report.js';
import { defaultBudget } from '../core/report.js';
import { button, el } from './dom.js';

export interface BudgetField {
  readonly name: NumericBudgetKey;
  readonly label: string;
  readonly help: string;
  /** Shown as percent (0..100) while the budget holds 0..1. */
  readonly percent: boolean;
}

export const budgetFields: readonly BudgetField[] = [
  { name: 'reshootOverlap', label: 'Reshoot below overlap (%)', help: 'neighbours sharing less than this must be reshot', percent: true },
  { name: 'weakOverlap', label: 'Weak below overlap (%)', help: 'neighbours sharing less than this are weak', percent: true },
  { name: 'minInliers', label: 'Fewest inliers', help: 'points that must agree for an ok pair; under half of it, reshoot', percent: false },
  { name: 'maxEvDiff', label: 'Largest EV step', help: 'brightness change allowed between neighbours, in EV', percent: false },
  { name: 'minSharpnessRatio', label: 'Blur: lowest sharpness share', help: 'a frame below this share (0 to 1) of its neighbours\' sharpness, on the content they share, counts as blurred', percent: false },
  { name: 'maxBracketShiftPx', label: 'Largest bracket shift (px)', help: 'movement allowed within a bracket, full-resolution pixels', percent: false },
];

const tidy = (v: number): string => String(Number(v.toPrecision(12)));
const shown = (f: BudgetField, b: MatchBudget): string => tidy(f.percent ? 100 * b[f.name] : b[f.name]);

/** The value a field's text stands for in the budget's own units: a number, or the text itself when it is none. */
function parsed(f: BudgetField, text: string): number | string {
  const t = text.trim().replace(',', '.');
  const n = t === '' ? NaN : Number(t);
  if (!Number.isFinite(n)) return text;
  return f.percent ? n / 100 : n;
}

/**
 * resolveBudget speaks the budget's units (overlap 0..1); say the same in the field's units, so
 * "Expected a number from 0 to 1 for weakOverlap but received 1.5" reads "... from 0 to 100 (%) ...
 * received 150" next to a percent field.
 */
export function inFieldUnits(message: string, typed: Record<string, string>): string {
  let m = message;
  for (const f of budgetFields.filter((x) => x.percent)) {
    m = m.replace(new RegExp(`from 0 to 1 for ${f.name} but received .*$`), () => `from 0 to 100 (%) for ${f.name} but received ${JSON.stringify(typed[f.name] ?? '')}`);
    m = m.replace(new RegExp(`${f.name} \\(([-+0-9.e]+)\\)`), (_all, v: string) => `${f.name} (${tidy(100 * Number(v))} %)`);
  }
  return m;
}

export interface BudgetPanel {
  readonly element: HTMLElement;
  /** Shows a budget (loaded, or the defaults) and clears any error; does not call onChange. */
  set(budget: MatchBudget): void;
  /** The last good budget. */
  current(): MatchBudget;
}

export function createBudgetPanel(initial: MatchBudget, onChange: (b: MatchBudget) => void): BudgetPanel {
  let good = initial;
  const inputs = new Map<NumericBudgetKey, HTMLInputElement>();
  const errors = new Map<NumericBudgetKey, HTMLElement>();

  const typed = (): Record<string, string> => Object.fromEntries([...inputs].map(([k, i]) => [k, i.value]));
  const showError = (name: NumericBudgetKey, message: string | null): void => {
    const e = errors.get(name)!;
    e.textContent = message ?? '';
    e.hidden = message === null;
    const input = inputs.get(name)!;
    if (message === null) input.removeAttribute('aria-invalid');
    else input.setAttribute('aria-invalid', 'true');
  };

  const edited = (changed: BudgetField): void => {
    const text = typed();
    let bad = false;
    // Each field on its own first, so every bad field shows its own message (the two overlaps held
    // apart so that only the field's own range is checked here).
    for (const f of budgetFields) {
      try {
        resolveBudget({ reshootOverlap: 0, weakOverlap: 1 }, { [f.name]: parsed(f, text[f.name]) });
        showError(f.name, null);
      } catch (e) {
        showError(f.name, inFieldUnits((e as Error).message, text));
        bad = true;
      }
    }
    if (bad) return;
    const layer = { ...Object.fromEntries(budgetFields.map((f) => [f.name, parsed(f, text[f.name])])), fullSphere: sphere.checked };
    try {
      const next = resolveBudget(layer);
      good = next;
      onChange(next);
    } catch (e) {
      // Only the fields' relation is left to fail (reshoot above weak): say so beside the field just edited.
      showError(changed.name, inFieldUnits((e as Error).message, text));
    }
  };

  const rows = budgetFields.map((f) => {
    const id = `budget-${f.name}`;
    const input = el('input', { id, name: f.name, type: 'text', inputmode: 'decimal', autocomplete: 'off', spellcheck: 'false', value: shown(f, initial), 'aria-describedby': `${id}-help ${id}-error` });
    input.addEventListener('input', () => edited(f));
    inputs.set(f.name, input);
    const error = el('p', { class: 'field-error', id: `${id}-error`, role: 'alert', 'data-error-for': f.name });
    error.hidden = true;
    errors.set(f.name, error);
    return el('div', { class: 'field' }, el('label', { for: id }, f.label), input, el('p', { class: 'help', id: `${id}-help` }, f.help), error);
  });

  // A declaration, not a threshold: the set is meant to cover straight up and down.
  const sphere = el('input', { id: 'budget-fullSphere', name: 'fullSphere', type: 'checkbox', 'aria-describedby': 'budget-fullSphere-help' });
  sphere.checked = initial.fullSphere === true;
  sphere.addEventListener('change', () => edited(budgetFields[0]));
  const sphereRow = el(
    'div',
    { class: 'field field-check' },
    el('label', { for: 'budget-fullSphere' }, sphere, ' Full sphere'),
    el('p', { class: 'help', id: 'budget-fullSphere-help' }, 'the set is meant to cover straight up and down: an open zenith or nadir is a hole to reshoot (otherwise only a note unless frames reach toward it)'),
  );

  const set = (b: MatchBudget): void => {
    good = b;
    for (const f of budgetFields) {
      inputs.get(f.name)!.value = shown(f, b);
      showError(f.name, null);
    }
    sphere.checked = b.fullSphere === true;
  };

  const element = el(
    'section',
    { class: 'budget', 'data-budget': '', 'aria-label': 'Match budget' },
    el('h2', {}, 'Match budget'),
    el('p', { class: 'help' }, 'Verdicts follow these limits at once; nothing is analysed again.'),
    el('div', { class: 'fields' }, rows, sphereRow),
    button({ class: 'small', 'data-budget-defaults': '' }, () => {
      set(defaultBudget);
      onChange(defaultBudget);
    }, 'Defaults'),
  );
  return { element, set, current: () => good };
}
