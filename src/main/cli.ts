import { checkCommand, checkUsage } from './check-command.js';
import { demoCommand, demoUsage } from './demo-command.js';
import { pairCommand, pairUsage } from './pair-command.js';
import { ensureDemoShoot } from './demo-shoot.js';
import { forTerminal, progressLine } from './summary.js';

const usage = `Usage:
  seamscout check [folder] [options]   check a shot sequence (the demo shoot when no folder is given)
  seamscout demo <folder> [options]    write a demo shoot with its truth file (see seamscout demo --help)
  seamscout pair <frameA> <frameB>     match two frames as the check does: inliers, overlap, EV difference, verdict
  seamscout help [command]             this text, or a command's options

${checkUsage}`;

/**
 * The demo shoot. Only when it must be written (first use): one line saying so and how long it
 * should take, a progress line under it on a terminal, and the time it took.
 */
function demoFolder(): Promise<string> {
  const tty = process.stderr.isTTY;
  let started: number | null = null;
  return ensureDemoShoot({
    onStart: (frames, seconds) => {
      started = performance.now();
      process.stderr.write(`writing the demo shoot (about ${seconds} s): ${frames} frames, on first use only\n`);
    },
    onFrame: (_file, done, total) => {
      if (tty) process.stderr.write(progressLine('demo', done, total));
    },
  }).then(
    (folder) => {
      if (started === null) return folder;
      if (tty) process.stderr.write('\r\x1b[K');
      process.stderr.write(`wrote the demo shoot in ${Math.round((performance.now() - started) / 1000)} s\n`);
      return folder;
    },
    (err: unknown) => {
      if (tty && started !== null) process.stderr.write('\r\x1b[K');
      throw err;
    },
  );
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
