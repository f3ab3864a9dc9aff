import { closeSync, fstatSync, openSync, readSync } from 'node:fs';
import { readFile } from 'node:fs/promises';
import { extname } from 'node:path';
import type { Sharp } from 'sharp';
import type { ByteRange } from '../core/cr3-layout.js';
import { cr3Layout } from '../core/cr3-layout.js';
import { rafLayout } from '../core/raf-layout.js';
import type { ByteSource } from '../core/raw-preview.js';
import { largestPreview, rawLayout, scanForJpegs } from '../core/raw-preview.js';

/**
 * Endings of the camera RAW formats whose embedded JPEG preview is read: DNG and the makers'
 * TIFF-like files, Canon's CR3 (an ISO base media file) and Fujifilm's RAF.
 */
export const rawExtensions = new Set(['.dng', '.cr2', '.nef', '.nrw', '.arw', '.srf', '.sr2', '.orf', '.rw2', '.pef', '.srw', '.erf', '.3fr', '.iiq', '.mef', '.mos', '.kdc', '.dcr', '.cr3', '.raf']);

/** Endings of RAW formats recognised as such but not read yet. */
export const unreadRawExtensions = new Set(['.x3f']);

export const isRawFile = (path: string): boolean => rawExtensions.has(extname(path).toLowerCase()) || unreadRawExtensions.has(extname(path).toLowerCase());

export interface RawPreview {
  /** The embedded JPEG stream, as stored. */
  readonly jpeg: Buffer;
  /**
   * TIFF Orientation of the RAW file (TIFF-based files and CR3, whose previews carry none); null
   * where the preview carries its own EXIF orientation (RAF).
   */
  readonly orientation: number | null;
  /** The sensor's image size as stored (before orientation), or null when the file does not say. */
  readonly sensorWidth: number | null;
  readonly sensorHeight: number | null;
}

/** The largest embedded JPEG preview of a RAW file; throws "no usable preview" when it holds none. */
export async function readRawPreview(path: string): Promise<RawPreview> {
  const ending = extname(path).toLowerCase();
  if (unreadRawExtensions.has(ending)) throw new Error(`no usable preview: the ${ending} container is not read yet`);
  if (ending === '.cr3') return cr3Preview(path);
  if (ending === '.raf') return rafFilePreview(path);
  return withFile(path, (fd, src) => {
    const layout = rawLayout(src);
    const best = largestPreview(layout.previews);
    if (!best) throw new Error(`no usable preview in ${path}`);
    return {
      jpeg: readRange(fd, best),
      orientation: layout.orientation >= 1 && layout.orientation <= 8 ? layout.orientation : 1,
      sensorWidth: layout.sensorWidth,
      sensorHeight: layout.sensorHeight,
    };
  });
}

/**
 * The blocks of a RAW container that hold its EXIF, for a reader that cannot open the container
 * itself: CR3's IFD0 and EXIF IFD (TIFF blocks), the head of RAF's embedded JPEG (which carries
 * the EXIF). Null for the TIFF-based files, which EXIF readers open as they are.
 */
export async function readRawExifBlocks(path: string): Promise<Uint8Array[] | null> {
  const ending = extname(path).toLowerCase();
  if (ending !== '.cr3' && ending !== '.raf') return null;
  return withFile(path, (fd, src) => {
    if (ending === '.cr3') {
      const layout = cr3Layout(src);
      return layout ? [layout.ifd0, layout.exifIfd].filter((r): r is ByteRange => r !== null).map((r) => readRange(fd, r)) : [];
    }
    const layout = rafLayout(src);
    // EXIF sits in the JPEG's first segment (APP1, at most 64 KiB).
    return layout && layout.jpeg.offset + 4 <= src.length ? [readRange(fd, { offset: layout.jpeg.offset, length: Math.min(layout.jpeg.length, 128 * 1024, src.length - layout.jpeg.offset) })] : [];
  });
}

/** Runs `work` on an open file and a paged view of its bytes, closing it after. */
async function withFile<T>(path: string, work: (fd: number, src: ByteSource) => T): Promise<T> {
  const fd = openSync(path, 'r');
  try {
    return work(fd, pagedSource(fd, fstatSync(fd).size));
  } finally {
    closeSync(fd);
  }
}

function readRange(fd: number, r: ByteRange): Buffer {
  const out = Buffer.alloc(r.length);
  readSync(fd, out, 0, r.length, r.offset);
  return out;
}

/**
 * A CR3 file's largest preview from its boxes, upright by CMT1's orientation; where the boxes
 * name none (a layout not described yet), the JPEG streams found by scanning the whole file.
 */
async function cr3Preview(path: string): Promise<RawPreview> {
  const found = await withFile(path, (fd, src) => {
    const layout = cr3Layout(src);
    if (!layout) throw new Error(`no usable preview in ${path}: not a CR3 file`);
    const best = largestPreview(layout.previews);
    return best ? { jpeg: readRange(fd, best), orientation: layout.orientation, sensorWidth: layout.width, sensorHeight: layout.height } : null;
  });
  if (found) return found;
  const bytes = await readFile(path);
  const best = largestPreview(scanForJpegs(new Uint8Array(bytes.buffer, bytes.byteOffset, bytes.length)));
  if (!best) throw new Error(`no usable preview in ${path}`);
  // A stream found so carries its own EXIF orientation, if any.
  return { jpeg: Buffer.from(bytes.subarray(best.offset, best.offset + best.length)), orientation: null, sensorWidth: null, sensorHeight: null };
}

/**
 * A RAF file's embedded JPEG, upright by its own EXIF orientation; the sensor's size from the
 * metadata block where it has the preview's shape (within 3 %), else the preview's.
 */
async function rafFilePreview(path: string): Promise<RawPreview> {
  return withFile(path, (fd, src) => {
    const layout = rafLayout(src);
    if (!layout?.preview) throw new Error(`no usable preview in ${path}`);
    const p = layout.preview, w = layout.sensorWidth, h = layout.sensorHeight;
    const sameShape = w !== null && h !== null && Math.abs((w / h) / (p.width / p.height) - 1) < 0.03;
    return { jpeg: readRange(fd, p), orientation: null, sensorWidth: sameShape ? w : null, sensorHeight: sameShape ? h : null };
  });
}

/** Bytes of a file read a page at a time as they are asked for (IFDs and boxes are small and scattered). */
function pagedSource(fd: number, size: number): ByteSource {
  const pageSize = 64 * 1024;
  const pages = new Map<number, Buffer>();
  return {
    length: size,
    byte(offset) {
      const k = Math.floor(offset / pageSize);
      let page = pages.get(k);
      if (!page) {
        page = Buffer.alloc(Math.min(pageSize, size - k * pageSize));
        readSync(fd, page, 0, page.length, k * pageSize);
        pages.set(k, page);
      }
      return page[offset - k * pageSize];
    },
  };
}

/**
 * Turns an image upright by a TIFF/EXIF orientation (1..8). sharp mirrors before it rotates, so the
 * transposing orientations mirror first and then turn: 5 (transpose) is a mirror and a turn of 270
 * degrees clockwise, 7 (transverse) a mirror and 90.
 */
export function orient(img: Sharp, orientation: number): Sharp {
  const steps: Record<number, [number, boolean, boolean]> = {
    1: [0, false, false], 2: [0, false, true], 3: [180, false, false], 4: [0, true, false],
    5: [270, false, true], 6: [90, false, false], 7: [90, false, true], 8: [270, false, false],
  };
  const [angle, flip, flop] = steps[orientation] ?? steps[1];
  let out = angle ? img.rotate(angle) : img;
  if (flip) out = out.flip();
  if (flop) out = out.flop();
  return out;
}
