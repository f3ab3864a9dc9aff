// Saving the match budget as the user edits it: edits within the delay are saved once, and the status
// line says where it went (the command reads the same file, so its verdicts change too) or why not.
import type { MatchBudget } from '../core/sequence/report.js';
import type { SeamscoutApi, SettingsInfo } from '../common/api.js';
import { el } from './dom.js';
import { messageOf } from './format.js';

export interface BudgetSaving {
  /** The status line, placed by the page under the budget panel. */
  readonly element: HTMLElement;
  /** True once the user changed the budget: a stored budget read later must not overwrite it. */
  readonly edited: boolean;
  edit(b: MatchBudget): void;
  say(text: string): void;
  settingsKnown(info: SettingsInfo): void;
  dispose(): void;
}

export function createBudgetSaving(api: Pick<SeamscoutApi, 'saveBudget'>, delayMs: number): BudgetSaving {
  const element = el('p', { class: 'budget-status', role: 'status', 'data-budget-status': '' });
  let edited = false;
  let timer: ReturnType<typeof setTimeout> | null = null;
  let status = '';
  let settingsPath: string | null = null;

  const say = (text: string): void => {
    status = text;
    element.textContent = text;
  };

  return {
    element,
    get edited() {
      return edited;
    },
    edit(b: MatchBudget): void {
      edited = true;
      if (timer !== null) clearTimeout(timer);
      timer = setTimeout(() => {
        timer = null;
        api.saveBudget(b).then(
          () => say(`Saved in ${settingsPath ?? 'the settings file'}: the command (seamscout check) uses these values from now on too.`),
          (e) => say(`The budget could not be saved: ${messageOf(e)}`),
        );
      }, delayMs);
    },
    say,
    settingsKnown(info: SettingsInfo): void {
      settingsPath = info.path;
      if (info.note && !status) say(info.note);
    },
    dispose(): void {
      if (timer !== null) clearTimeout(timer);
    },
  };
}
