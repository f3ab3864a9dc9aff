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
