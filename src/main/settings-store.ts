import { mkdir } from 'node:fs/promises';
import { dirname } from 'node:path';
import { budgetAsTyped, budgetFromTyped, pageBudget, resolveBudget } from '../core/sequence/budget.js';
import type { MatchBudget } from '../core/sequence/report.js';
import type { SettingsInfo, ShotPreference } from '../common/api.js';
import { expectShotPreference } from '../common/api.js';
import type { SettingsFile } from './settings.js';
import { defaultSettingsPath, readSettings, settingsBudget, shareOverlapNote } from './settings.js';
import { writeFileAtomic } from './write-file.js';

/** The budget from the user's settings file (defaults where it says nothing or is unreadable: storedSettingsInfo says so). */
export async function loadStoredBudget(): Promise<MatchBudget> {
  try {
    return budgetFromTyped(settingsBudget(await readSettings(undefined), defaultSettingsPath()));
  } catch {
    return resolveBudget();
  }
}

/**
 * The user's settings file and what to say about it: overlaps read as shares (a file of earlier
 * versions), or a file that cannot be used, so that the app never takes its defaults in silence.
 */
export async function storedSettingsInfo(): Promise<SettingsInfo> {
  const path = defaultSettingsPath();
  try {
    const settings = await readSettings(undefined);
    budgetFromTyped(settingsBudget(settings, path));
    const shares = shareOverlapNote(settings, path);
    return { path, note: shares ? shares.charAt(0).toUpperCase() + shares.slice(1) : null };
  } catch (err) {
    return { path, note: `The stored budget cannot be used (${(err as Error).message}): the app uses the default budget until it is saved here, which replaces the file.` };
  }
}

/** Which file of a RAW+JPEG shot the user's settings file says to check ("jpeg" where it says nothing or is unreadable). */
export async function loadStoredPreference(): Promise<ShotPreference> {
  try {
    return (await readSettings(undefined)).prefer ?? 'jpeg';
  } catch {
    return 'jpeg';
  }
}

/** Replaces one section of the user's settings file, keeping the others (a broken file is started afresh). */
async function storeSection(section: keyof SettingsFile, value: unknown): Promise<void> {
  let settings: Record<string, unknown>;
  try {
    settings = { ...(await readSettings(undefined)) };
  } catch {
    settings = {};
  }
  const path = defaultSettingsPath();
  await mkdir(dirname(path), { recursive: true });
  await writeFileAtomic(path, JSON.stringify({ ...settings, [section]: value }, null, 2) + '\n', true);
}

/**
 * Checks and stores a budget the page sent (overlaps as shares) in the user's settings file, in the
 * file's units (overlaps in percent), keeping its other sections.
 */
export async function storeBudget(budget: Record<string, unknown>): Promise<MatchBudget> {
  const checked = budgetFromTyped(pageBudget(budget));
  await storeSection('budget', budgetAsTyped(checked));
  return checked;
}

/** Checks and stores which file of a RAW+JPEG shot to check, keeping the file's other sections. */
export async function storePreference(prefer: unknown): Promise<ShotPreference> {
  await storeSection('prefer', expectShotPreference(prefer));
  return prefer as ShotPreference;
}
