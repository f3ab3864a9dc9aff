import { extname } from 'node:path';
import type { RawPlusJpeg, SkippedFile } from '../core/sequence/report.js';
import { isRawFile } from './raw-file.js';
import type { ScannedFile } from './scan.js';

import type { ShotPreference } from '../common/api.js';

/**
 * One file per shot: where a RAW file and an image file share a name but for the ending (in one
 * folder, letter case aside), the preferred one is checked and the other listed as the same shot.
 */
export function oneFilePerShot(files: readonly ScannedFile[], prefer: ShotPreference): { files: ScannedFile[]; skipped: SkippedFile[]; rawPlusJpeg: RawPlusJpeg | null } {
  const stem = (f: ScannedFile): string => f.name.slice(0, f.name.length - extname(f.name).length).toLowerCase();
  const byStem = new Map<string, ScannedFile[]>();
  for (const f of files) byStem.set(stem(f), [...(byStem.get(stem(f)) ?? []), f]);
  const drop = new Map<string, string>();
  let shots = 0;
  for (const group of byStem.values()) {
    const raws = group.filter((f) => isRawFile(f.name)), others = group.filter((f) => !isRawFile(f.name));
    if (raws.length === 0 || others.length === 0) continue;
    shots++;
    const [kept, left] = prefer === 'raw' ? [raws[0], others] : [others[0], raws];
    for (const f of [...left, ...(prefer === 'raw' ? raws.slice(1) : others.slice(1))]) drop.set(f.name, kept.name);
  }
  return {
    rawPlusJpeg: shots > 0 ? { checked: prefer, shots } : null,
    files: files.filter((f) => !drop.has(f.name)),
    skipped: files.filter((f) => drop.has(f.name)).map((f) => ({
      file: f.name,
      code: 'same-shot' as const,
      reason: `the same shot as ${drop.get(f.name)} (RAW+JPEG): ${prefer === 'raw' ? 'the RAW file' : 'the JPEG'} was checked`,
    })),
  };
}
