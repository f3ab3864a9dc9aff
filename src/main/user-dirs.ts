import { homedir } from 'node:os';
import { join } from 'node:path';

/** The user's cache folder for Seamscout (XDG on Linux, the platform's own elsewhere). */
export function cacheDir(): string {
  if (process.env.SEAMSCOUT_CACHE_DIR) return process.env.SEAMSCOUT_CACHE_DIR;
  if (process.platform === 'darwin') return join(homedir(), 'Library', 'Caches', 'Seamscout');
  if (process.platform === 'win32') return join(process.env.LOCALAPPDATA ?? join(homedir(), 'AppData', 'Local'), 'Seamscout', 'Cache');
  return join(process.env.XDG_CACHE_HOME || join(homedir(), '.cache'), 'seamscout');
}

/** The user's settings folder. */
export function configDir(): string {
  if (process.env.SEAMSCOUT_CONFIG_DIR) return process.env.SEAMSCOUT_CONFIG_DIR;
  if (process.platform === 'darwin') return join(homedir(), 'Library', 'Application Support', 'Seamscout');
  if (process.platform === 'win32') return join(process.env.APPDATA ?? join(homedir(), 'AppData', 'Roaming'), 'Seamscout');
  return join(process.env.XDG_CONFIG_HOME || join(homedir(), '.config'), 'seamscout');
}
