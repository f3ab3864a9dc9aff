// Which file of a RAW+JPEG shot to check: the page's choice, shown at once and saved, so the command
// and the next start use it too. A stored choice read at start does not undo one made meanwhile.
import type { SeamscoutApi, ShotPreference } from '../common/api.js';
import { messageOf } from './format.js';

export interface ShotPreferenceSaving {
  readonly current: ShotPreference;
  /** The user's choice: shown and saved; resolves to null when saved, or to why it could not be. */
  choose(p: ShotPreference): Promise<string | null>;
  /** The stored choice, read at start. */
  loaded(p: ShotPreference): void;
}

/** `show` puts a choice on screen (the budget panel's switch). */
export function createShotPreference(api: Pick<SeamscoutApi, 'saveShotPreference'>, show: (p: ShotPreference) => void): ShotPreferenceSaving {
  let current: ShotPreference = 'jpeg';
  let chosen = false;
  return {
    get current() {
      return current;
    },
    async choose(p: ShotPreference): Promise<string | null> {
      current = p;
      chosen = true;
      show(p);
      try {
        await api.saveShotPreference(p);
        return null;
      } catch (e) {
        return messageOf(e);
      }
    },
    loaded(p: ShotPreference): void {
      if (chosen) return;
      current = p;
      show(p);
    },
  };
}
