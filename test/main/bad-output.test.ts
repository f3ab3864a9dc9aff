// Exports that land where they cannot or must not (issue 17, "Writing"): a FAT file system (no hard
// links), a full disk, Ctrl-C and kill during a write, leftovers of a killed run, the checked folder
// itself, and names that are not regular files; and the app's exports, atomic and with a checked
// budget. Real file systems where it matters: FAT through fusefat (Debian fusefat, dosfstools),
// a full disk as a 64 KiB tmpfs (needs root, as CI runs). JSON reports are validated against
// schema/report.schema.json (JSON Schema 2020-12 via ajv).
//
// Interrupted writes are made slow with SEAMSCOUT_TEST_SLOW_WRITE_MS (src/main/write-file.ts: a
// pause half-way through writing a temp file, for tests only), so a signal lands mid-write.
import { execFileSync, spawn } from 'node:child_process';
import { copyFileSync, existsSync, lstatSync, mkdirSync, readdirSync, readFileSync, rmSync, statSync, symlinkSync, utimesSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import Ajv2020 from 'ajv/dist/2020.js';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { AppService } from '../../src/main/app-service.js';
import { writeFileAtomic } from '../../src/main/write-file.js';
import { projectRoot, runCli, tempDir } from '../helpers/cli.js';
import { externalFixture } from '../helpers/images.js';

const sbin = { PATH: `${process.env.PATH}:/usr/sbin:/sbin` };
const run = (cmd: string, args: string[]): string => execFileSync(cmd, args, { env: { ...process.env, ...sbin }, stdio: ['ignore', 'pipe', 'pipe'] }).toString();

// The leuven pair (test/fixtures/external/SOURCES.md): two real photographs, a check of a few seconds.
let card: string;
const photoBytes = (): Buffer[] => ['leuvenA.jpg', 'leuvenB.jpg'].map((f) => readFileSync(join(card, f)));
const schema = (): object => JSON.parse(readFileSync(join(projectRoot, 'schema/report.schema.json'), 'utf8'));
const ourTemps = (dir: string): string[] => (existsSync(dir) ? readdirSync(dir).filter((n) => /\.tmp$/.test(n)) : []);
const unmounts: (() => void)[] = [];

beforeAll(() => {
  card = tempDir('seamscout-card-');
  for (const f of ['leuvenA.jpg', 'leuvenB.jpg']) copyFileSync(externalFixture(f), join(card, f));
});
afterAll(() => {
  for (const u of unmounts) {
    try {
      u();
    } catch {
      // Already gone.
    }
  }
});

/** The command as a user runs it, with its own cache and settings folders, killable. */
function startCli(args: string[], env: Record<string, string> = {}) {
  const home = tempDir('seamscout-home-');
  const dirs = { cache: join(home, 'cache'), config: join(home, 'config') };
  const child = spawn(process.execPath, ['--import', 'tsx', join(projectRoot, 'src/main/cli.ts'), ...args], {
    cwd: projectRoot,
    env: { ...process.env, SEAMSCOUT_CACHE_DIR: dirs.cache, SEAMSCOUT_CONFIG_DIR: dirs.config, ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let stderr = '';
  child.stdout.resume();
  child.stderr.on('data', (d) => (stderr += d));
  const done = new Promise<{ code: number | null; signal: NodeJS.Signals | null; stderr: string }>((resolve, reject) => {
    child.on('error', reject);
    child.on('close', (code, signal) => resolve({ code, signal, stderr }));
  });
  return { child, done, dirs };
}

async function waitFor(test: () => boolean, ms: number): Promise<boolean> {
  for (const end = Date.now() + ms; Date.now() < end; ) {
    if (test()) return true;
    await new Promise((r) => setTimeout(r, 25));
  }
  return test();
}

describe('exports on any file system', () => {
  it('writes to a FAT file system (no hard links) without --force, refuses an existing file there, and replaces it with --force', async () => {
    const root = tempDir('seamscout-fat-');
    const image = join(root, 'card.img');
    const fat = join(root, 'mnt');
    mkdirSync(fat);
    writeFileSync(image, '');
    run('truncate', ['-s', '16M', image]);
    run('mkfs.vfat', [image]);
    run('fusefat', ['-o', 'rw+', image, fat]);
    unmounts.push(() => run('fusermount', ['-u', fat]));
    // The premise: this file system refuses hard links (machine.md, measured: EPERM).
    writeFileSync(join(fat, 'probe'), 'x');
    expect(() => execFileSync('ln', [join(fat, 'probe'), join(fat, 'probe2')], { stdio: 'ignore' })).toThrow();

    const json = join(fat, 'r.json'), csv = join(fat, 'r.csv');
    const first = await runCli(['check', card, '--json', json, '--csv', csv, '--threads', '0']);
    expect(first.stderr).not.toMatch(/seamscout:/);
    expect(first.code).toBe(1);
    const report = JSON.parse(readFileSync(json, 'utf8'));
    const validate = new Ajv2020.default({ allErrors: true, strict: false }).compile(schema());
    expect(validate(report), JSON.stringify(validate.errors)).toBe(true);
    expect(readFileSync(csv, 'utf8')).toMatch(/^a,b,kind/);

    // fusefat ignores O_TRUNC (measured): a shorter file is made anew, not written over.
    rmSync(json);
    writeFileSync(json, 'keep me');
    const again = await runCli(['check', card, '--json', json, '--threads', '0']);
    expect(again.code).toBe(2);
    expect(again.stderr).toMatch(/r\.json but it exists \(use --force to overwrite\)/);
    expect(readFileSync(json, 'utf8')).toBe('keep me');

    const forced = await runCli(['check', card, '--json', json, '--force', '--threads', '0']);
    expect(forced.code).toBe(1);
    expect(JSON.parse(readFileSync(json, 'utf8')).frames).toHaveLength(2);
    expect(ourTemps(fat)).toEqual([]);
  }, 40_000);

  it('on a full disk says the disk is full, names the file, and leaves no temp file', async () => {
    const disk = tempDir('seamscout-full-');
    run('mount', ['-t', 'tmpfs', '-o', 'size=64k', 'tmpfs', disk]);
    unmounts.push(() => run('umount', [disk]));
    // 4 KiB left: the report (about 10 kB) is cut off part-way, so a temp file exists when it fails.
    writeFileSync(join(disk, 'filler'), Buffer.alloc(60 * 1024));
    const json = join(disk, 'report.json');
    const r = await runCli(['check', card, '--json', json, '--threads', '0']);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain(`Could not write ${json}: the disk is full`);
    expect(readdirSync(disk)).toEqual(['filler']);
  });
});

describe('names', () => {
  it('writes an export whose name is as long as the file system allows (255 bytes), through a shorter temp name', async () => {
    const dir = tempDir('seamscout-long-');
    const name = 'é'.repeat(125) + '.json';
    expect(Buffer.byteLength(name)).toBe(255);
    await writeFileAtomic(join(dir, name), '{}');
    expect(readdirSync(dir)).toEqual([name]);
    expect(readFileSync(join(dir, name), 'utf8')).toBe('{}');
  });
});

describe('interrupted writes', () => {
  it('Ctrl-C (SIGINT) while the feature cache is written leaves no partial cache file', async () => {
    const cli = startCli(['check', card, '--threads', '0'], { SEAMSCOUT_TEST_SLOW_WRITE_MS: '30000' });
    const features = join(cli.dirs.cache, 'features');
    expect(await waitFor(() => ourTemps(features).length > 0, 30_000)).toBe(true);
    expect(ourTemps(features)[0]).toMatch(/^\.[0-9a-f]{40}\.bin\.seamscout-\d+-[0-9a-f]{8}\.tmp$/);
    cli.child.kill('SIGINT');
    const end = await cli.done;
    // Ended as Ctrl-C ends a program (the shell shows 130), not as a normal exit.
    expect(end.signal).toBe('SIGINT');
    expect(readdirSync(features).filter((n) => !n.endsWith('.bin'))).toEqual([]);
  });

  it('SIGTERM while an export is written leaves neither the export nor its temp file', async () => {
    const out = tempDir('seamscout-out-');
    const json = join(out, 'report.json');
    const cli = startCli(['check', card, '--json', json, '--no-cache', '--threads', '0'], { SEAMSCOUT_TEST_SLOW_WRITE_MS: '30000' });
    expect(await waitFor(() => ourTemps(out).length > 0, 30_000)).toBe(true);
    expect(ourTemps(out)[0]).toMatch(/^\.report\.json\.seamscout-\d+-[0-9a-f]{8}\.tmp$/);
    cli.child.kill('SIGTERM');
    const end = await cli.done;
    expect(end.signal).toBe('SIGTERM');
    expect(readdirSync(out)).toEqual([]);
  });

  it('sweeps temp files of a run that died (gone pid, or old) at the next start, and nothing else', async () => {
    const out = tempDir('seamscout-out-');
    const cache = tempDir('seamscout-cache-');
    const features = join(cache, 'features');
    mkdirSync(features);
    // A pid that no longer runs: a process that has ended.
    const dead = spawn(process.execPath, ['-e', '0']);
    await new Promise((r) => dead.on('close', r));
    const deadPid = dead.pid!;
    // The third is named as temp files were before they carried our name (`.<name>.<pid>.<hex>.tmp`).
    const stale = [`.report.json.seamscout-${deadPid}-0badc0de.tmp`, `.old.csv.seamscout-${process.pid}-00c0ffee.tmp`, `.pairs.csv.${deadPid}.deadbeef.tmp`];
    const kept = [`.busy.csv.seamscout-${process.pid}-12345678.tmp`, '.report.json.tmp', 'notes.seamscout-1-abcdef12.tmp'];
    for (const n of [...stale, ...kept]) writeFileSync(join(out, n), 'x');
    writeFileSync(join(features, `.${'0'.repeat(40)}.bin.seamscout-${deadPid}-abcdef12.tmp`), 'x');
    // Old: two hours ago, though its process (this one) still runs.
    const old = (Date.now() - 2 * 3600_000) / 1000;
    utimesSync(join(out, stale[1]), old, old);
    const r = await runCli(['check', card, '--json', join(out, 'report.json'), '--threads', '0'], { SEAMSCOUT_CACHE_DIR: cache });
    expect(r.code).toBe(1);
    expect(readdirSync(out).sort()).toEqual([...kept, 'report.json'].sort());
    expect(ourTemps(features)).toEqual([]);
  });
});

describe('never onto or into the checked folder, never over anything but a regular file', () => {
  it('refuses an export onto a photograph of the checked folder, even with --force, and through a link to the folder', async () => {
    const before = photoBytes();
    const links = tempDir('seamscout-link-');
    symlinkSync(card, join(links, 'card'));
    // A link outside the folder to one of its photographs: its real path is inside.
    symlinkSync(join(card, 'leuvenA.jpg'), join(links, 'report.dot'));
    const targets = [join(card, 'leuvenA.jpg'), join(links, 'card', 'leuvenB.jpg'), join(card, 'pairs.graphml'), join(links, 'report.dot')];
    const r = await runCli(['check', card, '--json', targets[0], '--csv', targets[1], '--graphml', targets[2], '--dot', targets[3], '--force', '--threads', '0']);
    expect(r.code).toBe(2);
    // Each refused before the check, by name.
    for (const t of targets) expect(r.stderr).toContain(`Cannot write ${t}: it is inside the folder being checked (${card}), which is never written to`);
    expect(r.stdout).toBe('');
    expect(photoBytes()).toEqual(before);
    expect(readdirSync(card).sort()).toEqual(['leuvenA.jpg', 'leuvenB.jpg']);
  });

  it('refuses to replace a device (/dev/full) even with --force, and leaves it a device', async () => {
    const r = await runCli(['check', card, '--json', '/dev/full', '--force', '--threads', '0']);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('Cannot write /dev/full: it is a device, and only regular files are ever replaced');
    expect(statSync('/dev/full').isCharacterDevice()).toBe(true);
    expect(readdirSync('/dev').filter((n) => n.includes('seamscout'))).toEqual([]);
  });

  it('refuses to replace a named pipe, and never opens it', async () => {
    const dir = tempDir('seamscout-pipe-');
    const pipe = join(dir, 'report.json');
    run('mkfifo', [pipe]);
    // Opening a pipe for writing with no reader would hang: a refusal that returns is the proof.
    await expect(writeFileAtomic(pipe, '{}', { overwrite: true })).rejects.toThrow('it is a named pipe, and only regular files are ever replaced');
    expect(lstatSync(pipe).isFIFO()).toBe(true);
    expect(readdirSync(dir)).toEqual(['report.json']);
  });

  it('refuses to replace a folder', async () => {
    const dir = tempDir('seamscout-dir-');
    mkdirSync(join(dir, 'report.json'));
    writeFileSync(join(dir, 'report.json', 'inside.txt'), 'keep');
    await expect(writeFileAtomic(join(dir, 'report.json'), '{}', { overwrite: true })).rejects.toThrow('it is a folder, and only regular files are ever replaced');
    expect(readFileSync(join(dir, 'report.json', 'inside.txt'), 'utf8')).toBe('keep');
    expect(readdirSync(dir)).toEqual(['report.json']);
  });

  it('refuses to replace a symbolic link to a folder or a device', async () => {
    const dir = tempDir('seamscout-links-');
    mkdirSync(join(dir, 'folder'));
    symlinkSync(join(dir, 'folder'), join(dir, 'to-folder.json'));
    symlinkSync('/dev/null', join(dir, 'to-device.json'));
    await expect(writeFileAtomic(join(dir, 'to-folder.json'), '{}', { overwrite: true })).rejects.toThrow('it is a symbolic link to a folder');
    await expect(writeFileAtomic(join(dir, 'to-device.json'), '{}', { overwrite: true })).rejects.toThrow('it is a symbolic link to a device');
    expect(lstatSync(join(dir, 'to-folder.json')).isSymbolicLink()).toBe(true);
    expect(lstatSync(join(dir, 'to-device.json')).isSymbolicLink()).toBe(true);
    expect(readdirSync(dir).sort()).toEqual(['folder', 'to-device.json', 'to-folder.json']);
  });
});

describe("the app's exports (both shells call the service)", () => {
  let service: AppService;
  let id: number;
  beforeAll(async () => {
    const home = tempDir('seamscout-app-');
    process.env.SEAMSCOUT_CONFIG_DIR = join(home, 'config');
    process.env.SEAMSCOUT_CACHE_DIR = join(home, 'cache');
    let finished: (e: { error: string | null }) => void = () => {};
    const done = new Promise<{ error: string | null }>((r) => (finished = r));
    service = new AppService({ demoFolder: async () => card, threads: 0, onProgress: () => {}, onDone: (e) => finished(e) });
    id = await service.startCheck({ folder: card });
    expect((await done).error).toBeNull();
  });
  afterAll(async () => {
    await service?.close();
  });

  it('refuses a budget that is not one ({minInliers: "lots"}), naming the field as the budget panel does', () => {
    expect(() => service.exportReport(id, 'json', { minInliers: 'lots' })).toThrow('Expected a number from 0 to 10000 for the fewest inliers but received lots');
    expect(() => service.exportReport(id, 'json', { weakOverlap: 0.1, reshootOverlap: 0.2 })).toThrow('Expected the reshoot below overlap (20 %) not above the weak below overlap (10 %)');
    expect(() => service.exportReport(id, 'json', { weakOverlap: 1.5 })).toThrow('Expected a percentage from 0 to 100 for the weak below overlap but received 150');
    expect(() => service.exportReport(id, 'json', { lots: 3 })).toThrow(/Expected a match budget field \(the fewest inliers, .*\) but received "lots"/);
    expect(() => service.exportReport(id, 'json', 'strict')).toThrow('Expected a match budget (its thresholds by name) for budget but received "strict"');
    const { text } = service.exportReport(id, 'json', { minInliers: '35' });
    const report = JSON.parse(text);
    expect(report.budget.minInliers).toBe(35);
    const validate = new Ajv2020.default({ allErrors: true, strict: false }).compile(schema());
    expect(validate(report), JSON.stringify(validate.errors)).toBe(true);
  });

  it('writes a desktop export atomically over the chosen file, and never into the checked folder', async () => {
    const out = tempDir('seamscout-out-');
    const target = join(out, 'seamscout-report.json');
    writeFileSync(target, 'replace me (the save dialog asked)');
    const { text } = service.exportReport(id, 'json', {});
    expect(await service.writeExport(id, target, text)).toBe(target);
    expect(readFileSync(target, 'utf8')).toBe(text);
    expect(readdirSync(out)).toEqual(['seamscout-report.json']);
    const before = photoBytes();
    const link = join(out, 'card-link');
    symlinkSync(card, link);
    await expect(service.writeExport(id, join(card, 'leuvenA.jpg'), text)).rejects.toThrow(/inside the folder being checked/);
    await expect(service.writeExport(id, join(link, 'seamscout-report.json'), text)).rejects.toThrow(/inside the folder being checked/);
    expect(photoBytes()).toEqual(before);
    expect(readdirSync(card).sort()).toEqual(['leuvenA.jpg', 'leuvenB.jpg']);
  });
});
