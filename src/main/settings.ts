import { readFile } from 'node:fs/promises';
import { join } from 'node:path';
import type { TypedBudget } from '../core/budget.js';
import { configDir } from './user-dirs.js';

/**
 * The settings file: `{ "budget": { "minInliers": 30, "weakOverlap": 35, "fullSphere": true, ... }, "prefer": "raw" }`;
 * more sections may follow. The budget's overlaps are percentages, as on the command line and in the app. `prefer` names the file of a RAW+JPEG pair to check ("jpeg", the default, or "raw").
 */
export interface SettingsFile {
  readonly budget?: Record<string, unknown>;
  readonly prefer?: 'jpeg' | 'raw';
}

export const defaultSettingsPath = (): string => join(configDir(), 'settings.json');

/** Reads a settings file; a missing default file is no settings, a broken one an error that says where. */
export async function readSettings(path: string | undefined): Promise<SettingsFile> {
  return (await readSettingsFile(path)).settings;
}

/** The settings file's budget as the person typed it, for `budgetFromTyped`. */
export const settingsBudget = (settings: SettingsFile, file: string): TypedBudget => ({ values: settings.budget ?? {}, name: (k) => k, where: `settings file ${file}` });

/** As readSettings, and which file was read (null when the default file is missing). */
export async function readSettingsFile(path: string | undefined): Promise<{ settings: SettingsFile; file: string | null }> {
  const file = path ?? defaultSettingsPath();
  let text: string;
  try {
    text = await readFile(file, 'utf8');
  } catch (err) {
    if (!path && (err as NodeJS.ErrnoException).code === 'ENOENT') return { settings: {}, file: null };
    throw new Error(`Expected a readable settings file at ${file} but received ${(err as NodeJS.ErrnoException).code ?? 'an error'}`, { cause: err });
  }
  let parsed: unknown;
  try {
    parsed = JSON.parse(text);
  } catch (err) {
    throw new Error(`Expected JSON in the settings file ${file} but received: ${(err as Error).message}`, { cause: err });
  }
  if (typeof parsed !== 'object' || parsed === null || Array.isArray(parsed)) throw new Error(`Expected an object in the settings file ${file}`);
  const budget = (parsed as SettingsFile).budget;
  if (budget !== undefined && (typeof budget !== 'object' || budget === null)) throw new Error(`Expected an object for budget in ${file}`);
  const prefer = (parsed as SettingsFile).prefer;
  if (prefer !== undefined && prefer !== 'jpeg' && prefer !== 'raw') throw new Error(`Expected "jpeg" or "raw" for prefer in ${file} but received ${JSON.stringify(prefer)}`);
  return { settings: parsed as SettingsFile, file };
}
