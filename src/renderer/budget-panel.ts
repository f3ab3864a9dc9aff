// The budget panel: one input per match budget field, in the units a photographer thinks in
// (overlap in percent), and which file of a RAW+JPEG shot the next check reads. A good edit calls
// onChange at once (the caller re-judges, no re-analysis); a bad one shows, beside the field, the
// message the command gives for the same mistake (budgetFromTyped, in the panel's words), and keeps
// the last good budget.
import type { ShotPreference } from '../common/api.js';
import type { NumericBudgetKey, TypedBudget } from '../core/sequence/budget.js';
import { budgetFromTyped, budgetPanelWords } from '../core/sequence/budget.js';
import type { MatchBudget } from '../core/sequence/report.js';
import { defaultBudget } from '../core/sequence/report.js';
import { button, el } from './dom.js';
import { preferenceChoice } from './start-view.js';

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

/** A field's text as typed, a decimal comma read as a point. */
const typedValue = (text: string): string => text.trim().replace(',', '.');

/** The panel's fields as a person typed them (overlaps in percent), named in the panel's words, for the command's own check. */
export const panelBudget = (values: Record<string, unknown>): TypedBudget => ({ values, name: (k) => `the ${budgetPanelWords[k]}` });

export interface BudgetPanel {
  readonly element: HTMLElement;
  /** Shows a budget (loaded, or the defaults) and clears any error; does not call onChange. */
  set(budget: MatchBudget): void;
  /** Shows which file of a RAW+JPEG shot the next check reads; does not call its onChange. */
  setPrefer(prefer: ShotPreference): void;
  /** The last good budget. */
  current(): MatchBudget;
}

export function createBudgetPanel(initial: MatchBudget, onChange: (b: MatchBudget) => void, prefer: { readonly initial: ShotPreference; readonly onChange: (p: ShotPreference) => void }): BudgetPanel {
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
    const typedNow = readTyped(typed(), sphere.checked);
    for (const [name, message] of typedNow.fields) showError(name, message);
    if (typedNow.budget) {
      good = typedNow.budget;
      onChange(typedNow.budget);
    } else if (typedNow.relation !== null) {
      // Only the fields' relation is left to fail (reshoot above weak): say so beside the field just edited.
      showError(changed.name, typedNow.relation);
    }
  };

  const rows = budgetFields.map((f) => {
    const { row, input, error } = fieldRow(f, shown(f, initial));
    input.addEventListener('input', () => edited(f));
    inputs.set(f.name, input);
    errors.set(f.name, error);
    return row;
  });

  const { row: sphereRow, input: sphere } = sphereField(initial.fullSphere === true);
  sphere.addEventListener('change', () => edited(budgetFields[0]));

  const set = (b: MatchBudget): void => {
    good = b;
    for (const f of budgetFields) {
      inputs.get(f.name)!.value = shown(f, b);
      showError(f.name, null);
    }
    sphere.checked = b.fullSphere === true;
  };

  const preferSlot = el('div', { class: 'field field-check field-prefer' });
  const setPrefer = (p: ShotPreference): void => {
    preferSlot.replaceChildren(
      preferenceChoice(p, prefer.onChange, { name: 'panel-prefer', hook: 'data-panel-shot-preference' }),
      el('p', { class: 'help' }, 'used from the next check on; the results shown keep the file they were checked with'),
    );
  };
  setPrefer(prefer.initial);

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
    preferSlot,
  );
  return { element, set, setPrefer, current: () => good };
}

/** One threshold's field: its input, with its help and its error line named for screen readers. */
function fieldRow(f: BudgetField, value: string): { row: HTMLElement; input: HTMLInputElement; error: HTMLElement } {
  const id = `budget-${f.name}`;
  const input = el('input', { id, name: f.name, type: 'text', inputmode: 'decimal', autocomplete: 'off', spellcheck: 'false', value, 'aria-describedby': `${id}-help ${id}-error` });
  const error = el('p', { class: 'field-error', id: `${id}-error`, role: 'alert', 'data-error-for': f.name });
  error.hidden = true;
  return { row: el('div', { class: 'field' }, el('label', { for: id }, f.label), input, el('p', { class: 'help', id: `${id}-help` }, f.help), error), input, error };
}

/** A declaration, not a threshold: the set is meant to cover straight up and down. */
function sphereField(on: boolean): { row: HTMLElement; input: HTMLInputElement } {
  const input = el('input', { id: 'budget-fullSphere', name: 'fullSphere', type: 'checkbox', 'aria-describedby': 'budget-fullSphere-help' });
  input.checked = on;
  const row = el(
    'div',
    { class: 'field field-check' },
    el('label', { for: 'budget-fullSphere' }, input, ' Full sphere'),
    el('p', { class: 'help', id: 'budget-fullSphere-help' }, 'the set is meant to cover straight up and down: an open zenith or nadir is a hole to reshoot (otherwise only a note unless frames reach toward it)'),
  );
  return { row, input };
}

/**
 * The typed fields judged: each field on its own first, so every bad field shows its own message
 * (the two overlaps held apart so that only the field's own range is checked); with all good, the
 * budget they make together, or why they do not fit together.
 */
function readTyped(text: Record<string, string>, fullSphere: boolean): { fields: [NumericBudgetKey, string | null][]; budget: MatchBudget | null; relation: string | null } {
  const fields: [NumericBudgetKey, string | null][] = [];
  for (const f of budgetFields) {
    try {
      budgetFromTyped({ values: { reshootOverlap: 0, weakOverlap: 100 }, name: (k) => k }, panelBudget({ [f.name]: typedValue(text[f.name]) }));
      fields.push([f.name, null]);
    } catch (e) {
      fields.push([f.name, (e as Error).message]);
    }
  }
  if (fields.some(([, m]) => m !== null)) return { fields, budget: null, relation: null };
  const layer = { ...Object.fromEntries(budgetFields.map((f) => [f.name, typedValue(text[f.name])])), fullSphere };
  try {
    return { fields, budget: budgetFromTyped(panelBudget(layer)), relation: null };
  } catch (e) {
    return { fields, budget: null, relation: (e as Error).message };
  }
}
