import type { MatchBudget } from './report.js';
import { defaultBudget } from './report.js';

/** The budget's thresholds (numbers); the rest of it are declarations (true or false). */
export type NumericBudgetKey = Exclude<keyof MatchBudget, 'fullSphere'>;

const limits: Record<NumericBudgetKey, [number, number]> = {
  minInliers: [0, 10_000],
  reshootOverlap: [0, 1],
  weakOverlap: [0, 1],
  maxEvDiff: [0, 20],
  minSharpnessRatio: [0, 1],
  maxBracketShiftPx: [0, 10_000],
};

const declarations = ['fullSphere'] as const;

export const budgetKeys = [...Object.keys(limits), ...declarations] as (keyof MatchBudget)[];

/**
 * A complete budget from the defaults and a user's partial one (settings file, command line, app),
 * checked eagerly: "Expected a number from 0 to 1 for weakOverlap but received 'x'".
 */
export function resolveBudget(...layers: readonly Record<string, unknown>[]): MatchBudget {
  const out: Record<string, number | boolean> = { ...defaultBudget };
  for (const layer of layers) {
    for (const [key, value] of Object.entries(layer)) {
      if (value === undefined) continue;
      if ((declarations as readonly string[]).includes(key)) {
        // A settings file or a form may say "true"; anything else is a mistake worth naming.
        const b = value === 'true' ? true : value === 'false' ? false : value;
        if (typeof b !== 'boolean') throw new TypeError(`Expected true or false for ${key} but received ${JSON.stringify(value)}`);
        out[key] = b;
        continue;
      }
      if (!(key in limits)) throw new TypeError(`Expected one of ${budgetKeys.join(', ')} but received ${key}`);
      const [lo, hi] = limits[key as NumericBudgetKey];
      const n = typeof value === 'string' && value.trim() !== '' ? Number(value) : value;
      if (typeof n !== 'number' || !Number.isFinite(n) || n < lo || n > hi) {
        throw new TypeError(`Expected a number from ${lo} to ${hi} for ${key} but received ${JSON.stringify(value)}`);
      }
      out[key] = n;
    }
  }
  if (out.reshootOverlap > out.weakOverlap) {
    throw new TypeError(`Expected reshootOverlap (${out.reshootOverlap}) not above weakOverlap (${out.weakOverlap})`);
  }
  return out as unknown as MatchBudget;
}

/** The fields a person types as a percentage (0..100) while the budget holds them as shares (0..1). */
export const percentBudgetKeys: readonly NumericBudgetKey[] = ['reshootOverlap', 'weakOverlap'];

/** The budget's fields as the app's budget panel names them (src/renderer/budget-panel.ts). */
export const budgetPanelWords: Record<keyof MatchBudget, string> = {
  minInliers: 'fewest inliers',
  reshootOverlap: 'reshoot below overlap',
  weakOverlap: 'weak below overlap',
  maxEvDiff: 'largest EV step',
  minSharpnessRatio: 'blur: lowest sharpness share',
  maxBracketShiftPx: 'largest bracket shift',
  fullSphere: 'full sphere',
};

/** A budget as a person gave it: in a settings file, on the command line, in the app. */
export interface TypedBudget {
  readonly values: Record<string, unknown>;
  /** What the person calls a field there: "--weak-overlap", "weakOverlap", "the weak below overlap (%)". */
  readonly name: (key: keyof MatchBudget) => string;
  /** Where the layer came from, said in every message about it: "settings file /x.json". */
  readonly where?: string;
  /**
   * 'percent' (a person typed it, the default): overlaps 0..100, and a share under 1 is refused with
   * the percentage it likely meant; 'share': overlaps came as 0..1 (the app's page sends the budget
   * it holds), messages still speak percent.
   */
  readonly overlapAs?: 'percent' | 'share';
}

const tidy = (v: number): string => String(Number(v.toPrecision(12)));

/**
 * The one check of a budget a person gave (the command, the settings file, the app share it): a
 * complete budget in the budget's own units, or an error that uses the person's name for the field
 * and the person's units ("Expected a percentage from 0 to 100 for --reshoot-overlap but received
 * 0.2 (did you mean 20?)"). Later layers win.
 */
export function budgetFromTyped(...layers: readonly TypedBudget[]): MatchBudget {
  const out: Record<string, number | boolean> = { ...defaultBudget };
  const saidBy: Partial<Record<keyof MatchBudget, { name: string; where: string }>> = {};
  for (const layer of layers) {
    const where = layer.where ? ` (${layer.where})` : '';
    for (const [key, value] of Object.entries(layer.values)) {
      if (value === undefined) continue;
      if (!budgetKeys.includes(key as keyof MatchBudget)) {
        throw new TypeError(`Expected a match budget field (${budgetKeys.map((k) => layer.name(k)).join(', ')}) but received ${JSON.stringify(key)}${where}`);
      }
      const k = key as keyof MatchBudget;
      const name = layer.name(k);
      saidBy[k] = { name, where: layer.where ? `, ${layer.where}` : '' };
      if (k === 'fullSphere') {
        // A settings file or a form may say "true"; anything else is a mistake worth naming.
        const b = value === 'true' ? true : value === 'false' ? false : value;
        if (typeof b !== 'boolean') throw new TypeError(`Expected true or false for ${name} but received ${JSON.stringify(value)}${where}`);
        out[k] = b;
        continue;
      }
      const n = typeof value === 'string' && value.trim() !== '' ? Number(value.trim().replace(/\s*%$/, '')) : value;
      const asPercent = percentBudgetKeys.includes(k);
      const [lo, hi] = asPercent ? [0, 100] : limits[k];
      const shown = typeof n === 'number' && asPercent && layer.overlapAs === 'share' ? tidy(100 * n) : typeof value === 'string' && value.trim() !== '' ? value : JSON.stringify(value);
      const typed = typeof n === 'number' && asPercent && layer.overlapAs === 'share' ? 100 * n : n;
      const what = asPercent ? `a percentage from ${lo} to ${hi}` : `a number from ${lo} to ${hi}`;
      if (typeof typed !== 'number' || !Number.isFinite(typed) || typed < lo || typed > hi) {
        throw new TypeError(`Expected ${what} for ${name} but received ${shown}${where}`);
      }
      // No one means an overlap under 1 %: a share typed where a percentage belongs.
      if (asPercent && layer.overlapAs !== 'share' && typed > 0 && typed < 1) {
        throw new TypeError(`Expected ${what} for ${name} but received ${shown} (did you mean ${tidy(100 * typed)}?)${where}`);
      }
      out[k] = asPercent ? typed / 100 : typed;
    }
  }
  if (out.reshootOverlap > out.weakOverlap) {
    const said = (k: 'reshootOverlap' | 'weakOverlap'): string => {
      const by = saidBy[k];
      const v = `${tidy(100 * (out[k] as number))} %`;
      return by ? `${by.name} (${v}${by.where})` : `${layers[layers.length - 1]?.name(k) ?? k} (${v}, the default)`;
    };
    throw new TypeError(`Expected ${said('reshootOverlap')} not above ${said('weakOverlap')}`);
  }
  return out as unknown as MatchBudget;
}

/** A budget as the settings file holds it: overlaps in percent, the rest as the budget has them. */
export function budgetAsTyped(budget: MatchBudget): Record<string, number | boolean> {
  const out: Record<string, number | boolean> = { ...budget };
  for (const k of percentBudgetKeys) out[k] = Number(tidy(100 * budget[k]));
  return out;
}

/** The budget the app's page sends (overlaps as shares, as the budget holds them), under the budget panel's words. */
export const pageBudget = (values: Record<string, unknown>): TypedBudget => ({ values, name: (k) => `the ${budgetPanelWords[k]}`, overlapAs: 'share' });
