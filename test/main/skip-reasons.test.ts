import { mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import sharp from 'sharp';
import { afterAll, describe, expect, it } from 'vitest';
import type { SkippedFile } from '../../src/core/sequence/report.js';
import { FileProblem, fileProblemKinds } from '../../src/core/image/file-problem.js';
import { rawLayout } from '../../src/core/raw/raw-preview.js';
import { createAnalysisPool } from '../../src/main/analysis-pool.js';
import { errorFromCrossing, errorToCross } from '../../src/main/crossing-error.js';
import { decodeForAnalysis } from '../../src/main/decode.js';
import { wordsLost } from '../../src/main/decoder-words.js';
import { skipOf } from '../../src/main/skip-reasons.js';
import { tempDir } from '../helpers/cli.js';

/**
 * The reasons as they were worded before files named their problems by type (check.ts at commit
 * 727a266, which read the error's text): the typed mapping must give every one word for word.
 */
function reasonByText(file: string, err: unknown, size?: number): SkippedFile {
  const message = err instanceof Error ? err.message : String(err);
  const code = (err as NodeJS.ErrnoException)?.code;
  if (size === 0) return { file, code: 'unreadable', reason: 'empty file (0 bytes): copy it from the card again' };
  if (code === 'ENOENT') return { file, code: 'unreadable', reason: 'the file went away during the check' };
  if (code === 'EACCES' || code === 'EPERM' || /^(EACCES|EPERM):/.test(message)) return { file, code: 'unreadable', reason: 'no permission to read it' };
  if (code === 'EIO' || code === 'ENXIO' || code === 'ENODEV' || code === 'ESHORTREAD' || /^(EIO|ENXIO|ENODEV):|its size promised/.test(message)) return { file, code: 'unreadable', reason: 'read error: copy it from the card again' };
  if (code === 'ENOTREGULAR' || /is not a regular file/.test(message)) return { file, code: 'unreadable', reason: 'it is not a regular file (a pipe, a device or a socket): not read' };
  if (code === 'EISDIR') return { file, code: 'unreadable', reason: 'it is a folder, not a picture' };
  if (code === 'EFBIG') return { file, code: 'too-large', reason: 'too large to read safely (over the size read at most)' };
  if (/pixel limit/i.test(message)) return { file, code: 'too-large', reason: 'too large to decode safely (over the pixel limit)' };
  if (/no usable preview: the (\.\w+) container/i.test(message)) return { file, code: 'no-preview', reason: `RAW ${/(\.\w+) container/.exec(message)![1]} files are not read yet: shoot RAW+JPEG, or check exported JPEGs` };
  if (/no usable preview|TIFF byte order|TIFF mark/i.test(message)) return { file, code: 'no-preview', reason: 'holds no embedded preview Seamscout can read: shoot RAW+JPEG, or check exported JPEGs' };
  if (/timeout/i.test(message)) return { file, code: 'unreadable', reason: 'decoding took too long' };
  if (/corrupt JPEG data|inconsistent progression/i.test(message)) return { file, code: 'unreadable', reason: 'damaged (part of the picture is garbled): copy it from the card again' };
  if (/premature end|truncated|unexpected end|corrupt|invalid|cut short/i.test(message)) return { file, code: 'unreadable', reason: 'damaged or cut short: copy it from the card again' };
  if (/unsupported image format|bad seek|not a known file format|improper image header|input buffer/i.test(message)) return { file, code: 'not-an-image', reason: 'not an image Seamscout can read' };
  return { file, code: 'unreadable', reason: `cannot be read: ${message.split('\n')[0]}` };
}

const errno = (code: string, message = `${code}: refused, open 'a.jpg'`): Error => Object.assign(new Error(message), { code });

/** Each typed problem with the words its finder throws it with (input-file.ts, raw-file.ts, raw-preview.ts, exif.ts, decode.ts). */
const typed: FileProblem[] = [
  new FileProblem('folder', '/card/a.jpg is a folder, not a picture'),
  new FileProblem('not-regular', '/card/a.jpg is not a regular file (a pipe, a device or a socket): not read'),
  new FileProblem('short-read', 'the file ended 4096 bytes in, before the 9000 its size promised'),
  new FileProblem('over-read-limit', '/card/a.jpg is 900000000 bytes, over the 805306368 bytes read at most'),
  new FileProblem('over-read-limit', 'the embedded preview is 200000000 bytes, over the 134217728 bytes read at most'),
  new FileProblem('over-pixel-limit', 'Input image exceeds pixel limit'),
  new FileProblem('decode-timeout', 'timeout: 60s exceeded'),
  new FileProblem('unread-container', 'no usable preview: the .x3f container is not read yet', { ending: '.x3f' }),
  new FileProblem('no-preview', 'no usable preview in /card/a.dng'),
  new FileProblem('no-preview', 'no usable preview in /card/a.cr3: not a CR3 file'),
  new FileProblem('no-preview', 'Expected a TIFF byte order mark (II or MM) but received "no"'),
  new FileProblem('no-preview', 'Expected the TIFF mark 42 but received 7'),
  new FileProblem('garbled', 'Corrupt JPEG data: the picture is garbled part way (libjpeg said so once, then its words were lost)'),
  new FileProblem('cut-short', 'Premature end of JPEG file: the file stops before its picture does'),
  new FileProblem('cut-short', 'damaged or cut short: 120 bytes of JPEG data for 4000 x 3000 pixels, which need 4000 at least'),
  new FileProblem('not-an-image', 'Input buffer contains unsupported image format'),
];

/** The decoder's own words (not ours), as sharp passes them on. */
const decoderWords = [
  'Input file has corrupt header: VipsJpeg: Corrupt JPEG data: 1234 extraneous bytes before marker 0xc4',
  'VipsJpeg: Premature end of JPEG file',
  'Input buffer contains unsupported image format',
  'Input file is missing or of an unsupported image format',
  'Input image exceeds pixel limit',
  'VipsJpeg: Invalid SOS parameters for sequential JPEG',
  'Expected an image with a size but received none',
];

describe('skip reasons', () => {
  it('gives each typed file problem the reason the text-reading table gave its words', () => {
    for (const p of typed) expect(skipOf('a.jpg', p)).toEqual(reasonByText('a.jpg', p));
    // Every kind is covered above.
    expect(new Set(typed.map((p) => p.kind))).toEqual(new Set(fileProblemKinds));
    expect(skipOf('a.x3f', typed[7]).reason).toBe('RAW .x3f files are not read yet: shoot RAW+JPEG, or check exported JPEGs');
  });

  it('reads the system\'s errors by their code, and the decoder\'s by its words, as before', () => {
    for (const code of ['ENOENT', 'EACCES', 'EPERM', 'EIO', 'ENXIO', 'ENODEV', 'EISDIR', 'EFBIG', 'EMFILE']) {
      expect(skipOf('a.jpg', errno(code))).toEqual(reasonByText('a.jpg', errno(code)));
    }
    // The code decides, not the words: a path that reads "corrupt" does not make a vanished file damaged.
    expect(skipOf('a.jpg', errno('ENOENT', "ENOENT: no such file or directory, open '/card/corrupt.jpg'")).reason).toBe('the file went away during the check');
    for (const words of decoderWords) expect(skipOf('a.jpg', new Error(words))).toEqual(reasonByText('a.jpg', new Error(words)));
    expect(skipOf('a.jpg', new Error('anything'), 0).reason).toBe('empty file (0 bytes): copy it from the card again');
  });

  it('keeps the reader\'s codes on its file problems for the command line\'s words', () => {
    expect(typed.map((p) => p.code).slice(0, 5)).toEqual(['EISDIR', 'ENOTREGULAR', 'ESHORTREAD', 'EFBIG', 'EFBIG']);
    expect(() => rawLayout(new TextEncoder().encode('not a raw file at all'))).toThrow(FileProblem);
  });
});

const dir = tempDir('seamscout-skips-');
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('errors across worker threads', () => {
  it('rebuilds a file problem and a system error after a structured clone, as a thread message makes', () => {
    const p = errorFromCrossing(structuredClone(errorToCross(typed[7])));
    expect(p).toBeInstanceOf(FileProblem);
    expect(p).toMatchObject({ kind: 'unread-container', ending: '.x3f', message: typed[7].message });
    const e = errorFromCrossing(structuredClone(errorToCross(Object.assign(errno('EACCES'), { errno: -13, syscall: 'open' }))));
    expect(e).toMatchObject({ code: 'EACCES', errno: -13, syscall: 'open', message: "EACCES: refused, open 'a.jpg'" });
    // What is no crossing record (a cancel, a dead worker) passes as it came.
    const other = new Error('worker died');
    expect(errorFromCrossing(other)).toBe(other);
  });

  it('gives the main thread the same typed error the real worker pool threw', async () => {
    writeFileSync(join(dir, 'odd.x3f'), 'not read');
    writeFileSync(join(dir, 'plain.dng'), 'not a raw file at all');
    mkdirSync(join(dir, 'folder.jpg'));
    const pool = createAnalysisPool(1);
    try {
      const fail = (name: string): Promise<unknown> => pool.analyseFrame(join(dir, name), 256).then(() => null, (err: unknown) => err);
      const [x3f, dng, folder, gone] = await Promise.all(['odd.x3f', 'plain.dng', 'folder.jpg', 'gone.jpg'].map(fail));
      expect(x3f).toBeInstanceOf(FileProblem);
      expect(x3f).toMatchObject({ kind: 'unread-container', ending: '.x3f' });
      expect(dng).toMatchObject({ kind: 'no-preview' });
      expect(folder).toMatchObject({ kind: 'folder', code: 'EISDIR' });
      expect(gone).toMatchObject({ code: 'ENOENT' });
      expect(skipOf('gone.jpg', gone).reason).toBe('the file went away during the check');
    } finally {
      await pool.destroy();
    }
  }, 60_000);
});

describe('the decoder\'s words under load', () => {
  it('tells sharp\'s stand-ins for lost words from libjpeg\'s own', () => {
    for (const lost of ['Unknown error', 'Warning treated as error due to failOn setting', 'Warning treated as error due to failOn setting\nerror in tile 0 x 304\nerror in tile 0 x 304\n']) expect(wordsLost(lost)).toBe(true);
    for (const heard of ['VipsJpeg: Corrupt JPEG data: premature end of data segment', 'Warning treated as error due to failOn setting\nVipsJpeg: Corrupt JPEG data: 4 extraneous bytes before marker 0xd9']) expect(wordsLost(heard)).toBe(false);
  });

  it('names a JPEG garbled part way as damaged in every one of 60 decodes at once', async () => {
    // Before lost words were told apart, 18 of 180 such decodes (60 at a time) read the file leniently.
    const w = 751, h = 563;
    const px = new Uint8Array(w * h * 3);
    for (let i = 0, s = 7; i < px.length; i++) {
      s = (Math.imul(s, 1103515245) + 12345) >>> 0;
      px[i] = ((i % (w * 3)) / 5 + (s >>> 27)) & 255;
    }
    const garbled = await sharp(px, { raw: { width: w, height: h, channels: 3 } }).jpeg().toBuffer();
    for (let i = Math.floor(garbled.length * 0.55); i < Math.floor(garbled.length * 0.55) + 3000; i += 7) garbled[i] ^= 0x5a;
    const file = join(dir, 'garbled.jpg');
    writeFileSync(file, garbled);
    const reasons = await Promise.all(Array.from({ length: 60 }, () => decodeForAnalysis(file, 600).then(() => 'read', (err: unknown) => skipOf('garbled.jpg', err).reason)));
    expect(new Set(reasons)).toEqual(new Set(['damaged (part of the picture is garbled): copy it from the card again']));
  }, 60_000);
});
