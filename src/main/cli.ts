import { basename } from 'node:path';
import { parseArgs } from 'node:util';
import { exposureDifference } from '../core/exposure.js';
import { detectAndDescribe } from '../core/features.js';
import { estimatePairGeometry } from '../core/pair-geometry.js';
import { checkCommand, checkUsage } from './check-command.js';
import type { DecodedFrame } from './decode.js';
import { decodeForAnalysis } from './decode.js';
import { demoCommand, demoUsage } from './demo-command.js';
import { plainArgumentError, plainFileError } from './argument-words.js';
import { ensureDemoShoot } from './demo-shoot.js';
import { forTerminal, progressLine } from './summary.js';

const usage = `Usage:
  seamscout check [folder] [options]   check a shot sequence (the demo shoot when no folder is given)
  seamscout demo <folder> [options]    write a demo shoot with its truth file (see seamscout demo --help)
  seamscout pair <frameA> <frameB>     match two frames and print overlap, inliers and EV difference
  seamscout help [command]             this text, or a command's options

${checkUsage}`;

const pairUsage = `Usage: seamscout pair <frameA> <frameB> [options]

Matches two frames and prints matches, inliers, overlap, EV difference and the fit's error.

Options:
  --size N                 longest side of the analysis image in px (default 1500)
  --help                   this text

Exit status: 0 matched; 1 no model found; 2 a usage error or a frame that cannot be read.
`;

async function pairCommand(args: string[]): Promise<number> {
  let parsed;
  try {
    parsed = parseArgs({ args, allowPositionals: true, options: { size: { type: 'string', default: '1500' }, help: { type: 'boolean' } } });
  } catch (err) {
    process.stderr.write(`seamscout: ${forTerminal(plainArgumentError(err, 'pair', args))}\n`);
    return 2;
  }
  const { values, positionals } = parsed;
  if (values.help) {
    process.stdout.write(pairUsage);
    return 0;
  }
  if (positionals.length !== 2) {
    process.stderr.write(`Expected two frames for pair but received ${positionals.length}\n\n${pairUsage}`);
    return 2;
  }
  const size = Number(values.size);
  if (!Number.isInteger(size) || size < 64) {
    process.stderr.write(`Expected a whole number of pixels (64 or more) for --size but received ${values.size}\n`);
    return 2;
  }
  const [pa, pb] = positionals;
  const decoded = (path: string): Promise<DecodedFrame> => decodeForAnalysis(path, size).catch((err: unknown) => {
    throw new Error(plainFileError(err, path, 'an image file', 'pair'), { cause: err });
  });
  const [a, b] = await Promise.all([decoded(pa), decoded(pb)]);
  const g = estimatePairGeometry(detectAndDescribe(a.image), detectAndDescribe(b.image));
  const ev = g.homography ? exposureDifference(a.image, b.image, g.homography) : null;
  const pct = (v: number | null): string => (v === null ? 'n/a' : `${(100 * v).toFixed(1)} %`);
  const lines = [
    `${basename(pa)} -> ${basename(pb)}`,
    `  matches     ${g.matches.count}`,
    `  inliers     ${g.inliers}`,
    `  overlap     ${pct(g.overlap)}`,
    `  EV change   ${ev ? `${ev.ev >= 0 ? '+' : ''}${ev.ev.toFixed(2)} EV (${basename(pb)} ${ev.ev >= 0 ? 'brighter' : 'darker'})` : 'n/a'}`,
    `  RMS error   ${g.rmsError === null ? 'n/a' : `${g.rmsError.toFixed(2)} px at analysis size`}`,
    `  result      ${g.homography ? 'matched' : `no model (${g.noModel})`}`,
  ];
  process.stdout.write(lines.join('\n') + '\n');
  return g.homography ? 0 : 1;
}

/** The demo shoot, written on first use with a progress line on a terminal. */
function demoFolder(): Promise<string> {
  const tty = process.stderr.isTTY;
  return ensureDemoShoot((_file, done, total) => {
    if (tty) process.stderr.write(progressLine('demo', done, total));
  }).finally(() => {
    if (tty) process.stderr.write('\r\x1b[K');
  });
}

export async function main(argv: string[]): Promise<number> {
  const [command, ...rest] = argv;
  if (!command || command === '--help' || command === 'help') {
    const topic = command === 'help' ? rest[0] : undefined;
    const topics: Record<string, string> = { check: checkUsage, demo: demoUsage, pair: pairUsage };
    if (topic !== undefined && !(topic in topics)) {
      process.stderr.write(`Expected a command (check, demo, pair) for help but received ${forTerminal(topic)}\n`);
      return 2;
    }
    process.stdout.write(topic ? topics[topic] : usage);
    return command ? 0 : 2;
  }
  try {
    if (command === 'pair') return await pairCommand(rest);
    if (command === 'check') return await checkCommand(rest, { demoFolder });
    if (command === 'demo') return await demoCommand(rest);
    process.stderr.write(`Expected a command (check, demo, pair) but received ${command}\n\n${usage}`);
    return 2;
  } catch (err) {
    process.stderr.write(`seamscout: ${forTerminal((err as Error).message)}\n`);
    return 2;
  }
}

main(process.argv.slice(2)).then((code) => {
  process.exitCode = code;
});
