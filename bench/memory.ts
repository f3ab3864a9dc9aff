// Peak memory of a check against the length of the sequence (issue: memory follows the frames in
// flight, not the sequence): checks the first 24 and then all 201 frames of a 67-station bracketed
// sweep of 24 MP (6000x4000) JPEGs from the demo generator, cached in .bench-cache between runs,
// each check in its own process, and prints wall time and peak resident memory of both.
import { spawnSync } from 'node:child_process';
import { readdirSync } from 'node:fs';
import { join } from 'node:path';
import sharp from 'sharp';
import { defaultMaxSide } from '../src/main/check.js';
import { decodeForAnalysis } from '../src/main/decode.js';
import { projectRoot } from '../test/helpers/cli.js';
import { benchCache, longSweep, longSweepPrefix } from './sequences.js';

const cache = benchCache;
const full = await longSweep();
const short = await longSweepPrefix(24);

function measure(folder: string): { seconds: number; peakMiB: number; frames: number } {
  // The command line as a user runs it, in a child that reports its own peak resident set (all its
  // threads) when it exits.
  const script = `process.on('exit', () => process.stderr.write('\\nPEAK ' + process.resourceUsage().maxRSS + '\\n')); process.argv = [process.argv[0], 'seamscout', 'check', ${JSON.stringify(folder)}, '--no-cache', '--no-progress']; await import(${JSON.stringify(join(projectRoot, 'src/main/cli.ts'))});`;
  const started = performance.now();
  const r = spawnSync(process.execPath, ['--import', 'tsx', '--input-type=module', '-e', script], {
    encoding: 'utf8',
    env: { ...process.env, SEAMSCOUT_CONFIG_DIR: join(cache, 'config') },
    maxBuffer: 64 * 1024 * 1024,
  });
  const seconds = (performance.now() - started) / 1000;
  const peak = /PEAK (\d+)/.exec(r.stderr);
  if (!peak) throw new Error(`the check did not report its memory: ${r.stderr.slice(-500)}`);
  return { seconds, peakMiB: Number(peak[1]) / 1024, frames: readdirSync(folder).filter((n) => n.endsWith('.JPG')).length };
}

// The decode floor: sharp decoding the 24 frames to the analysis size one after another on one
// thread. No check can be faster than reading its frames (target: the check within 0.7 of it).
async function decodeFloor(folder: string): Promise<number> {
  const files = readdirSync(folder).filter((f) => f.endsWith('.JPG')).sort();
  const threads = sharp.concurrency();
  sharp.concurrency(1);
  const started = performance.now();
  for (const f of files) await decodeForAnalysis(join(folder, f), defaultMaxSide);
  sharp.concurrency(threads);
  return (performance.now() - started) / 1000;
}

const floor = await decodeFloor(short);
const a = measure(short);
const b = measure(full);
console.log(`memory benchmark, ${new Date().toISOString().slice(0, 10)}, node ${process.version}`);
for (const m of [a, b]) console.log(`${String(m.frames).padStart(4)} frames of 24 MP: ${m.seconds.toFixed(1)} s, peak RSS ${m.peakMiB.toFixed(0)} MiB`);
console.log(`decode floor for the 24 frames: ${floor.toFixed(1)} s on one thread; check / floor = ${(a.seconds / floor).toFixed(2)} (target 0.7 or less)`);
console.log(`peak RSS ratio ${(b.peakMiB / a.peakMiB).toFixed(2)} for ${(b.frames / a.frames).toFixed(1)}x the frames (target: 200 frames under 1 GiB)`);
