// The two sides every whole-check benchmark measures: the check as the command line runs it, in a
// child process that reports its own peak resident set (all its threads) when it exits, and the
// decode floor (sharp decoding every frame to the analysis size one after another on one thread;
// no check can be faster than reading its frames), and the same decoding on every core.
import { spawnSync } from 'node:child_process';
import { readdirSync } from 'node:fs';
import { join } from 'node:path';
import sharp from 'sharp';
import type { GrayImage } from '../src/core/image/image.js';
import { decodeForAnalysis } from '../src/main/decode.js';
import { projectRoot } from '../tools/paths.js';
import { benchCache } from './sequences.js';

export const framesOf = (folder: string): string[] => readdirSync(folder).filter((f) => f.endsWith('.JPG')).sort();

/**
 * Runs `seamscout check <folder> --no-cache --no-progress ...args` in a child. `firstPairSeconds`:
 * from the child's start (its performance.now() origin) to the first pair line written on stdout.
 */
export function checkInChild(folder: string, args: readonly string[] = []): { seconds: number; peakMiB: number; status: number | null; firstPairSeconds: number | null } {
  const argv = ['seamscout', 'check', folder, '--no-cache', '--no-progress', ...args];
  const watch = `let firstPair = null; const write = process.stdout.write.bind(process.stdout); process.stdout.write = (s, ...r) => { if (firstPair === null && / -> /.test(String(s))) firstPair = performance.now(); return write(s, ...r); };`;
  const script = `${watch} process.on('exit', () => process.stderr.write('\\nPEAK ' + process.resourceUsage().maxRSS + '\\nFIRSTPAIR ' + firstPair + '\\n')); process.argv = [process.argv[0], ...${JSON.stringify(argv)}]; await import(${JSON.stringify(join(projectRoot, 'src/main/cli.ts'))});`;
  const started = performance.now();
  const r = spawnSync(process.execPath, ['--import', 'tsx', '--input-type=module', '-e', script], {
    encoding: 'utf8',
    env: { ...process.env, SEAMSCOUT_CONFIG_DIR: join(benchCache, 'config') },
    maxBuffer: 64 * 1024 * 1024,
  });
  const seconds = (performance.now() - started) / 1000;
  const peak = /PEAK (\d+)/.exec(r.stderr);
  if (!peak) throw new Error(`the check did not report its memory: ${r.stderr.slice(-500)}`);
  const first = /FIRSTPAIR (\d+(?:\.\d+)?)/.exec(r.stderr);
  return { seconds, peakMiB: Number(peak[1]) / 1024, status: r.status, firstPairSeconds: first ? Number(first[1]) / 1000 : null };
}

/** Decodes every frame on one thread; returns the seconds and the decoded images. */
export async function decodeFloor(folder: string, maxSide: number): Promise<{ seconds: number; images: Map<string, GrayImage> }> {
  const threads = sharp.concurrency();
  sharp.concurrency(1);
  const images = new Map<string, GrayImage>();
  const started = performance.now();
  for (const f of framesOf(folder)) images.set(f, (await decodeForAnalysis(join(folder, f), maxSide)).image);
  const seconds = (performance.now() - started) / 1000;
  sharp.concurrency(threads);
  return { seconds, images };
}

/**
 * Decodes every frame with `inFlight` decodes at a time on sharp's threads: how fast the frames can
 * be read with every core at it, the bound no check on this machine can beat.
 */
export async function decodeAllCores(folder: string, maxSide: number, inFlight = 6): Promise<number> {
  const files = framesOf(folder);
  let next = 0;
  const started = performance.now();
  await Promise.all(Array.from({ length: inFlight }, async () => {
    while (next < files.length) await decodeForAnalysis(join(folder, files[next++]), maxSide);
  }));
  return (performance.now() - started) / 1000;
}
