// Reading a bad card: read faults, headers that claim more than the file holds, names that are not
// UTF-8, files the user may not read, and paths that are no regular file. Each kind is checked on a
// real `seamscout check` (or `pair`) process, since some of these ended the process with a signal
// or made it wait for ever; every bad file is made here (nothing downloaded), the good frames are
// two real photographs (test/fixtures/external/SOURCES.md), analysed at 640 px to keep the runs short.
import type { ChildProcess } from 'node:child_process';
import { execFileSync, spawn } from 'node:child_process';
import { chmodSync, closeSync, copyFileSync, existsSync, ftruncateSync, mkdirSync, openSync, readFileSync, writeFileSync, writeSync } from 'node:fs';
import { join } from 'node:path';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { jpegDemand, tooShortForItsSize } from '../../src/core/image/jpeg-demand.js';
import type { Report } from '../../src/core/sequence/report.js';
import { byteBudget, nameOf, pathOfName } from '../../src/main/input-file.js';
import { projectRoot, tempDir } from '../helpers/cli.js';
import { externalFixture } from '../helpers/images.js';
import { box } from '../helpers/raw-containers.js';
import { writeTiff } from '../helpers/tiff-writer.js';

interface Run {
  readonly code: number | null;
  readonly signal: NodeJS.Signals | null;
  readonly stdout: string;
  readonly stderr: string;
  /** Peak resident memory of the command, KiB (GNU time's %M), or null when not measured. */
  readonly maxRssKiB: number | null;
}

/**
 * The command line as a user runs it (node with tsx on the sources), its cache and settings in a
 * fresh folder; as another user when `uid` is given, under GNU time when `measure` is set, killed
 * after `timeoutMs`.
 */
function seamscout(args: string[], options: { uid?: number; measure?: boolean; timeoutMs?: number } = {}): Promise<Run> {
  const home = tempDir('seamscout-home-');
  chmodSync(home, 0o777);
  const command = [process.execPath, '--import', 'tsx', join(projectRoot, 'src/main/cli.ts'), ...args];
  const [file, ...rest] = options.measure ? ['/usr/bin/time', '-f', 'max-rss-kib %M', ...command] : command;
  return new Promise((resolve, reject) => {
    const child: ChildProcess = spawn(file, rest, {
      cwd: projectRoot,
      env: { ...process.env, HOME: home, SEAMSCOUT_CACHE_DIR: join(home, 'cache'), SEAMSCOUT_CONFIG_DIR: join(home, 'config') },
      stdio: ['ignore', 'pipe', 'pipe'],
      ...(options.uid !== undefined ? { uid: options.uid, gid: options.uid } : {}),
    });
    let stdout = '', stderr = '';
    child.stdout!.on('data', (d) => (stdout += d));
    child.stderr!.on('data', (d) => (stderr += d));
    const timer = options.timeoutMs ? setTimeout(() => child.kill('SIGKILL'), options.timeoutMs) : null;
    child.on('error', reject);
    child.on('close', (code, signal) => {
      if (timer) clearTimeout(timer);
      const rss = /max-rss-kib (\d+)/.exec(stderr);
      resolve({ code, signal, stdout, stderr, maxRssKiB: rss ? Number(rss[1]) : null });
    });
  });
}

const nobody = 65534;
const good = (): [string, string] => [externalFixture('leuvenA.jpg'), externalFixture('leuvenB.jpg')];
const readReport = (file: string): Report => JSON.parse(readFileSync(file, 'utf8')) as Report;
const reasonOf = (r: Report, file: string): string | undefined => r.skipped.find((s) => s.file === file)?.reason;

describe('read faults of the card', () => {
  // A FUSE mirror (test/helpers/fault-mirror.py, Debian's python3-fusepy and fuse3) serves the
  // card and fails as a bad card does.
  let mirror: ChildProcess;
  let mountpoint: string;
  let run: Run;
  let report: Report;

  beforeAll(async () => {
    const src = tempDir('seamscout-faulty-');
    const [a, b] = good();
    copyFileSync(a, join(src, 'A.jpg'));
    copyFileSync(b, join(src, 'B.jpg'));
    // A bad sector 64 KiB into a JPEG, and in the pixels of an uncompressed TIFF (its directory,
    // written after them, reads): the decoder once mapped such a file and died of SIGBUS (135).
    await sharp(externalFixture('graf1.png')).jpeg({ quality: 95 }).toFile(join(src, 'sector.jpg'));
    await sharp(externalFixture('graf3.png')).tiff({ compression: 'none' }).toFile(join(src, 'sector.tif'));
    // Cut short while it is read: its listing says the full size, its data ends at 100 000 bytes.
    await sharp(externalFixture('graf1.png')).png().toFile(join(src, 'cut.png'));
    mountpoint = tempDir('seamscout-mount-');
    mirror = spawn('/usr/bin/python3', [join(projectRoot, 'test/helpers/fault-mirror.py'), src, mountpoint,
      '--eio', 'sector.jpg:65536', '--eio', 'sector.tif:300000-800000', '--short', 'cut.png:100000'], { stdio: 'ignore' });
    for (let t = 0; t < 100 && !readFileSync('/proc/mounts', 'utf8').includes(` ${mountpoint} `); t++) await new Promise((r) => setTimeout(r, 100));
    expect(readFileSync('/proc/mounts', 'utf8')).toContain(` ${mountpoint} fuse`);
    const out = join(tempDir(), 'report.json');
    run = await seamscout(['check', mountpoint, '--threads', '0', '--size', '640', '--no-cache', '--no-progress', '--json', out]);
    report = readReport(out);
  }, 60_000);

  afterAll(() => {
    try {
      execFileSync('fusermount', ['-u', mountpoint]);
    } finally {
      mirror.kill();
    }
  });

  it('skips a file with a bad sector as a read error, ends with a status (not a signal), and checks the other frames', () => {
    expect(run.signal).toBeNull();
    expect([0, 1]).toContain(run.code);
    expect(reasonOf(report, 'sector.jpg')).toBe('read error: copy it from the card again');
    expect(reasonOf(report, 'sector.tif')).toBe('read error: copy it from the card again');
    expect(run.stdout).toMatch(/sector\.jpg: read error: copy it from the card again/);
    expect(report.frames.map((f) => f.file).sort()).toEqual(['A.jpg', 'B.jpg']);
    expect(report.pairs.length).toBe(1);
  });

  it('skips a file cut short while it is read as a read error', () => {
    expect(reasonOf(report, 'cut.png')).toBe('read error: copy it from the card again');
  });
});

/** A small JPEG whose frame header is made to claim `side` x `side` pixels. */
async function headerBomb(side: number, progressive: boolean, shade: number): Promise<Buffer> {
  const jpeg = await sharp({ create: { width: 64, height: 64, channels: 3, background: { r: shade, g: 128, b: 255 - shade } } }).jpeg({ quality: 80, progressive }).toBuffer();
  const sof = jpeg.indexOf(Buffer.from([0xff, progressive ? 0xc2 : 0xc0]));
  jpeg.writeUInt16BE(side, sof + 5);
  jpeg.writeUInt16BE(side, sof + 7);
  return jpeg;
}

/**
 * A sparse CR3 of `size` bytes: the brand, a moov box with Canon's metadata box whose CMT1 (a TIFF
 * block) is `cmt1Bytes` long, and nothing else (no track, no preview): only its first bytes are
 * written.
 */
function sparseCr3(path: string, size: number, cmt1Bytes: number): void {
  const tiff = writeTiff(true, [{ name: 'ifd0', entries: [{ tag: 0x010f, type: 2, values: ['Canon'] }, { tag: 0x0112, type: 3, values: [1] }] }], {});
  const be32 = (n: number): Uint8Array => Uint8Array.from([n >>> 24, (n >>> 16) & 255, (n >>> 8) & 255, n & 255]);
  const ftyp = box('ftyp', Buffer.from('crx '), be32(1), Buffer.from('crx isom'));
  const uuid = Buffer.from('85c0b687820f11e08111f4ce462b6a48', 'hex');
  const cmt1 = Buffer.concat([be32(8 + cmt1Bytes), Buffer.from('CMT1'), tiff]);
  const canon = Buffer.concat([be32(8 + 16 + 8 + cmt1Bytes), Buffer.from('uuid'), uuid, cmt1]);
  const moov = Buffer.concat([be32(8 + 8 + 16 + 8 + cmt1Bytes), Buffer.from('moov'), canon]);
  const fd = openSync(path, 'w');
  try {
    writeSync(fd, Buffer.concat([ftyp, moov]));
    ftruncateSync(fd, size);
  } finally {
    closeSync(fd);
  }
}

/**
 * A small progressive JPEG whose header claims `side` x `side` pixels, its data padded with zero
 * bytes past the floor of one bit per block: decoded (the padding reads as data), the decoder holds
 * the whole coefficient array its header asks for.
 */
async function paddedBomb(side: number, shade: number): Promise<Buffer> {
  const jpeg = await headerBomb(side, true, shade);
  const eoi = jpeg.length - 2;
  return Buffer.concat([jpeg.subarray(0, eoi), Buffer.alloc(Math.ceil((side / 8) ** 2 / 8) + 1000), jpeg.subarray(eoi)]);
}

describe('headers that claim more than the file holds', () => {
  let run: Run;
  let padded: Run;
  let report: Report;
  const bombs = ['p1.jpg', 'p2.jpg', 'p3.jpg', 'p4.jpg', 'p5.jpg', 'p6.jpg', 'baseline.jpg'];

  beforeAll(async () => {
    const card = tempDir('seamscout-bombs-');
    const [a, b] = good();
    copyFileSync(a, join(card, 'A.jpg'));
    copyFileSync(b, join(card, 'B.jpg'));
    // Six progressive JPEGs of about 1 kB whose headers claim 14000 x 14000 pixels (each took some
    // 600 MB to decode), and a baseline one.
    for (let k = 0; k < 6; k++) writeFileSync(join(card, bombs[k]), await headerBomb(14000, true, 40 * k));
    writeFileSync(join(card, 'baseline.jpg'), await headerBomb(14000, false, 7));
    // A 1.5 GB CR3 with no preview (read whole, once), and one whose metadata box claims 1.4 GB.
    sparseCr3(join(card, 'empty.cr3'), 1_500_000_000, 200);
    sparseCr3(join(card, 'metadata.cr3'), 1_450_000_000, 1_400_000_000);
    const out = join(tempDir(), 'report.json');
    run = await seamscout(['check', card, '--threads', '0', '--size', '640', '--no-cache', '--no-progress', '--json', out], { measure: true });
    report = readReport(out);
    // Three padded to the floor, claiming 10000 x 10000: 300 MB of coefficients each, once decoded
    // three at a time (1.1 GB over the command's own 200 MB), now one after the other.
    const heavy = tempDir('seamscout-padded-');
    for (let k = 0; k < 3; k++) writeFileSync(join(heavy, `pad${k}.jpg`), await paddedBomb(10000, 60 * k));
    padded = await seamscout(['check', heavy, '--threads', '0', '--size', '640', '--no-cache', '--no-progress'], { measure: true });
  }, 90_000);

  it('refuses progressive and baseline JPEGs whose data is far too short for the size their header claims', () => {
    for (const f of bombs) expect(reasonOf(report, f), f).toBe('damaged or cut short: copy it from the card again');
    expect(report.frames.map((f) => f.file).sort()).toEqual(['A.jpg', 'B.jpg']);
    // At their own size: the claims of the refused files set nothing apart.
    expect(report.frames.map((f) => f.width)).toEqual([751, 751]);
  });

  it('finds no preview in a sparse 1.5 GB CR3 and in one with a 1.4 GB metadata box, reading neither whole', () => {
    expect(report.skipped.find((s) => s.file === 'empty.cr3')?.code).toBe('no-preview');
    expect(report.skipped.find((s) => s.file === 'metadata.cr3')?.code).toBe('no-preview');
  });

  it('checks a card of such files in under 1 GiB of memory', () => {
    expect([0, 1]).toContain(run.code);
    expect(run.maxRssKiB).not.toBeNull();
    expect(run.maxRssKiB!).toBeLessThan(1024 * 1024);
  });

  it('decodes JPEGs that claim much memory one at a time, under 1 GiB', () => {
    expect([0, 1]).toContain(padded.code);
    expect(padded.maxRssKiB).not.toBeNull();
    expect(padded.maxRssKiB!).toBeLessThan(1024 * 1024);
  });

  it('lets decodes hold at most the budget at once, one larger than it alone', async () => {
    const budget = byteBudget(100);
    let now = 0, most = 0;
    const task = (n: number) => budget.hold(n, async () => {
      now += n;
      most = Math.max(most, now);
      await new Promise((r) => setTimeout(r, 5));
      now -= n;
      return n;
    });
    expect(await Promise.all([60, 30, 30, 250, 10, 90].map(task))).toEqual([60, 30, 30, 250, 10, 90]);
    expect(most).toBe(250);
    const small = byteBudget(100);
    let inFlight = 0, peak = 0;
    await Promise.all([40, 40, 40, 40].map((n) => small.hold(n, async () => {
      peak = Math.max(peak, (inFlight += n));
      await new Promise((r) => setTimeout(r, 5));
      inFlight -= n;
    })));
    expect(peak).toBe(80);
  });

  it('sets the floor of JPEG data at one bit per block, which quality-1 flat images stay above', async () => {
    // ITU-T T.81 (annexes F, G, and C for code lengths of 1 to 16 bits): every block is coded with
    // at least one Huffman code word. libjpeg (through sharp) at quality 1 on flat grey, the least
    // an encoder writes, baseline and progressive, 4:2:0 and 4:4:4, colour and one channel.
    for (const progressive of [false, true]) {
      for (const chromaSubsampling of ['4:2:0', '4:4:4']) {
        for (const grey of [false, true]) {
          const img = sharp({ create: { width: 1024, height: 768, channels: 3, background: '#808080' } });
          const jpeg = await (grey ? img.toColourspace('b-w') : img).jpeg({ quality: 1, progressive, chromaSubsampling, optimiseCoding: true }).toBuffer();
          const d = jpegDemand(jpeg)!;
          expect(d.progressive).toBe(progressive);
          expect(d.entropyBytes, `${progressive} ${chromaSubsampling} ${grey}`).toBeGreaterThanOrEqual(d.minEntropyBytes);
          expect(tooShortForItsSize(d)).toBe(false);
        }
      }
    }
    const bomb = jpegDemand(await headerBomb(14000, true, 0))!;
    expect(tooShortForItsSize(bomb)).toBe(true);
    // What the decoder would hold for it: 64 coefficients of 2 bytes for each block, luma at full
    // size and two chroma components at half (4:2:0, sharp's default).
    expect(bomb.decoderBytes).toBe((1750 * 1750 + 2 * 875 * 875) * 128);
  });
});

describe('names, permissions and paths that are no regular file', () => {
  let card: string;
  let run: Run;
  let report: Report;
  const latin1 = Buffer.from('caf\xe9.jpg', 'latin1');

  beforeAll(async () => {
    // Readable by user nobody down to the card (mkdtemp makes 0700 folders).
    card = tempDir('seamscout-odd-');
    chmodSync(card, 0o755);
    const [a, b] = good();
    // A Latin-1 name, as an old camera or FAT tool writes it: the byte E9 is not UTF-8.
    copyFileSync(a, Buffer.concat([Buffer.from(join(card, '/')), latin1]));
    copyFileSync(b, join(card, 'b.jpg'));
    copyFileSync(a, join(card, 'locked.jpg'));
    chmodSync(join(card, 'locked.jpg'), 0);
    mkdirSync(join(card, 'shut'));
    copyFileSync(b, join(card, 'shut', 'inside.jpg'));
    chmodSync(join(card, 'shut'), 0);
    const outDir = tempDir();
    chmodSync(outDir, 0o777);
    // As user nobody, who may not read what mode 000 closes (root may read anything).
    run = await seamscout(['check', card, '--recursive', '--threads', '0', '--size', '640', '--no-cache', '--no-progress', '--json', join(outDir, 'report.json')], { uid: nobody });
    report = readReport(join(outDir, 'report.json'));
  }, 60_000);

  it('checks a frame whose name is not valid UTF-8, shown with the byte escaped as caf\\xE9.jpg', () => {
    expect(existsSync(Buffer.concat([Buffer.from(join(card, '/')), latin1]))).toBe(true);
    expect(report.frames.map((f) => f.file).sort()).toEqual(['b.jpg', 'caf\\xE9.jpg']);
    expect(run.stdout).toContain('caf\\xE9.jpg');
    // The shown name leads back to the exact bytes (the app asks for a frame by its shown name).
    expect(pathOfName(card, 'caf\\xE9.jpg')).toEqual(Buffer.concat([Buffer.from(join(card, '/')), latin1]));
    expect(nameOf(latin1)).toBe('caf\\xE9.jpg');
    expect(nameOf(Buffer.from('café.jpg'))).toBe('café.jpg');
  });

  it('says "no permission to read it" for a file and a sub-folder the user may not read', () => {
    expect(run.code, run.stderr).toBe(1);
    expect(reasonOf(report, 'locked.jpg')).toBe('no permission to read it');
    expect(reasonOf(report, 'shut')).toBe('no permission to read it');
    expect(run.stdout).toMatch(/locked\.jpg: no permission to read it/);
  });

  it('refuses a named pipe given to pair at once instead of waiting for a writer', async () => {
    const dir = tempDir();
    const fifo = join(dir, 'pipe.jpg');
    // coreutils mkfifo: opening it for reading would wait for a writer for ever.
    execFileSync('mkfifo', [fifo]);
    const r = await seamscout(['pair', fifo, good()[0]], { timeoutMs: 20_000 });
    expect(r.signal).toBeNull();
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/pipe\.jpg \(not a regular file/);
    const c = await seamscout(['check', fifo], { timeoutMs: 20_000 });
    expect(c.signal).toBeNull();
    expect(c.code).toBe(2);
  }, 45_000);
});
