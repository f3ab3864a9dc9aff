import { parseArgs } from 'node:util';
import type { DemoPlanOptions } from '../core/demo/demo-plan.js';
import { defaultDemoPlanOptions, expectDemoPlanOptions, demoMaxPixels, demoMaxSide, demoMaxStations, demoMinSide, demoMinStationsWithProblems } from '../core/demo/demo-plan.js';
import { demoTruthFile } from '../core/demo/demo-truth.js';
import { DemoFolderError, inspectShootFolder, writeDemoShoot } from './demo-writer.js';

export const demoUsage = `Usage:
  seamscout demo <folder> [--frames N] [--size WxH] [--seed S] [--clean]

Writes a demo shoot: a sweep of bracketed frames (-2, 0, +2 EV) round an invented coastline, with
EXIF, and ${demoTruthFile} beside them holding the true geometry, exposures and planted problems.
The folder is created if missing; it must be empty or hold a previous demo shoot, which is replaced.

Options:
  --frames N   camera positions (stations) in the sweep (default ${defaultDemoPlanOptions.stations}; at least ${demoMinStationsWithProblems}, or 2 with --clean)
  --size WxH   frame size in pixels (default ${defaultDemoPlanOptions.width}x${defaultDemoPlanOptions.height})
  --seed S     seed of the scene and the plan (default ${defaultDemoPlanOptions.seed})
  --clean      plant no problems
`;

class UsageError extends Error {}

function wholeNumber(text: string, lo: number, hi: number, name: string): number {
  const v = /^\d+$/.test(text) ? Number(text) : NaN;
  if (!Number.isSafeInteger(v) || v < lo || v > hi) throw new UsageError(`Expected a whole number from ${lo} to ${hi} for ${name} but received ${text}`);
  return v;
}

function frameSize(text: string): [number, number] {
  const m = /^(\d+)x(\d+)$/i.exec(text);
  const w = m ? Number(m[1]) : NaN, h = m ? Number(m[2]) : NaN;
  if (!(w >= demoMinSide && w <= demoMaxSide && h >= demoMinSide && h <= demoMaxSide && w * h <= demoMaxPixels)) {
    throw new UsageError(`Expected WIDTHxHEIGHT with each side from ${demoMinSide} to ${demoMaxSide} px and at most ${demoMaxPixels / 1e6} MP for --size but received ${text}`);
  }
  return [w, h];
}

function parse(args: string[]): { folder: string; options: DemoPlanOptions } {
  let parsed;
  try {
    parsed = parseArgs({
      args,
      allowPositionals: true,
      strict: true,
      options: { frames: { type: 'string' }, size: { type: 'string' }, seed: { type: 'string' }, clean: { type: 'boolean', default: false } },
    });
  } catch (err) {
    const e = err as Error & { code?: string };
    if (e.code === 'ERR_PARSE_ARGS_UNKNOWN_OPTION') {
      const name = /'([^']+)'/.exec(e.message)?.[1] ?? e.message;
      throw new UsageError(`Expected one of --frames, --size, --seed, --clean for option but received ${name}`);
    }
    if (e.code === 'ERR_PARSE_ARGS_INVALID_OPTION_VALUE') {
      // A missing value, or one that starts with a dash (parseArgs will not take it as a value).
      const name = /'(--[a-z]+)/.exec(e.message)?.[1] ?? 'an option';
      const at = args.indexOf(name);
      const next = at >= 0 && at + 1 < args.length ? args[at + 1] : 'nothing';
      throw new UsageError(`Expected a value for ${name} but received ${next}`);
    }
    throw err;
  }
  const { values, positionals } = parsed;
  if (positionals.length !== 1) throw new UsageError(`Expected one folder for demo but received ${positionals.length}`);
  const clean = values.clean === true;
  const stations = values.frames === undefined ? defaultDemoPlanOptions.stations : wholeNumber(values.frames, clean ? 2 : demoMinStationsWithProblems, demoMaxStations, '--frames');
  const [width, height] = values.size === undefined ? [defaultDemoPlanOptions.width, defaultDemoPlanOptions.height] : frameSize(values.size);
  const seed = values.seed === undefined ? defaultDemoPlanOptions.seed : wholeNumber(values.seed, 0, 0xffffffff, '--seed');
  const options = { stations, width, height, seed, clean };
  try {
    expectDemoPlanOptions(options);
  } catch (err) {
    throw new UsageError((err as Error).message);
  }
  return { folder: positionals[0], options };
}

/**
 * `seamscout demo <folder> [--frames N] [--size WxH] [--seed S] [--clean]`: writes a demo shoot and
 * prints what it wrote. Returns 0, or 2 for bad arguments or a folder it must not write into.
 * Other failures (a full disk, say) are thrown, after the files of this run are removed.
 */
export async function demoCommand(args: string[]): Promise<number> {
  if (args.includes('--help')) {
    process.stdout.write(demoUsage);
    return 0;
  }
  let folder: string, options: DemoPlanOptions;
  try {
    ({ folder, options } = parse(args));
  } catch (err) {
    if (err instanceof UsageError) {
      process.stderr.write(`${(err as Error).message}\n\n${demoUsage}`);
      return 2;
    }
    throw err;
  }
  const state = await inspectShootFolder(folder);
  if (state.kind === 'other') {
    process.stderr.write(`Expected an empty folder or a previous demo shoot for ${folder} but received a folder that is neither: ${state.reason}\n`);
    return 2;
  }
  process.stdout.write(`Writing a demo shoot of ${options.stations} stations at ${options.width}x${options.height} (seed ${options.seed}${options.clean ? ', clean' : ''}) to ${folder} ...\n`);
  let result;
  try {
    result = await writeDemoShoot(folder, options);
  } catch (err) {
    if (err instanceof DemoFolderError) {
      process.stderr.write(`${err.message}\n`);
      return 2;
    }
    throw err;
  }
  const { plan, truth } = result;
  const lines = [
    `${result.replaced ? 'Replaced the previous demo shoot: wrote' : 'Wrote'} ${plan.frames.length} frames (${plan.frames[0].file} to ${plan.frames[plan.frames.length - 1].file}) and ${demoTruthFile} in ${(result.elapsedMs / 1000).toFixed(1)} s`,
    `  stations    ${plan.stations.length}, brackets of ${[...new Set(plan.frames.map((f) => f.evBias))].map((b) => (b > 0 ? `+${b}` : `${b}`)).join('/')} EV`,
    `  sweep       ${plan.fullTurn ? 'a full 360-degree turn' : 'a partial turn (too few stations to close it)'}`,
    `  pairs       ${truth.pairs.length} overlapping pairs of frames in the truth file`,
  ];
  if (plan.problems.length === 0) lines.push('  problems    none planted (--clean)');
  else {
    lines.push('  planted problems:');
    for (const p of plan.problems) lines.push(`    ${p.code.padEnd(19)}${p.detail}`);
  }
  process.stdout.write(lines.join('\n') + '\n');
  return 0;
}
