// Embedded previews of TIFF-based RAW files, on files built by the test to the published layouts:
// TIFF 6.0 (header, IFDs, JPEGInterchangeFormat), DNG 1.6 (IFD0 thumbnail, SubIFDs holding the raw
// image with NewSubfileType 0 and DefaultCropSize, and a JPEG preview with NewSubfileType 1), and
// ITU-T T.81 for telling a viewable JPEG (SOF0-2) from lossless raw data (SOF3).
import sharp from 'sharp';
import { beforeAll, describe, expect, it } from 'vitest';
import { largestPreview, rawLayout } from '../../../src/core/raw/raw-preview.js';
import { writeTiff } from '../../helpers/tiff-writer.js';

const jpeg = async (w: number, h: number): Promise<Uint8Array> =>
  new Uint8Array(await sharp({ create: { width: w, height: h, channels: 3, background: { r: 90, g: 120, b: 160 } } }).jpeg({ quality: 80 }).toBuffer());

/** A stream framed as lossless JPEG (SOF3), as DNG and CR2 store raw data: not a preview. */
const lossless = Uint8Array.of(0xff, 0xd8, 0xff, 0xc3, 0x00, 0x0b, 0x10, 0x0f, 0xa0, 0x17, 0x70, 0x01, 0x01, 0x11, 0x00, 0xff, 0xd9);

let preview: Uint8Array, thumb: Uint8Array;
beforeAll(async () => {
  preview = await jpeg(1024, 683);
  thumb = await jpeg(160, 107);
});

describe('previews in TIFF-based RAW files', () => {
  it('finds the largest JPEG in a DNG laid out as the specification shows, and the sensor size', async () => {
    const file = writeTiff(true, [
      {
        name: 'ifd0', next: 'ifd1', entries: [
          { tag: 254, type: 4, values: [1] }, { tag: 256, type: 3, values: [256] }, { tag: 257, type: 3, values: [171] },
          { tag: 259, type: 3, values: [1] }, { tag: 274, type: 3, values: [6] }, { tag: 273, type: 4, values: ['pixels'] }, { tag: 279, type: 4, values: [16] },
          { tag: 330, type: 4, values: ['raw', 'preview'] },
        ],
      },
      { name: 'ifd1', entries: [{ tag: 513, type: 4, values: ['thumb'] }, { tag: 514, type: 4, values: [thumb.length] }] },
      {
        name: 'raw', entries: [
          { tag: 254, type: 4, values: [0] }, { tag: 256, type: 4, values: [6000] }, { tag: 257, type: 4, values: [4000] },
          { tag: 259, type: 3, values: [7] }, { tag: 273, type: 4, values: ['rawdata'] }, { tag: 279, type: 4, values: [lossless.length] },
          { tag: 50720, type: 5, values: [5976, 1, 3984, 1] },
        ],
      },
      {
        name: 'preview', entries: [
          { tag: 254, type: 4, values: [1] }, { tag: 256, type: 3, values: [1024] }, { tag: 257, type: 3, values: [683] },
          { tag: 259, type: 3, values: [7] }, { tag: 273, type: 4, values: ['jpeg'] }, { tag: 279, type: 4, values: [preview.length] },
        ],
      },
    ], { pixels: new Uint8Array(16), thumb, rawdata: lossless, jpeg: preview });
    const layout = rawLayout(file);
    expect(layout.previews.map((p) => [p.width, p.height]).sort()).toEqual([[1024, 683], [160, 107]].sort());
    const best = largestPreview(layout.previews)!;
    expect([best.width, best.height]).toEqual([1024, 683]);
    const meta = await sharp(Buffer.from(file.subarray(best.offset, best.offset + best.length))).metadata();
    expect([meta.format, meta.width, meta.height]).toEqual(['jpeg', 1024, 683]);
    expect([layout.sensorWidth, layout.sensorHeight]).toEqual([5976, 3984]);
    expect(layout.orientation).toBe(6);
  });

  it('reads big-endian files and a preview pointed to by JPEGInterchangeFormat in the first IFD', () => {
    const file = writeTiff(false, [
      { name: 'ifd0', entries: [{ tag: 513, type: 4, values: ['jpeg'] }, { tag: 514, type: 4, values: [preview.length] }, { tag: 330, type: 4, values: ['raw'] }] },
      { name: 'raw', entries: [{ tag: 254, type: 4, values: [0] }, { tag: 256, type: 4, values: [6016] }, { tag: 257, type: 4, values: [4016] }, { tag: 259, type: 3, values: [34713] }] },
    ], { jpeg: preview });
    const layout = rawLayout(file);
    expect(largestPreview(layout.previews)).toMatchObject({ width: 1024, height: 683 });
    expect([layout.sensorWidth, layout.sensorHeight]).toEqual([6016, 4016]);
    expect(layout.orientation).toBe(1);
  });

  it('counts lossless JPEG as raw data, not as a preview, and says when there is none', () => {
    const file = writeTiff(true, [
      { name: 'ifd0', entries: [{ tag: 256, type: 4, values: [4000] }, { tag: 257, type: 4, values: [3000] }, { tag: 259, type: 3, values: [6] }, { tag: 273, type: 4, values: ['raw'] }, { tag: 279, type: 4, values: [lossless.length] }] },
    ], { raw: lossless });
    const layout = rawLayout(file);
    expect(layout.previews).toEqual([]);
    expect(largestPreview(layout.previews)).toBeNull();
    expect([layout.sensorWidth, layout.sensorHeight]).toEqual([4000, 3000]);
  });

  it('survives pointers past the end and loops, and refuses what is not TIFF', () => {
    const file = writeTiff(true, [
      { name: 'ifd0', next: 'ifd0', entries: [{ tag: 513, type: 4, values: [999_999] }, { tag: 514, type: 4, values: [100] }, { tag: 330, type: 4, values: [999_999] }] },
    ], {});
    expect(rawLayout(file).previews).toEqual([]);
    expect(() => rawLayout(new TextEncoder().encode('not a raw file at all'))).toThrow(/TIFF byte order/);
    expect(() => rawLayout(Uint8Array.of(0x49, 0x49))).toThrow(/8 bytes or more/);
  });
});
