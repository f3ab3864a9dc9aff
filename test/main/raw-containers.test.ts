// The RAW containers that are not TIFF-based, Canon's CR3 and Fujifilm's RAF, on files built by
// test/helpers/raw-containers.ts to the format descriptions it names. Turned upright as libvips'
// autorotate turns a JPEG carrying the same EXIF orientation (the outside reference), settings
// read as exifr reads the same tags from a JPEG, and a damaged file's reason said.
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import sharp from 'sharp';
import { beforeAll, describe, expect, it } from 'vitest';
import { cr3Layout } from '../../src/core/raw/cr3-layout.js';
import { rafLayout } from '../../src/core/raw/raf-layout.js';
import { bytesSource } from '../../src/core/raw/raw-preview.js';
import { decodeForAnalysis } from '../../src/main/decode.js';
import { readFrameExif } from '../../src/main/exif.js';
import { tempDir } from '../helpers/cli.js';
import { externalFixture } from '../helpers/images.js';
import { box, cr3Around, rafAround } from '../helpers/raw-containers.js';
import { writeTiff } from '../helpers/tiff-writer.js';

const jpegOf = async (width: number, height: number, exif?: Record<string, Record<string, string>>): Promise<Uint8Array> => {
  const img = sharp(externalFixture('leuvenA.jpg')).resize(width, height, { fit: 'fill' });
  return new Uint8Array(await (exif ? img.withExif(exif) : img).jpeg({ quality: 92 }).toBuffer());
};

// CMT1 holds IFD0, CMT2 the EXIF IFD, each a TIFF block of its own (little-endian, as in the dump).
const ifd0 = (orientation: number): Uint8Array => writeTiff(true, [{ name: 'ifd0', entries: [
  { tag: 0x010f, type: 2, values: ['Canon'] }, { tag: 0x0110, type: 2, values: ['Canon EOS TEST'] }, { tag: 0x0112, type: 3, values: [orientation] },
] }], {});
const exifIfd = writeTiff(true, [{ name: 'exif', entries: [
  { tag: 0x829a, type: 5, values: [1, 250] }, { tag: 0x829d, type: 5, values: [8, 1] }, { tag: 0x8827, type: 3, values: [200] },
  { tag: 0x9003, type: 2, values: ['2026:11:30 07:12:45'] }, { tag: 0x9204, type: 5, values: [0, 1] }, { tag: 0x920a, type: 5, values: [24, 1] },
] }], {});

let full: Uint8Array, prvw: Uint8Array, thmb: Uint8Array;
beforeAll(async () => {
  [full, prvw, thmb] = await Promise.all([jpegOf(1500, 1000), jpegOf(750, 500), jpegOf(160, 120)]);
});

describe('a CR3 file', () => {
  it('finds the full-size JPEG, PRVW and THMB where its boxes say, and CMT1\'s orientation', () => {
    const layout = cr3Layout(bytesSource(cr3Around({ full, fullSize: [1500, 1000], prvw, thmb, ifd0: ifd0(8), exifIfd })))!;
    expect(layout.previews.map((p) => [p.width, p.height]).sort()).toEqual([[1500, 1000], [750, 500], [160, 120]].sort());
    expect([layout.width, layout.height, layout.orientation]).toEqual([1500, 1000, 8]);
    expect(layout.ifd0 && layout.exifIfd).not.toBeNull();
    expect(cr3Layout(bytesSource(new TextEncoder().encode('....ftypisom........')))).toBeNull();
  });

  it('is upright by CMT1\'s orientation (its JPEGs carry none), at the full JPEG\'s size, with the settings of CMT2', async () => {
    const dir = tempDir('seamscout-cr3-');
    for (const o of [1, 3, 6, 8]) {
      writeFileSync(join(dir, `o${o}.CR3`), cr3Around({ full, fullSize: [1500, 1000], prvw, thmb, ifd0: ifd0(o), exifIfd }));
      await sharp(Buffer.from(full)).withMetadata({ orientation: o }).jpeg({ quality: 95 }).toFile(join(dir, `o${o}.jpg`));
      const raw = await decodeForAnalysis(join(dir, `o${o}.CR3`), 600);
      const ref = await decodeForAnalysis(join(dir, `o${o}.jpg`), 600);
      expect([raw.image.width, raw.image.height, raw.fullWidth, raw.fullHeight], `orientation ${o}`).toEqual([ref.image.width, ref.image.height, ref.fullWidth, ref.fullHeight]);
      let diff = 0;
      for (let k = 0; k < raw.image.data.length; k++) diff += Math.abs(raw.image.data[k] - ref.image.data[k]);
      expect(diff / raw.image.data.length, `orientation ${o}`).toBeLessThan(3);
    }
    const exif = await readFrameExif(join(dir, 'o6.CR3'));
    expect(exif.settings).toMatchObject({ exposureTime: 1 / 250, fNumber: 8, iso: 200, evBias: 0, focalLength: 24, make: 'Canon', model: 'Canon EOS TEST' });
    expect([exif.orientation, exif.captureTime]).toEqual([6, '2026-11-30T07:12:45.000']);
  });

  it('falls back to PRVW without a full-size JPEG, and a file cut short on the card still gives its preview', async () => {
    const dir = tempDir('seamscout-cr3-cut-');
    writeFileSync(join(dir, 'nofull.CR3'), cr3Around({ full: null, fullSize: [6000, 4000], prvw, thmb, ifd0: ifd0(1), exifIfd }));
    const a = await decodeForAnalysis(join(dir, 'nofull.CR3'), 600);
    // The picture is PRVW's; its full size is the first track's.
    expect([a.image.width, a.image.height, a.fullWidth, a.fullHeight]).toEqual([600, 400, 6000, 4000]);
    const whole = cr3Around({ full, fullSize: [1500, 1000], prvw, thmb, ifd0: ifd0(1), exifIfd });
    // Cut inside the full-size JPEG (the crx images after it are 12000 bytes here).
    writeFileSync(join(dir, 'cut.CR3'), whole.subarray(0, whole.length - 12_000 - Math.floor(full.length / 2)));
    const b = await decodeForAnalysis(join(dir, 'cut.CR3'), 2000);
    expect([b.image.width, b.image.height]).toEqual([750, 500]);
  });

  it('found by scanning for JPEG streams where the boxes name none, skipping sensor data and stray markers', async () => {
    const big = new Uint8Array(await sharp(Buffer.from(full)).withMetadata({ orientation: 8 }).jpeg({ quality: 90 }).toBuffer());
    const noise = Uint8Array.from({ length: 4096 }, (_, k) => (k * 2654435761) >>> 24);
    noise.set([0xff, 0xd8, 0xff, 0xe0, 0x00, 0x10], 100);
    const file = new Uint8Array([...box('ftyp', new TextEncoder().encode('crx '), new Uint8Array(8)), ...box('uuid', new Uint8Array(16), thmb), ...box('mdat', noise, big)]);
    const dir = tempDir('seamscout-cr3-scan-');
    writeFileSync(join(dir, 'IMG_0001.CR3'), file);
    writeFileSync(join(dir, 'big.jpg'), big);
    const raw = await decodeForAnalysis(join(dir, 'IMG_0001.CR3'), 600);
    const ref = await decodeForAnalysis(join(dir, 'big.jpg'), 600);
    // A stream found so is upright by its own EXIF orientation (8: a quarter turn anticlockwise).
    expect([raw.image.width, raw.image.height, raw.fullWidth, raw.fullHeight]).toEqual([ref.image.width, ref.image.height, ref.fullWidth, ref.fullHeight]);
    expect(raw.image.height).toBeGreaterThan(raw.image.width);
    expect(Buffer.from(raw.image.data).equals(Buffer.from(ref.image.data))).toBe(true);
  });
});

describe('a RAF file', () => {
  const exif = { IFD0: { Make: 'FUJIFILM', Model: 'X-T0' }, IFD2: { ExposureTime: '1/250', FNumber: '8/1', ISOSpeedRatings: '400', FocalLength: '23/1', DateTimeOriginal: '2026:11:30 07:12:45' } };

  it('is read through its embedded JPEG at the sensor\'s cropped size, with the JPEG\'s settings', async () => {
    const jpeg = await jpegOf(750, 500, exif);
    const file = rafAround(jpeg, { full: [6160, 4032], cropped: [6000, 4000] });
    expect(rafLayout(bytesSource(file))).toMatchObject({ preview: { width: 750, height: 500 }, sensorWidth: 6000, sensorHeight: 4000 });
    const dir = tempDir('seamscout-raf-');
    writeFileSync(join(dir, 'DSCF0001.RAF'), file);
    const raw = await decodeForAnalysis(join(dir, 'DSCF0001.RAF'), 600);
    expect([raw.image.width, raw.image.height, raw.fullWidth, raw.fullHeight]).toEqual([600, 400, 6000, 4000]);
    const got = await readFrameExif(join(dir, 'DSCF0001.RAF'));
    // The same tags exifr reads from the JPEG itself.
    const direct = join(dir, 'same.jpg');
    writeFileSync(direct, jpeg);
    expect(got.settings).toEqual((await readFrameExif(direct)).settings);
    expect(got.settings).toMatchObject({ exposureTime: 1 / 250, fNumber: 8, iso: 400, focalLength: 23, make: 'FUJIFILM' });
  });

  it('keeps the preview\'s size where the metadata block gives another shape or none, and says when it holds no JPEG', async () => {
    const jpeg = await jpegOf(750, 500);
    const dir = tempDir('seamscout-raf-odd-');
    writeFileSync(join(dir, 'odd.RAF'), rafAround(jpeg, { cropped: [4000, 4000] }));
    writeFileSync(join(dir, 'none.RAF'), rafAround(jpeg));
    for (const f of ['odd.RAF', 'none.RAF']) expect([(await decodeForAnalysis(join(dir, f), 600)).fullWidth], f).toEqual([750]);
    writeFileSync(join(dir, 'BROKEN.RAF'), rafAround(jpeg).subarray(0, 120));
    await expect(decodeForAnalysis(join(dir, 'BROKEN.RAF'), 600)).rejects.toThrow(/no usable preview/);
    expect((await readFrameExif(join(dir, 'BROKEN.RAF'))).settings.exposureTime).toBeNull();
  });
});
