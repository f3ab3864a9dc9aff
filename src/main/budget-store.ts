import { mkdir } from 'node:fs/promises';
import { dirname } from 'node:path';
import { resolveBudget } from '../core/budget.js';
import type { MatchBudget } from '../core/report.js';
import { defaultSettingsPath, readSettings } from './settings.js';
import { writeFileAtomic } from './write-file.js';

/** The budget from the user's settings file (defaults where it says nothing or is unreadable). */
export async function loadStoredBudget(): Promise<MatchBudget> {
  try {
    return resolveBudget((await readSettings(undefined)).budget ?? {});
  } catch {
    return resolveBudget();
  }
}

/** Checks and stores a budget in the user's settings file, keeping its other sections. */
export async function storeBudget(budget: Record<string, unknown>): Promise<MatchBudget> {
  const checked = resolveBudget(budget);
  let settings: Record<string, unknown>;
  try {
    settings = { ...(await readSettings(undefined)) };
  } catch {
    settings = {};
  }
  const path = defaultSettingsPath();
  await mkdir(dirname(path), { recursive: true });
  await writeFileAtomic(path, JSON.stringify({ ...settings, budget: checked }, null, 2) + '\n', true);
  return checked;
}
