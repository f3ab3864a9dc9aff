// The command's manners: each command's help, plain messages, and exit codes that mean what the
// help says (0 all ok, 1 flagged or too little to judge, 2 nothing checked or an output not written).
import { chmodSync, copyFileSync, mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { externalFixture } from '../helpers/images.js';
import { runCli, tempDir } from '../helpers/cli.js';

describe('help', () => {
  it('help check, help demo, help pair and pair --help print that command’s options', async () => {
    const [check, demo, pair, pairFlag] = await Promise.all([runCli(['help', 'check']), runCli(['help', 'demo']), runCli(['help', 'pair']), runCli(['pair', '--help'])]);
    for (const r of [check, demo, pair, pairFlag]) expect(r.code).toBe(0);
    expect(check.stdout).toMatch(/^Usage: seamscout check/);
    expect(check.stdout).toMatch(/--no-progress +no progress line/);
    expect(check.stdout).toMatch(/^2 nothing checked or an output not written/m);
    expect(demo.stdout).toMatch(/seamscout demo <folder>/);
    expect(demo.stdout).toMatch(/--frames N/);
    expect(pair.stdout).toMatch(/^Usage: seamscout pair/);
    expect(pair.stdout).toMatch(/--size N/);
    expect(pair.stdout).not.toMatch(/--reshoot-overlap/);
    expect(pairFlag.stdout).toBe(pair.stdout);
  });
});

describe('plain messages and exit codes', () => {
  const dir = tempDir();
  it('an empty folder: "no image files in <folder>", once, exit 2', async () => {
    const empty = join(dir, 'empty');
    mkdirSync(empty);
    const r = await runCli(['check', empty, '--threads', '0']);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe(`seamscout: no image files in ${empty}\n`);
    expect(r.stdout).toBe('');
  });

  it('one image: a sequence needs two, exit 1', async () => {
    const one = join(dir, 'one');
    mkdirSync(one);
    copyFileSync(externalFixture('leuvenA.jpg'), join(one, 'a.jpg'));
    const r = await runCli(['check', one, '--threads', '0', '--no-cache']);
    expect(r.code).toBe(1);
    expect(r.stdout).toMatch(/needs at least two overlapping frames/);
    // Counted in words a person reads ("1 frame", not "1 frames"), and the verdict, printed last, points up.
    expect(r.stdout).toMatch(/^1 frame in 1 station$/m);
    expect(r.stdout.trimEnd().split('\n').at(-1)).toBe('Verdict: WEAK. Nothing to reshoot; see above.');
  });

  it('no argument-parser or file-system text: an unknown option, a missing value, a missing frame', async () => {
    const [unknown, missing, frame] = await Promise.all([
      runCli(['check', dir, '--frobnicate']),
      runCli(['check', dir, '--size']),
      runCli(['pair', join(dir, 'nothing.jpg'), externalFixture('leuvenA.jpg')]),
    ]);
    expect(unknown.stderr).toBe('seamscout: Expected an option of check (seamscout help check lists them) but received --frobnicate\n');
    expect(missing.stderr).toBe('seamscout: Expected a value for --size but received nothing\n');
    expect(frame.stderr).toBe(`seamscout: Expected an image file for pair but received ${join(dir, 'nothing.jpg')} (no such file)\n`);
    for (const r of [unknown, missing, frame]) {
      expect(r.code).toBe(2);
      expect(r.stderr).not.toMatch(/ENOENT|positional|Input buffer/);
    }
  });

  it('a coverage map of frames that could not be placed is a note, not exit 2; the other outputs are written', async () => {
    const set = join(dir, 'unplaced');
    mkdirSync(set);
    // Two unrelated pictures: no pair between them matches, so nothing places them.
    copyFileSync(externalFixture('graf1.png'), join(set, 'a.png'));
    copyFileSync(externalFixture('leuvenA.jpg'), join(set, 'b.jpg'));
    const r = await runCli(['check', set, '--threads', '0', '--no-cache', '--coverage-map', join(dir, 'map.svg'), '--json', join(dir, 'r.json')]);
    expect(r.code).toBe(1);
    expect(r.stderr).toContain(`note: ${join(dir, 'map.svg')} not written: the frames could not be placed`);
    expect(r.stderr).toContain(`wrote ${join(dir, 'r.json')}`);
  });
});

describe('output paths are checked before the analysis', () => {
  const dir = tempDir();
  const photos = join(dir, 'photos');
  mkdirSync(photos);
  copyFileSync(externalFixture('leuvenA.jpg'), join(photos, 'a.jpg'));

  it('an output into a folder that does not exist: said plainly, exit 2, nothing analysed', async () => {
    const target = join(dir, 'no-such-folder', 'r.json');
    const r = await runCli(['check', photos, '--json', target]);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe(`seamscout: Cannot write ${target}: its folder ${join(dir, 'no-such-folder')} does not exist\n`);
    expect(r.stdout).toBe('');
  });

  it('an output into a folder the user may not write: said plainly, exit 2 (run as user nobody: root may write anywhere)', async () => {
    const locked = join(dir, 'locked');
    mkdirSync(locked, { mode: 0o755 });
    for (const p of [dir, photos, join(photos, 'a.jpg')]) chmodSync(p, 0o755);
    const target = join(locked, 'r.json');
    const r = await runCli(['check', photos, '--no-cache', '--json', target], {}, 65534);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe(`seamscout: Cannot write ${target}: no permission to write in ${locked}\n`);
    expect(r.stdout).toBe('');
  });
});
