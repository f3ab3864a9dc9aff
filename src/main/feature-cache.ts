import { createHash } from 'node:crypto';
import { mkdir, readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { deserialize, serialize } from 'node:v8';
import { checkFeatureParams } from '../core/pair/pair-analysis.js';
import type { FrameAnalysis } from '../core/pair/pair-analysis.js';
import type { ScannedFile } from './scan.js';
import { cacheDir } from './user-dirs.js';
import { sweepStaleTemps, writeFileAtomic } from './write-file.js';

/** Bump when the analysis changes in a way the parameters do not show. */
const analysisVersion = 4;

export interface FeatureCache {
  get(file: ScannedFile, maxSide: number): Promise<FrameAnalysis | null>;
  put(file: ScannedFile, maxSide: number, data: FrameAnalysis): Promise<void>;
}

/**
 * Frame analyses kept in the user's cache folder (never beside the photographs), keyed by path,
 * size, modification time, analysis size and engine parameters, so a re-check after reshooting
 * analyses only new or changed frames. A damaged entry is a miss.
 */
export function createFeatureCache(dir = join(cacheDir(), 'features')): FeatureCache {
  const params = JSON.stringify(checkFeatureParams);
  const keyOf = (f: ScannedFile, maxSide: number): string =>
    createHash('sha256').update(JSON.stringify([analysisVersion, params, typeof f.path === 'string' ? f.path : Buffer.from(f.path).toString('hex'), f.size, f.mtimeMs, maxSide])).digest('hex').slice(0, 40);
  let made = false;
  let swept = false;
  return {
    async get(file, maxSide) {
      // Temp files a killed run left here go at the next run's first look (writes sweep too).
      if (!swept) {
        swept = true;
        void sweepStaleTemps(dir);
      }
      try {
        const value = deserialize(await readFile(join(dir, `${keyOf(file, maxSide)}.bin`))) as FrameAnalysis;
        return value && value.features && value.image ? value : null;
      } catch {
        return null;
      }
    },
    async put(file, maxSide, data) {
      try {
        if (!made) {
          await mkdir(dir, { recursive: true });
          made = true;
        }
        await writeFileAtomic(join(dir, `${keyOf(file, maxSide)}.bin`), serialize(data), true);
      } catch {
        // A cache that cannot be written only costs time.
      }
    },
  };
}
