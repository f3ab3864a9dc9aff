/**
 * Where the JPEG previews and the EXIF blocks of a Canon CR3 file lie. CR3 is an ISO base media
 * file (ISO/IEC 14496-12, section 4.2: boxes of a 32-bit big-endian size, a four-character type,
 * a 64-bit size when the first is 1, and a 16-byte user type after 'uuid'). Canon's own boxes are
 * read as L. Clévy's public description of the format ("Describing the Canon Raw v3 (CR3) file
 * format") gives them:
 *
 * - moov / uuid 85c0b687-820f-11e0-8111-f4ce462b6a48: CMT1 (a TIFF block holding IFD0: make,
 *   model, orientation), CMT2 (a TIFF block holding the EXIF IFD), THMB (a 160x120 JPEG, its
 *   stream 24 bytes into the box);
 * - moov / trak (the first): the full-size JPEG, one sample in mdat located by the track's stsz
 *   (sample size) and co64 or stco (chunk offset) boxes; its stsd's CRAW entry (a visual sample
 *   entry, ISO/IEC 14496-12 section 12.1.3) gives its width and height;
 * - uuid eaf42b5e-1c98-4b88-b9fb-b7dc406e4d16 / PRVW: a 1620x1080 JPEG, its stream 24 bytes in.
 *
 * The full-size JPEG and PRVW carry no EXIF of their own, so the frame is turned upright by CMT1's
 * Orientation.
 */
import type { ByteSource, EmbeddedJpeg } from './raw-preview.js';
import { jpegHeader, rawLayout } from './raw-preview.js';

/** A stretch of the file. */
export interface ByteRange {
  readonly offset: number;
  readonly length: number;
}

export interface Cr3Layout {
  /** Every viewable JPEG found where the boxes say: the full-size one, PRVW, THMB. */
  readonly previews: EmbeddedJpeg[];
  /** The TIFF blocks of IFD0 (CMT1) and of the EXIF IFD (CMT2), where present. */
  readonly ifd0: ByteRange | null;
  readonly exifIfd: ByteRange | null;
  /** CMT1's Orientation (1..8), 1 when absent. */
  readonly orientation: number;
  /** The image size of the first track (the full-size JPEG's), or null when it says none. */
  readonly width: number | null;
  readonly height: number | null;
}

interface Box {
  readonly type: string;
  readonly start: number;
  /** Where the box's content starts (after its header and, for 'uuid', its user type). */
  readonly content: number;
  readonly end: number;
  /** The user type of a 'uuid' box, as 32 hex digits. */
  readonly uuid: string | null;
}

const canonUuid = '85c0b687820f11e08111f4ce462b6a48';
const previewUuid = 'eaf42b5e1c984b88b9fbb7dc406e4d16';
/** Boxes holding other boxes, on the way to a track's sample tables. */
const containers = new Set(['moov', 'trak', 'mdia', 'minf', 'stbl']);

/** Reads a CR3 file's boxes; null when it is not an ISO base media file of brand 'crx '. */
export function cr3Layout(src: ByteSource): Cr3Layout | null {
  const u8 = (o: number): number => src.byte(o);
  const u16 = (o: number): number => (u8(o) << 8) | u8(o + 1);
  const u32 = (o: number): number => u8(o) * 2 ** 24 + ((u8(o + 1) << 16) | (u8(o + 2) << 8) | u8(o + 3));
  const text = (o: number, n: number): string => String.fromCharCode(...Array.from({ length: n }, (_, k) => u8(o + k)));
  const hex = (o: number, n: number): string => Array.from({ length: n }, (_, k) => u8(o + k).toString(16).padStart(2, '0')).join('');

  /** The boxes between `from` and `to`, stopping at the first that does not fit. */
  const boxes = (from: number, to: number): Box[] => {
    const out: Box[] = [];
    for (let p = from; p + 8 <= to; ) {
      let size = u32(p), head = 8;
      const type = text(p + 4, 4);
      if (size === 1) {
        if (p + 16 > to) break;
        size = u32(p + 8) * 2 ** 32 + u32(p + 12);
        head = 16;
      } else if (size === 0) size = to - p;
      if (size < head || p + size > to) break;
      const uuid = type === 'uuid' && head + 16 <= size ? hex(p + head, 16) : null;
      out.push({ type, start: p, content: p + head + (uuid ? 16 : 0), end: p + size, uuid });
      p += size;
    }
    return out;
  };

  if (src.length < 16 || text(4, 8) !== 'ftypcrx ') return null;
  const previews: EmbeddedJpeg[] = [];
  const addJpeg = (offset: number, length: number): boolean => {
    if (length <= 4 || offset < 0 || offset + length > src.length || previews.some((p) => p.offset === offset)) return false;
    const head = jpegHeader(src, offset);
    if (!head) return false;
    previews.push({ offset, length, width: head.size.width, height: head.size.height });
    return true;
  };
  // THMB and PRVW: the stream 24 bytes into the box, as long as the box allows.
  const addBoxJpeg = (b: Box): void => void addJpeg(b.start + 24, b.end - b.start - 24);
  let ifd0: ByteRange | null = null, exifIfd: ByteRange | null = null;
  let first: { width: number; height: number } | null = null;
  let tracks = 0;

  /** A track's first sample (its offset and size) and its sample entry's image size. */
  const readTrack = (trak: Box): void => {
    tracks++;
    let size: number | null = null, offset: number | null = null, dims: { width: number; height: number } | null = null;
    const visit = (b: Box): void => {
      if (containers.has(b.type)) for (const c of boxes(b.content, b.end)) visit(c);
      else if (b.type === 'stsz' && b.content + 12 <= b.end) {
        // version and flags, sample_size (0: each in the table that follows), sample_count.
        const fixed = u32(b.content + 4);
        size = fixed > 0 ? fixed : b.content + 16 <= b.end ? u32(b.content + 12) : null;
      } else if ((b.type === 'co64' || b.type === 'stco') && b.content + 8 <= b.end && u32(b.content + 4) > 0) {
        const at = b.content + 8;
        if (b.type === 'co64' && at + 8 <= b.end) offset = u32(at) * 2 ** 32 + u32(at + 4);
        else if (b.type === 'stco' && at + 4 <= b.end) offset = u32(at);
      } else if (b.type === 'stsd' && b.content + 8 <= b.end) {
        // version and flags, entry_count, then the entries; a visual one has its width at 32.
        const entry = boxes(b.content + 8, b.end)[0];
        if (entry && entry.start + 36 <= entry.end) dims = { width: u16(entry.start + 32), height: u16(entry.start + 34) };
      }
    };
    visit(trak);
    if (tracks === 1 && dims) first = dims;
    if (size !== null && offset !== null) addJpeg(offset, size);
  };

  const walkMoov = (moov: Box): void => {
    for (const b of boxes(moov.content, moov.end)) {
      if (b.type === 'trak') readTrack(b);
      else if (b.type === 'uuid' && b.uuid === canonUuid) {
        for (const c of boxes(b.content, b.end)) {
          if (c.type === 'CMT1') ifd0 = { offset: c.content, length: c.end - c.content };
          else if (c.type === 'CMT2') exifIfd = { offset: c.content, length: c.end - c.content };
          else if (c.type === 'THMB') addBoxJpeg(c);
        }
      }
    }
  };

  for (const b of boxes(0, src.length)) {
    if (b.type === 'moov') walkMoov(b);
    else if (b.type === 'uuid' && b.uuid === previewUuid) {
      // Eight bytes of Canon's own come before the PRVW box.
      const prvw = boxes(b.content + 8, b.end).find((c) => c.type === 'PRVW');
      if (prvw) addBoxJpeg(prvw);
    }
  }

  let orientation = 1;
  const block = ifd0 as ByteRange | null;
  if (block) {
    try {
      orientation = rawLayout({ length: block.length, byte: (o) => src.byte(block.offset + o) }).orientation;
    } catch {
      orientation = 1;
    }
  }
  const size = first as { width: number; height: number } | null;
  return { previews, ifd0, exifIfd, orientation: orientation >= 1 && orientation <= 8 ? orientation : 1, width: size?.width || null, height: size?.height || null };
}
