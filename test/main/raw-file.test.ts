// Checking RAW files through their embedded previews, on DNG files built by the test to the DNG 1.6
// layout (test/helpers/tiff-writer.ts): turned upright as sharp turns a JPEG carrying the same
// EXIF orientation (libvips' autorotate as the outside reference), geometry in sensor pixels, and
// a file without a preview listed with its reason while the rest is checked.
import { readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import sharp from 'sharp';
import { beforeAll, describe, expect, it } from 'vitest';
import { defaultBudget } from '../../src/core/sequence/report.js';
import { judge } from '../../src/core/sequence/verdicts.js';
import { createAnalysisPool } from '../../src/main/analysis-pool.js';
import { runCheck } from '../../src/main/check.js';
import { decodeForAnalysis } from '../../src/main/decode.js';
import { writeDemoShoot } from '../../src/main/demo-writer.js';
import { readFrameExif } from '../../src/main/exif.js';
import { formatSummary } from '../../src/main/summary.js';
import { tempDir } from '../helpers/cli.js';
import { externalFixture } from '../helpers/images.js';
import { dngAround, writeTiff } from '../helpers/tiff-writer.js';

let preview: Uint8Array;
beforeAll(async () => {
  preview = new Uint8Array(await sharp(externalFixture('leuvenA.jpg')).jpeg({ quality: 95 }).toBuffer());
});

describe('a RAW file read through its preview', () => {
  it('is upright by the RAW\'s orientation, as a JPEG with that orientation is, at the sensor\'s size', async () => {
    const dir = tempDir('seamscout-raw-');
    for (let o = 1; o <= 8; o++) {
      writeFileSync(join(dir, `o${o}.dng`), dngAround(preview, { orientation: o, sensor: [6008, 4504], littleEndian: o % 2 === 0 }));
      await sharp(Buffer.from(preview)).withMetadata({ orientation: o }).jpeg({ quality: 95 }).toFile(join(dir, `o${o}.jpg`));
      const raw = await decodeForAnalysis(join(dir, `o${o}.dng`), 600);
      const ref = await decodeForAnalysis(join(dir, `o${o}.jpg`), 600);
      expect([raw.image.width, raw.image.height], `orientation ${o}`).toEqual([ref.image.width, ref.image.height]);
      let diff = 0;
      for (let k = 0; k < raw.image.data.length; k++) diff += Math.abs(raw.image.data[k] - ref.image.data[k]);
      expect(diff / raw.image.data.length, `orientation ${o}`).toBeLessThan(3);
      expect([raw.fullWidth, raw.fullHeight], `orientation ${o}`).toEqual(o >= 5 ? [4504, 6008] : [6008, 4504]);
    }
  });
});

describe('the settings of a RAW file', () => {
  it('are read from its EXIF IFD (TIFF 6.0 / EXIF 2.3 tags: ExposureTime, FNumber, ISO)', async () => {
    const file = writeTiff(true, [
      { name: 'ifd0', entries: [{ tag: 256, type: 3, values: [16] }, { tag: 257, type: 3, values: [8] }, { tag: 34665, type: 4, values: ['exif'] }] },
      { name: 'exif', entries: [{ tag: 33434, type: 5, values: [1, 250] }, { tag: 33437, type: 5, values: [8, 1] }, { tag: 34855, type: 3, values: [200] }] },
    ], {});
    const dir = tempDir('seamscout-raw-exif-');
    for (const ending of ['dng', 'nef', 'cr2', 'arw']) {
      writeFileSync(join(dir, `x.${ending}`), file);
      expect((await readFrameExif(join(dir, `x.${ending}`))).settings, ending).toMatchObject({ exposureTime: 1 / 250, fNumber: 8, iso: 200 });
    }
  });
});

describe('a card of RAW files', () => {
  it('is checked like JPEGs, with geometry in sensor pixels; a file without a preview is listed and the rest goes on', async () => {
    const demo = await writeDemoShoot(join(tempDir(), 'src'), { clean: true, width: 1200, height: 800, stations: 4, seed: 3 });
    const card = tempDir('seamscout-raw-card-');
    const jpegs = readdirSync(demo.folder).filter((n) => n.endsWith('.JPG')).sort();
    for (const f of jpegs) writeFileSync(join(card, f.replace(/\.JPG$/, '.DNG')), dngAround(readFileSync(join(demo.folder, f)), { sensor: [6000, 4000] }));
    writeFileSync(join(card, 'EMPTY.DNG'), dngAround(null, { sensor: [6000, 4000] }));
    writeFileSync(join(card, 'LATER.X3F'), new Uint8Array(64));
    const report = judge((await runCheck(card, { pool: createAnalysisPool(0) })).analysis, defaultBudget);
    expect(report.frames).toHaveLength(jpegs.length);
    expect(report.frames.every((f) => f.width === 6000 && f.height === 4000)).toBe(true);
    expect(report.stations.map((s) => s.frames.map((f) => f.replace('.DNG', '.JPG')))).toEqual(demo.truth.stations.map((s) => s.frames));
    const neighbours = report.pairs.filter((p) => p.kind === 'neighbour');
    expect(neighbours.length).toBe(3);
    for (const p of neighbours) {
      expect(p.homography, `${p.a} -> ${p.b}`).not.toBeNull();
      // The shift between neighbours in sensor pixels: 5x the preview's 1200 px width.
      const t = demo.truth.pairs.find((q) => q.a === p.a.replace('.DNG', '.JPG') && q.b === p.b.replace('.DNG', '.JPG'))!;
      expect(Math.abs(p.homography![2] - 5 * t.homography[2]) / 6000).toBeLessThan(0.01);
    }
    const skipped = [...report.skipped].sort((x, y) => x.file.localeCompare(y.file));
    expect(skipped.map((s) => [s.file, s.code])).toEqual([['EMPTY.DNG', 'no-preview'], ['LATER.X3F', 'no-preview']]);
    expect(skipped[1].reason).toMatch(/\.x3f files are not read yet/);
  }, 240_000);
});

describe('a card of RAW+JPEG pairs (one shutter press written twice)', () => {
  it('counts each shot once, checking the JPEG or the RAW file as asked, and says which', async () => {
    const demo = await writeDemoShoot(join(tempDir(), 'pairs-src'), { clean: true, width: 800, height: 534, stations: 2, seed: 4 });
    const card = tempDir('seamscout-raw-jpeg-');
    const jpegs = readdirSync(demo.folder).filter((n) => n.endsWith('.JPG')).sort();
    for (const f of jpegs) {
      writeFileSync(join(card, f), readFileSync(join(demo.folder, f)));
      writeFileSync(join(card, f.replace(/\.JPG$/, '.dng')), dngAround(readFileSync(join(demo.folder, f)), { sensor: [4000, 2670] }));
    }
    const pool = createAnalysisPool(0);
    for (const prefer of ['jpeg', 'raw'] as const) {
      const report = judge((await runCheck(card, { pool, prefer })).analysis, defaultBudget);
      expect(report.frames.map((f) => f.file).sort(), prefer).toEqual(jpegs.map((f) => (prefer === 'raw' ? f.replace('.JPG', '.dng') : f)));
      expect(report.skipped).toHaveLength(jpegs.length);
      expect(report.skipped.every((s) => s.code === 'same-shot'), prefer).toBe(true);
      expect(report.skipped[0].reason).toMatch(prefer === 'raw' ? /the RAW file was checked/ : /the JPEG was checked/);
      expect(report.frames[0].width).toBe(prefer === 'raw' ? 4000 : 800);
      // The second file of a shot is no problem of the card: the clean demo stays ok, and the
      // terminal summary says which file was checked instead of listing them as not checked.
      expect(report.rawPlusJpeg, prefer).toEqual({ checked: prefer, shots: jpegs.length });
      expect(report.verdict, prefer).toBe('ok');
      const summary = formatSummary(report);
      expect(summary).not.toContain('Not checked');
      expect(summary).toContain(`${jpegs.length} shots written as RAW and JPEG: ${prefer === 'raw' ? 'the RAW file of each was checked' : 'the JPEG of each was checked'}`);
    }
  }, 240_000);
});
