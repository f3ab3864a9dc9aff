// The generated sequences the whole-check benchmarks run on, written once into .bench-cache (not
// part of the repository) by the demo generator, with their truth files: 24 frames (8 stations of
// three brackets) and 201 frames (67 stations) of 6000x4000 JPEGs at quality 92, no planted
// problems; plus views of the first frames of the long one as folders of symbolic links.
import { existsSync, mkdirSync, readdirSync, symlinkSync } from 'node:fs';
import { join } from 'node:path';
import { writeDemoShoot } from '../src/main/demo-writer.js';
import { projectRoot } from '../tools/paths.js';

export const benchCache = join(projectRoot, '.bench-cache');

async function ensureShoot(name: string, stations: number, seed: number): Promise<string> {
  const folder = join(benchCache, name);
  if (!existsSync(join(folder, 'seamscout-truth.json'))) {
    console.log(`writing ${stations * 3} frames of 6000x4000 into ${folder} once (about ${Math.ceil(stations * 3 * 4 / 60)} min) ...`);
    await writeDemoShoot(folder, { stations, width: 6000, height: 4000, clean: true, seed });
  }
  return folder;
}

/** 24 frames of 24 MP with their truth. */
export const shortSweep = (): Promise<string> => ensureShoot('sweep-24x24mp', 8, 7);

/** 201 frames of 24 MP with their truth. */
export const longSweep = (): Promise<string> => ensureShoot('sweep-201x24mp', 67, 24);

/** The first `frames` frames of the long sweep, as a folder of links. */
export async function longSweepPrefix(frames: number): Promise<string> {
  const full = await longSweep();
  const folder = join(benchCache, `sweep-${frames}-of-201`);
  if (!existsSync(folder)) {
    mkdirSync(folder, { recursive: true });
    for (const f of readdirSync(full).filter((n) => n.endsWith('.JPG')).sort().slice(0, frames)) symlinkSync(join(full, f), join(folder, f));
  }
  return folder;
}
