// Builds the camera RAW containers that are not TIFF-based, for the tests and the bench.
//
// CR3: ISO base media file boxes (ISO/IEC 14496-12, 4.2: 32-bit size and type, 64-bit size when
// the first is 1, a 16-byte user type after 'uuid'), with Canon's boxes as L. Clévy's public
// description of the format gives them, laid out in the order its dump of a
// real EOS M50 file shows (lclevy/canon_cr3, output/parse_cr3_02.txt): ftyp; moov holding Canon's
// uuid box (CNCV, CMT1, CMT2, THMB), mvhd and three tracks (the full-size JPEG, two crx images),
// each with stsd (a CRAW visual sample entry), stts, stsc, stsz and co64; an XMP uuid box; the
// preview uuid box (8 bytes, then PRVW); mdat with a 64-bit size holding the three images.
//
// RAF: the big-endian header of public descriptions of the format (fileformats.archiveteam.org,
// "Fujifilm RAF"): magic, version, camera, then at 84..107 the offsets and lengths of the JPEG,
// the metadata block (a count, then tag / length / data records) and the sensor data.

const ascii = (s: string): Uint8Array => new TextEncoder().encode(s);
const cat = (...parts: Uint8Array[]): Uint8Array => {
  const out = new Uint8Array(parts.reduce((n, p) => n + p.length, 0));
  let o = 0;
  for (const p of parts) {
    out.set(p, o);
    o += p.length;
  }
  return out;
};
const be = (bits: 16 | 32 | 64, ...values: number[]): Uint8Array => {
  const n = bits / 8;
  const out = new Uint8Array(n * values.length);
  const v = new DataView(out.buffer);
  values.forEach((x, k) => {
    if (bits === 16) v.setUint16(k * n, x);
    else if (bits === 32) v.setUint32(k * n, x);
    else v.setBigUint64(k * n, BigInt(x));
  });
  return out;
};
const pad4 = (b: Uint8Array): Uint8Array => cat(b, new Uint8Array((4 - (b.length % 4)) % 4));

/** A box: 32-bit size and type, then its content. */
export const box = (type: string, ...content: Uint8Array[]): Uint8Array => {
  const body = cat(...content);
  return cat(be(32, 8 + body.length), ascii(type), body);
};
const uuidBox = (uuid: string, ...content: Uint8Array[]): Uint8Array => box('uuid', Uint8Array.from(uuid.match(/../g)!.map((h) => parseInt(h, 16))), ...content);
const fullBox = (type: string, ...content: Uint8Array[]): Uint8Array => box(type, new Uint8Array(4), ...content);

export interface Cr3Parts {
  /** The full-size JPEG of the first track, or null for a file without one. */
  readonly full: Uint8Array | null;
  readonly fullSize: readonly [number, number];
  readonly prvw: Uint8Array | null;
  readonly thmb: Uint8Array | null;
  /** TIFF blocks: IFD0 (CMT1) and the EXIF IFD (CMT2). */
  readonly ifd0: Uint8Array;
  readonly exifIfd: Uint8Array;
  /** The sensor's raw size (the third track's CRAW entry). */
  readonly rawSize?: readonly [number, number];
  /** Bytes of stand-in sensor data in the third track (9000 unless given). */
  readonly sensorBytes?: number;
}

/** A CR3 file around its parts; the crx images are noise with a stray JPEG marker in it. */
export function cr3Around(parts: Cr3Parts): Uint8Array {
  const noise = (n: number, seed: number): Uint8Array => {
    const out = Uint8Array.from({ length: n }, (_, k) => ((k + seed) * 2654435761) >>> 24);
    out.set([0xff, 0xd8, 0xff, 0xe0, 0x00, 0x10], 40);
    return out;
  };
  const samples = [parts.full ?? noise(2048, 1), noise(3000, 2), noise(parts.sensorBytes ?? 9000, 3)];
  const sizes = [parts.fullSize, [1624, 1080], parts.rawSize ?? [parts.fullSize[0] + 288, parts.fullSize[1] + 56]] as const;
  const craw = (w: number, h: number, child: Uint8Array): Uint8Array =>
    // A visual sample entry: reserved (6), data_reference_index, pre_defined/reserved (16), width, height, then the rest.
    box('CRAW', new Uint8Array(6), be(16, 1), new Uint8Array(16), be(16, w, h), be(32, 0x00480000, 0x00480000, 0), be(16, 1), new Uint8Array(32), be(16, 24, 0xffff), child);
  const track = (k: number, offset: number): Uint8Array => box(
    'trak',
    fullBox('tkhd', new Uint8Array(80)),
    box('mdia',
      fullBox('mdhd', new Uint8Array(20)),
      fullBox('hdlr', be(32, 0), ascii('vide'), new Uint8Array(13)),
      box('minf',
        fullBox('vmhd', new Uint8Array(8)),
        box('dinf', fullBox('dref', be(32, 1), fullBox('url ', new Uint8Array(0)))),
        box('stbl',
          fullBox('stsd', be(32, 1), craw(sizes[k][0], sizes[k][1], k === 0 ? box('JPEG', new Uint8Array(4)) : box('CMP1', new Uint8Array(52)))),
          fullBox('stts', be(32, 1, 1, 1)),
          fullBox('stsc', be(32, 1, 1, 1, 1)),
          fullBox('stsz', be(32, samples[k].length, 1)),
          box('free', new Uint8Array(7)),
          fullBox('co64', be(32, 1), be(64, offset)),
        ))));
  const thmb = parts.thmb ? box('THMB', be(32, 0), be(16, 160, 120), be(32, parts.thmb.length, 0x00010000), pad4(parts.thmb)) : new Uint8Array(0);
  const moov = (offsets: number[]): Uint8Array => box(
    'moov',
    uuidBox('85c0b687820f11e08111f4ce462b6a48',
      box('CNCV', ascii('CanonCR3_001/00.09.00/00.00.00')),
      box('CCTP', new Uint8Array(12)),
      box('CMT1', parts.ifd0),
      box('CMT2', parts.exifIfd),
      thmb),
    fullBox('mvhd', new Uint8Array(100)),
    ...offsets.map((o, k) => track(k, o)),
  );
  const ftyp = box('ftyp', ascii('crx '), be(32, 1), ascii('crx isom'));
  const xmp = uuidBox('be7acfcb97a942e89c71999491e3afac', ascii('<x:xmpmeta/>'));
  const preview = parts.prvw ? uuidBox('eaf42b5e1c984b88b9fbb7dc406e4d16', be(32, 0, 1), box('PRVW', be(32, 0), be(16, 1, 1620, 1080, 1), be(32, parts.prvw.length), pad4(parts.prvw))) : new Uint8Array(0);
  const head = (offsets: number[]): Uint8Array => cat(ftyp, moov(offsets), xmp, preview);
  // Offsets do not change the boxes' sizes: lay out once with zeros, then with the real ones.
  const mdatData = head([0, 0, 0]).length + 16;
  const offsets = samples.map((_, k) => mdatData + samples.slice(0, k).reduce((n, s) => n + s.length, 0));
  const data = cat(...samples);
  return cat(head(offsets), be(32, 1), ascii('mdat'), be(64, 16 + data.length), data);
}

/** A RAF file around an embedded JPEG, with the raw image's full and cropped sizes ([width, height]) in its metadata block. */
export function rafAround(jpeg: Uint8Array, sizes: { full?: readonly [number, number]; cropped?: readonly [number, number]; sensorBytes?: number } = {}): Uint8Array {
  const record = (tag: number, [w, h]: readonly [number, number]): Uint8Array => cat(be(16, tag, 4), be(16, h, w));
  const records = [...(sizes.full ? [record(0x100, sizes.full)] : []), be(16, 0x130, 2, 0x0101), ...(sizes.cropped ? [record(0x111, sizes.cropped)] : [])];
  const meta = cat(be(32, records.length), ...records);
  const header = new Uint8Array(160);
  header.set(ascii('FUJIFILMCCD-RAW 0201FF393601'), 0);
  header.set(ascii('X-T0'), 28);
  header.set(ascii('0100'), 60);
  const sensor = new Uint8Array(sizes.sensorBytes ?? 4096);
  const v = new DataView(header.buffer);
  const jpegAt = header.length, metaAt = jpegAt + jpeg.length, sensorAt = metaAt + meta.length;
  [jpegAt, jpeg.length, metaAt, meta.length, sensorAt, sensor.length].forEach((x, k) => v.setUint32(84 + 4 * k, x));
  return cat(header, jpeg, meta, sensor);
}
