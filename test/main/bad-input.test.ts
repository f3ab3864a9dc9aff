// Whatever a memory card holds, the check goes on, says what is wrong with which file, and changes
// nothing on the card. Every bad file here is made by the test (nothing downloaded); the good frames
// are two real photographs (test/fixtures/external/SOURCES.md) and renders of the demo generator.
import { copyFileSync, mkdirSync, readFileSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { execFileSync } from 'node:child_process';
import { join } from 'node:path';
import sharp from 'sharp';
import { beforeAll, describe, expect, it } from 'vitest';
import type { Report } from '../../src/core/sequence/report.js';
import { defaultBudget } from '../../src/core/sequence/report.js';
import { judge } from '../../src/core/sequence/verdicts.js';
import { createAnalysisPool } from '../../src/main/analysis-pool.js';
import { runCheck } from '../../src/main/check.js';
import { skipOf } from '../../src/main/skip-reasons.js';
import { scanFolder } from '../../src/main/scan.js';
import { runCli, tempDir } from '../helpers/cli.js';
import { externalFixture } from '../helpers/images.js';
import { snapshot } from '../helpers/snapshot.js';

const pool = createAnalysisPool(0);
const check = async (folder: string, recursive = false): Promise<Report> => judge((await runCheck(folder, { pool, recursive })).analysis, defaultBudget);

let card: string;
let report: Report;
let before: string[];
const good = readFileSync(externalFixture('leuvenA.jpg'));

beforeAll(async () => {
  card = tempDir('seamscout-card-');
  writeFileSync(join(card, 'zero.jpg'), Buffer.alloc(0));
  writeFileSync(join(card, 'half.jpg'), good.subarray(0, good.length >> 1));
  writeFileSync(join(card, 'notes.jpg'), 'this is a text file, not a photograph\n');
  // A PNG whose header declares 60000 x 60000 pixels: a decompression bomb, refused by the limit.
  const png = Buffer.from(await sharp({ create: { width: 8, height: 8, channels: 3, background: '#777' } }).png().toBuffer());
  png.writeUInt32BE(60000, 16);
  png.writeUInt32BE(60000, 20);
  writeFileSync(join(card, 'bomb.png'), png);
  await sharp(good).toColourspace('rgb16').tiff().toFile(join(card, 'deep-16bit.tif'));
  await sharp(good).toColourspace('cmyk').jpeg().toFile(join(card, 'print-cmyk.jpg'));
  await sharp(good).greyscale().jpeg().toFile(join(card, 'grey.jpg'));
  copyFileSync(externalFixture('leuvenA.jpg'), join(card, 'IMG 0001 – bord de mer.jpg'));
  copyFileSync(externalFixture('leuvenA.jpg'), join(card, 'IMG 0001 copy.jpg'));
  copyFileSync(externalFixture('leuvenB.jpg'), join(card, '海岸 0002.jpg'));
  await sharp(good).resize(400).jpeg().toFile(join(card, 'small.jpg'));
  writeFileSync(join(card, 'absurd-exif.jpg'), await sharp(good).withExif({ IFD0: { Make: 'x' }, IFD2: { ExposureTime: '0/1', FocalLength: '-35/1', DateTimeOriginal: '1900:01:01 00:00:00', ISOSpeedRatings: 'lots' } }).jpeg().toBuffer());
  mkdirSync(join(card, 'sub'));
  symlinkSync('..', join(card, 'sub', 'loop'));
  // Files a camera or a computer leaves beside the photographs.
  writeFileSync(join(card, '._IMG 0001 copy.jpg'), Buffer.concat([Buffer.from([0, 5, 22, 7, 0, 2, 0, 0]), Buffer.alloc(4000)]));
  writeFileSync(join(card, 'MVI_0003.MOV'), Buffer.alloc(5000, 7));
  await sharp(good).resize(160).jpeg().toFile(join(card, 'IMG_0001.THM'));
  // Good pictures in odd wrappers, each a view of its own (a shifted crop) so that none is a copy.
  const view = (k: number) => sharp(good).extract({ left: 9 * k, top: 4 * k, width: 680, height: 510 }).resize(751, 563);
  writeFileSync(join(card, 'VIEW1.JPEG'), await view(1).jpeg().toBuffer());
  // Data after the end-of-image marker (some cameras append their own).
  writeFileSync(join(card, 'tail-after-end.jpg'), Buffer.concat([await view(2).jpeg().toBuffer(), Buffer.from('maker trailer '.repeat(60))]));
  // An EXIF block whose TIFF header is garbage, right after the start-of-image marker.
  const exifBody = Buffer.from('Exif\0\0XX*\0garbage, not a TIFF header');
  const exif = Buffer.concat([Buffer.from([0xff, 0xe1, (exifBody.length + 2) >> 8, (exifBody.length + 2) & 255]), exifBody]);
  const plain = await view(3).jpeg().toBuffer();
  writeFileSync(join(card, 'garbled-exif.jpg'), Buffer.concat([plain.subarray(0, 2), exif, plain.subarray(2)]));
  await view(4).ensureAlpha(0.5).png().toFile(join(card, 'with-alpha.png'));
  await view(5).webp().toFile(join(card, 'phone.webp'));
  writeFileSync(join(card, 'png-inside.jpg'), await view(6).png().toBuffer());
  writeFileSync(join(card, `long-${'x'.repeat(240)}.jpg`), await view(7).jpeg().toBuffer());
  // Extraneous bytes just before the end-of-image marker: libjpeg warns, the picture is whole.
  const flopped = await sharp(good).flop().jpeg().toBuffer();
  writeFileSync(join(card, 'extra-before-end.jpg'), Buffer.concat([flopped.subarray(0, -2), Buffer.from('pad'), flopped.subarray(-2)]));
  // Bad ones.
  // A JPEG garbled part way: bits flipped through 3 kB of its entropy-coded data, as a bad sector
  // read back wrong leaves it (libjpeg decodes on and fills the rest with garbage). Garbage that
  // happens to read as valid codes is not found this way (a run of 0x5a bytes is not).
  const garbled = await view(0).jpeg().toBuffer();
  for (let i = Math.floor(garbled.length * 0.55); i < Math.floor(garbled.length * 0.55) + 3000; i += 7) garbled[i] ^= 0x5a;
  writeFileSync(join(card, 'garbled-middle.jpg'), garbled);
  await sharp({ create: { width: 1, height: 1, channels: 3, background: '#888' } }).jpeg().toFile(join(card, 'one-pixel.jpg'));
  writeFileSync(join(card, 'noise.CR2'), Buffer.from(Array.from({ length: 9000 }, (_, i) => (i * 7919) & 255)));
  writeFileSync(join(card, 'header-only.jpg'), good.subarray(0, 600));
  writeFileSync(join(card, 'words.tif'), 'II* this only looks like a TIFF for four bytes\n');
  symlinkSync(join(card, 'deleted.jpg'), join(card, 'dangling.jpg'));
  before = snapshot(card);
  report = await check(card, true);
}, 120_000);

describe('bad input on a card', () => {
  const skip = (file: string) => report.skipped.find((s) => s.file === file);
  const frame = (file: string) => report.frames.find((f) => f.file === file);

  it('names an empty file as empty', () => {
    expect(skip('zero.jpg')?.reason).toMatch(/empty file/);
  });

  it('names a file cut in half as damaged or cut short', () => {
    expect(skip('half.jpg')?.reason).toMatch(/damaged or cut short/);
  });

  it('names a JPEG garbled part way as damaged, never checking its garbage', () => {
    expect(skip('garbled-middle.jpg')?.reason).toBe('damaged (part of the picture is garbled): copy it from the card again');
  });

  it('reads a JPEG with stray bytes before its end marker, which some cameras write', () => {
    expect(frame('extra-before-end.jpg')).toBeDefined();
  });

  it('names a JPEG that stops after its header as damaged or cut short', () => {
    expect(skip('header-only.jpg')?.reason).toMatch(/damaged or cut short/);
  });

  it('names a text file with a picture\'s ending as not an image', () => {
    expect(skip('notes.jpg')?.code).toBe('not-an-image');
  });

  it('names a file that only starts like a TIFF as not an image', () => {
    expect(skip('words.tif')?.code).toBe('not-an-image');
  });

  it('refuses a picture whose header claims 3.6 gigapixels', () => {
    expect(skip('bomb.png')?.code).toBe('too-large');
  });

  it('names a RAW file with nothing readable inside as holding no preview', () => {
    expect(skip('noise.CR2')).toMatchObject({ code: 'no-preview', reason: expect.stringMatching(/RAW\+JPEG/) });
  });

  it('leaves out a 1x1 image as not part of the sequence', () => {
    expect(skip('one-pixel.jpg')).toMatchObject({ code: 'not-in-sequence', reason: expect.stringMatching(/1x1 px/) });
  });

  it('names a link whose target is gone, in words', () => {
    expect(skip('dangling.jpg')?.reason).toMatch(/links to .*deleted\.jpg.* which is not there/);
  });

  it('names the second of two byte-identical files as a copy of the first', () => {
    expect(report.skipped.filter((s) => s.code === 'duplicate').map((s) => s.reason)).toEqual([expect.stringMatching(/the same picture as IMG 0001/)]);
  });

  it('reads names with spaces, dashes and non-Latin letters', () => {
    expect(frame('IMG 0001 copy.jpg')).toBeDefined();
    expect(skip('IMG 0001 – bord de mer.jpg')?.reason).toBe('the same picture as IMG 0001 copy.jpg: left out');
    expect(frame('海岸 0002.jpg')).toBeDefined();
  });

  it('reads a name of 245 characters', () => {
    expect(frame(`long-${'x'.repeat(240)}.jpg`)).toBeDefined();
  });

  it('reads an upper-case .JPEG ending', () => {
    expect(frame('VIEW1.JPEG')).toBeDefined();
  });

  it('reads a JPEG with data after its end marker', () => {
    expect(frame('tail-after-end.jpg')).toBeDefined();
  });

  it('reads a JPEG whose EXIF block is garbage, without its settings', () => {
    expect(frame('garbled-exif.jpg')?.settings.exposureTime).toBeNull();
  });

  it('reads a PNG with an alpha channel, a WebP, and a PNG named .jpg by its content', () => {
    for (const f of ['with-alpha.png', 'phone.webp', 'png-inside.jpg']) expect(frame(f)?.width).toBe(751);
  });

  it('decodes 16-bit, CMYK and greyscale frames to the same geometry', () => {
    for (const f of ['deep-16bit.tif', 'print-cmyk.jpg', 'grey.jpg']) expect([frame(f)!.width, frame(f)!.height]).toEqual([751, 563]);
  });

  it('flags a frame of another size than the sequence', () => {
    expect(frame('small.jpg')!.flags).toContain('size-mismatch');
  });

  it('drops absurd EXIF values instead of trusting them', () => {
    const s = frame('absurd-exif.jpg')!;
    expect(s.settings.exposureTime).toBeNull();
    expect(s.settings.focalLength).toBeNull();
    expect(s.settings.iso).toBeNull();
    expect(s.captureTime).toBeNull();
  });

  it('ends a symbolic-link loop under --recursive', () => {
    // The loop leads back to the card itself, which is read once.
    expect(report.frames.filter((f) => f.file.includes('loop')).length).toBe(0);
  });

  it('passes over the hidden files, videos and thumbnails a camera or computer leaves', () => {
    const named = [...report.frames.map((f) => f.file), ...report.skipped.map((s) => s.file)];
    for (const f of ['._IMG 0001 copy.jpg', 'MVI_0003.MOV', 'IMG_0001.THM']) expect(named).not.toContain(f);
  });

  it('accounts for every picture file on the card, checked or named', () => {
    expect(report.frames.length + report.skipped.length).toBe(26);
  });

  it('changes not a byte of the card, its listing or its times', () => {
    expect(snapshot(card)).toEqual(before);
  });
});

describe('folders that are not a sequence', () => {
  it('says so for an empty folder and a folder of one frame', async () => {
    const empty = await check(tempDir());
    expect(empty.folderProblems.map((p) => p.code)).toEqual(['no-frames']);
    expect(empty.verdict).not.toBe('ok');
    const one = tempDir();
    copyFileSync(externalFixture('leuvenA.jpg'), join(one, 'only.jpg'));
    const single = await check(one);
    expect(single.folderProblems.map((p) => p.code)).toEqual(['one-frame']);
  });

  it('handles a folder of 2,000 small images', async () => {
    const many = tempDir();
    const tile = await sharp(good).resize(96, 72).jpeg({ quality: 80 }).toBuffer();
    for (let i = 0; i < 2000; i++) writeFileSync(join(many, `F${String(i).padStart(4, '0')}.jpg`), tile);
    const r = await check(many);
    // Identical files: one is checked, the others named as copies of it.
    expect(r.frames.length).toBe(1);
    expect(r.skipped.filter((s) => s.code === 'duplicate').length).toBe(1999);
  }, 300_000);

  it('goes on when a file goes away during the check', async () => {
    const folder = tempDir();
    for (const f of ['leuvenA.jpg', 'leuvenB.jpg']) copyFileSync(externalFixture(f), join(folder, f));
    copyFileSync(externalFixture('graf1.png'), join(folder, 'gone.png'));
    const result = await runCheck(folder, {
      pool,
      onProgress: (p) => {
        if (p.phase === 'frames' && p.done === 1) rmSync(join(folder, 'gone.png'), { force: true });
      },
      threads: 1,
    });
    const r = judge(result.analysis, defaultBudget);
    expect(r.frames.length + r.skipped.length).toBe(3);
    expect(r.pairs.length).toBeGreaterThanOrEqual(1);
  });
});

describe('permissions and the command line', () => {
  it('words the system\'s refusals plainly', () => {
    const err = (code: string): Error => Object.assign(new Error(`${code}: refused`), { code });
    expect(skipOf('a.jpg', err('EACCES')).reason).toBe('no permission to read it');
    expect(skipOf('a.jpg', err('EPERM')).reason).toBe('no permission to read it');
    expect(skipOf('a.jpg', err('ENOENT')).reason).toBe('the file went away during the check');
    // A file the check may not read, as user nobody: test/main/bad-input-reading.test.ts.
    expect(skipOf('a.jpg', err('EIO')).reason).toBe('read error: copy it from the card again');
    expect(skipOf('a.jpg', new Error('Input image exceeds pixel limit')).code).toBe('too-large');
  });

  it('exits 1 with the reasons on stdout for a card with bad files', async () => {
    const r = await runCli(['check', card, '--threads', '0', '--no-cache']);
    expect(r.code).toBe(1);
    expect(r.stdout).toMatch(/zero\.jpg: empty file/);
    expect(snapshot(card)).toEqual(before);
  }, 120_000);
});

describe('entries that are no regular file', () => {
  it('lists a pipe, a link to a device and a folder named like a picture, never opening them', async () => {
    const dir = tempDir('seamscout-odd-');
    copyFileSync(externalFixture('leuvenA.jpg'), join(dir, 'good.jpg'));
    // A named pipe (coreutils mkfifo): opening it would wait for a writer for ever.
    execFileSync('mkfifo', [join(dir, 'pipe.jpg')]);
    symlinkSync('/dev/null', join(dir, 'device.jpg'));
    mkdirSync(join(dir, 'x.jpg'));
    const scan = await scanFolder(dir, false);
    expect(scan.files.map((f) => f.name)).toEqual(['good.jpg']);
    expect(scan.problems).toEqual([
      { name: 'device.jpg', code: 'not-a-file', reason: 'it is not a regular file (a pipe, a device or a socket): not read' },
      { name: 'pipe.jpg', code: 'not-a-file', reason: 'it is not a regular file (a pipe, a device or a socket): not read' },
      { name: 'x.jpg', code: 'not-a-file', reason: 'it is a folder, not a picture' },
    ]);
    const r = judge((await runCheck(dir, { pool })).analysis, defaultBudget);
    expect(r.skipped.map((s) => s.file).sort()).toEqual(['device.jpg', 'pipe.jpg', 'x.jpg']);
  }, 60_000);
});
