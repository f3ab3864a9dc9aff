import { readFile } from 'node:fs/promises';
import { join } from 'node:path';
import type { TypedBudget } from '../core/sequence/budget.js';
import type { ShotPreference } from '../common/api.js';
import { configDir } from './user-dirs.js';

/**
 * The settings file: `{ "budget": { "minInliers": 30, "weakOverlap": 35, "fullSphere": true, ... }, "prefer": "raw" }`;
 * more sections may follow. The budget's overlaps are percentages, as on the command line and in the app. `prefer` names the file of a RAW+JPEG pair to check ("jpeg", the default, or "raw").
 */
export interface SettingsFile {
  readonly budget?: Record<string, unknown>;
  readonly prefer?: ShotPreference;
}

export const defaultSettingsPath = (): string => join(configDir(), 'settings.json');

/** Reads a settings file; a missing default file is no settings, a broken one an error that says where. */
export async function readSettings(path: string | undefined): Promise<SettingsFile> {
  return (await readSettingsFile(path)).settings;
}

const overlapKeys = ['reshootOverlap', 'weakOverlap'] as const;

/**
 * The overlaps of a settings file written before they were percentages: shares (0.2 for 20 %).
 * Read so when every overlap it gives is from 0 to 1 and one lies between (no one means an overlap
 * under 1 %; a file in percent with 0 or 1 alone stays percent). Null when the file is in percent.
 */
export function shareOverlaps(settings: SettingsFile): Partial<Record<(typeof overlapKeys)[number], number>> | null {
  const given = overlapKeys.filter((k) => settings.budget?.[k] !== undefined);
  const value = (k: (typeof overlapKeys)[number]): number => {
    const v = settings.budget?.[k];
    return typeof v === 'string' && v.trim() !== '' && !/%\s*$/.test(v) ? Number(v) : typeof v === 'number' ? v : NaN;
  };
  if (given.length === 0 || !given.every((k) => value(k) >= 0 && value(k) <= 1) || !given.some((k) => value(k) > 0 && value(k) < 1)) return null;
  return Object.fromEntries(given.map((k) => [k, value(k)]));
}

/** The settings file's budget as the person typed it, for `budgetFromTyped` (overlaps in percent, or shares in a file of earlier versions). */
export const settingsBudget = (settings: SettingsFile, file: string): TypedBudget => ({
  values: settings.budget ?? {},
  name: (k) => k,
  where: `settings file ${file}`,
  ...(shareOverlaps(settings) ? { overlapAs: 'share' as const } : {}),
});

/** What to say about a settings file whose overlaps are shares: how they were read and how to make the note go. */
export function shareOverlapNote(settings: SettingsFile, file: string): string | null {
  const shares = shareOverlaps(settings);
  if (!shares) return null;
  const pct = (v: number): string => String(Number((100 * v).toPrecision(12)));
  const entries = Object.entries(shares) as [string, number][];
  return (
    `the settings file ${file} gives overlaps as shares, as earlier versions wrote them (${entries.map(([k, v]) => `${k} ${v}`).join(', ')}): ` +
    `read as ${entries.map(([k, v]) => `${k} ${pct(v)} %`).join(', ')}. Write them in percent (${entries.map(([k, v]) => `"${k}": ${pct(v)}`).join(', ')}), or save the budget from the app, which writes percent.`
  );
}

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
