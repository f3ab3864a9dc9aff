import { FileProblem } from '../image/file-problem.js';

/**
 * The JPEG previews embedded in TIFF-based camera RAW files (DNG and the TIFF-like formats of most
 * makers): where each lies in the file and how large it is, and the sensor's size, from the
 * image file directories (TIFF 6.0, sections 2 and 7; DNG 1.6, "SubIFD trees" and chapter 4).
 *
 * A file is walked from its first IFD along the chain of next IFDs and into every SubIFD (tag 330)
 * and the EXIF IFD (tag 34665). A preview is a JPEG stream a decoder can show, that is, one framed
 * as baseline, extended or progressive (SOF0-SOF2; ITU-T T.81, table B.1): pointed to by a
 * JPEGInterchangeFormat/-Length pair (tags 513, 514) or an IFD's single JPEG-compressed strip
 * (Compression 6 or 7). Lossless JPEG (SOF3) is raw sensor data, not a preview. The raw image is
 * the largest full-resolution IFD (NewSubfileType 0) that holds no preview; its DefaultCropSize
 * (DNG tag 50720) where given, else its size, is the sensor's size.
 */

/** A JPEG stream inside the file. */
export interface EmbeddedJpeg {
  readonly offset: number;
  readonly length: number;
  /** Its frame size, from the JPEG header. */
  readonly width: number;
  readonly height: number;
}

export interface RawLayout {
  readonly previews: EmbeddedJpeg[];
  /** The sensor's image size in pixels, or null when no raw IFD says it. */
  readonly sensorWidth: number | null;
  readonly sensorHeight: number | null;
  /** TIFF Orientation (1..8) of the first IFD, 1 when absent. */
  readonly orientation: number;
}

const TAG = {
  newSubfileType: 254,
  imageWidth: 256,
  imageLength: 257,
  compression: 259,
  stripOffsets: 273,
  orientation: 274,
  stripByteCounts: 279,
  subIfds: 330,
  jpegOffset: 513,
  jpegLength: 514,
  exifIfd: 34665,
  defaultCropSize: 50720,
} as const;

/**
 * Random access to a file's bytes, so a large RAW file need not be read whole to find its preview:
 * `byte(o)` for 0 <= o < length.
 */
export interface ByteSource {
  readonly length: number;
  byte(offset: number): number;
}

/** A ByteSource over bytes already in memory. */
export const bytesSource = (b: Uint8Array): ByteSource => ({ length: b.length, byte: (o) => b[o] });

/** Bytes per value of each TIFF field type (1 BYTE ... 13 IFD); 0 for unknown types. */
const typeSize = [0, 1, 1, 2, 4, 8, 1, 1, 2, 4, 8, 4, 8, 4];

/** Reads a file's TIFF structure; throws on what is not TIFF-shaped at all (a file without a TIFF mark holds no preview we read). */
export function rawLayout(input: Uint8Array | ByteSource): RawLayout {
  const bytes = input instanceof Uint8Array ? bytesSource(input) : input;
  const b = (o: number): number => bytes.byte(o);
  if (bytes.length < 8) throw new RangeError(`Expected a TIFF-based file of 8 bytes or more but received ${bytes.length}`);
  const order = String.fromCharCode(b(0), b(1));
  if (order !== 'II' && order !== 'MM') throw new FileProblem('no-preview', `Expected a TIFF byte order mark (II or MM) but received ${JSON.stringify(order)}`);
  const little = order === 'II';
  const u16 = (o: number): number => (little ? b(o) | (b(o + 1) << 8) : (b(o) << 8) | b(o + 1));
  const u32 = (o: number): number => (little ? (b(o) | (b(o + 1) << 8) | (b(o + 2) << 16)) + b(o + 3) * 2 ** 24 : b(o) * 2 ** 24 + ((b(o + 1) << 16) | (b(o + 2) << 8) | b(o + 3)));
  // 42 in TIFF; makers' variants keep the layout with another mark (0x4f52 'RO', 0x55 'U').
  const magic = u16(2);
  if (magic !== 42 && magic !== 0x4f52 && magic !== 0x5352 && magic !== 0x55) throw new FileProblem('no-preview', `Expected the TIFF mark 42 but received ${magic}`);

  const previews: EmbeddedJpeg[] = [];
  let sensor: { w: number; h: number; area: number } | null = null;
  let orientation = 1;
  const seen = new Set<number>();
  /** The frame size of a viewable JPEG stream at o (n bytes), or null when it is none. */
  const viewableJpeg = (o: number, n: number): { width: number; height: number } | null =>
    n > 4 && o >= 0 && o + n <= bytes.length ? jpegHeader(bytes, o)?.size ?? null : null;
  const addPreview = (offset: number, length: number): boolean => {
    const size = viewableJpeg(offset, length);
    if (!size) return false;
    if (!previews.some((q) => q.offset === offset)) previews.push({ offset, length, width: size.width, height: size.height });
    return true;
  };

  const walk = (ifd: number, depth: number, first: boolean): void => {
    while (ifd > 0 && ifd + 2 <= bytes.length && !seen.has(ifd) && depth < 8) {
      seen.add(ifd);
      const n = u16(ifd);
      if (ifd + 2 + 12 * n + 4 > bytes.length) return;
      const values = new Map<number, number[]>();
      for (let k = 0; k < n; k++) {
        const e = ifd + 2 + 12 * k;
        const tag = u16(e), type = u16(e + 2), count = u32(e + 4);
        const size = typeSize[type] ?? 0;
        if (size === 0 || count === 0 || count > 65536) continue;
        const at = size * count <= 4 ? e + 8 : u32(e + 8);
        if (at + size * count > bytes.length) continue;
        const read: number[] = [];
        for (let c = 0; c < Math.min(count, 64); c++) {
          const o = at + c * size;
          read.push(size === 1 ? b(o) : size === 2 ? u16(o) : size === 4 ? u32(o) : u32(o) / Math.max(1, u32(o + 4)));
        }
        values.set(tag, read);
      }
      const one = (tag: number): number | null => values.get(tag)?.[0] ?? null;
      if (first && one(TAG.orientation) !== null) orientation = one(TAG.orientation)!;
      const w = one(TAG.imageWidth), h = one(TAG.imageLength), compression = one(TAG.compression);
      const jo = one(TAG.jpegOffset), jl = one(TAG.jpegLength);
      const heldPreview = (jo !== null && jl !== null && addPreview(jo, jl)) || ((compression === 6 || compression === 7) && values.get(TAG.stripOffsets)?.length === 1 && values.get(TAG.stripByteCounts)?.length === 1 && addPreview(values.get(TAG.stripOffsets)![0], values.get(TAG.stripByteCounts)![0]));
      if (!heldPreview && w !== null && h !== null && ((one(TAG.newSubfileType) ?? 0) & 1) === 0) {
        const crop = values.get(TAG.defaultCropSize);
        const cw = crop && crop.length >= 2 ? Math.round(crop[0]) : w, ch = crop && crop.length >= 2 ? Math.round(crop[1]) : h;
        if (!sensor || cw * ch > sensor.area) sensor = { w: cw, h: ch, area: cw * ch };
      }
      for (const sub of values.get(TAG.subIfds) ?? []) walk(sub, depth + 1, false);
      const exif = one(TAG.exifIfd);
      if (exif !== null) walk(exif, depth + 1, false);
      ifd = u32(ifd + 2 + 12 * n);
      first = false;
    }
  };
  walk(u32(4), 0, true);
  const s = sensor as { w: number; h: number } | null;
  return { previews, sensorWidth: s?.w ?? null, sensorHeight: s?.h ?? null, orientation };
}

/** The embedded JPEG with the most pixels (on a tie, the most bytes), or null. */
export function largestPreview(previews: readonly EmbeddedJpeg[]): EmbeddedJpeg | null {
  const area = (p: EmbeddedJpeg): number => p.width * p.height;
  return previews.reduce<EmbeddedJpeg | null>((best, p) => (!best || area(p) > area(best) || (area(p) === area(best) && p.length > best.length) ? p : best), null);
}

/**
 * The frame size of the viewable JPEG stream (SOF0-SOF2) starting at `o`, and where its marker
 * segments end (after the first start of scan), or null when there is none there.
 */
export function jpegHeader(input: Uint8Array | ByteSource, o: number): { size: { width: number; height: number }; scan: number } | null {
  const src = input instanceof Uint8Array ? bytesSource(input) : input;
  const at = (k: number): number => src.byte(k);
  if (!(o + 4 <= src.length && at(o) === 0xff && at(o + 1) === 0xd8)) return null;
  let p = o + 2, size: { width: number; height: number } | null = null;
  // Marker segments up to the start of scan (ITU-T T.81, B.1.1.4): FF xx, 2-byte length.
  while (p + 4 <= src.length) {
    if (at(p) !== 0xff) return null;
    const marker = at(p + 1);
    if (marker === 0xff) {
      p++;
      continue;
    }
    const len = (at(p + 2) << 8) | at(p + 3);
    if (len < 2) return null;
    if (marker >= 0xc0 && marker <= 0xcf && marker !== 0xc4 && marker !== 0xc8 && marker !== 0xcc) {
      if (marker > 0xc2 || p + 9 > src.length) return null;
      size = { height: (at(p + 5) << 8) | at(p + 6), width: (at(p + 7) << 8) | at(p + 8) };
    }
    p += 2 + len;
    if (marker === 0xda) return size ? { size, scan: p } : null;
  }
  return null;
}

/** The frame size of the viewable JPEG stream starting at `o`, and where it ends (after EOI), or null. */
export function jpegExtent(input: Uint8Array | ByteSource, o: number): { width: number; height: number; end: number } | null {
  const src = input instanceof Uint8Array ? bytesSource(input) : input;
  const head = jpegHeader(src, o);
  if (!head) return null;
  // Entropy-coded data and further scans up to EOI: FF 00 is a stuffed byte, FF D0-D7 a restart.
  for (let p = head.scan; p + 1 < src.length; p++) {
    if (src.byte(p) !== 0xff) continue;
    const m = src.byte(p + 1);
    if (m === 0xd9) return { ...head.size, end: p + 2 };
    if (m === 0x00 || (m >= 0xd0 && m <= 0xd7) || m === 0xff) continue;
    // Another segment between scans (DHT, SOS of a progressive file): skip its length.
    if (p + 3 < src.length) p += 1 + ((src.byte(p + 2) << 8) | src.byte(p + 3));
  }
  return null;
}

/**
 * Viewable JPEG streams found by their start-of-image marker anywhere in a file, each checked by
 * parsing it to its end (nested thumbnails inside a found stream are skipped): for containers that
 * hold their previews as plain JPEG streams among other data (Canon's CR3, an ISO base media file).
 */
export function scanForJpegs(bytes: Uint8Array): EmbeddedJpeg[] {
  const out: EmbeddedJpeg[] = [];
  for (let p = 0; p + 3 < bytes.length; ) {
    const at = bytes.indexOf(0xff, p);
    if (at < 0 || at + 3 >= bytes.length) break;
    if (bytes[at + 1] === 0xd8 && bytes[at + 2] === 0xff) {
      const e = jpegExtent(bytes, at);
      if (e) {
        out.push({ offset: at, length: e.end - at, width: e.width, height: e.height });
        p = e.end;
        continue;
      }
    }
    p = at + 1;
  }
  return out;
}
