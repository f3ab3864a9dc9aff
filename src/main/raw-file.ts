import { closeSync, fstatSync, openSync, readSync } from 'node:fs';
import { readFile } from 'node:fs/promises';
import { extname } from 'node:path';
import type { Sharp } from 'sharp';
import type { ByteSource, EmbeddedJpeg } from '../core/raw-preview.js';
import { largestPreview, rafPreview, rawLayout, scanForJpegs } from '../core/raw-preview.js';

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
   * TIFF Orientation of a TIFF-based RAW file (its preview usually carries none); null for the
   * containers whose preview carries its own EXIF orientation (CR3, RAF).
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
  if (ending !== '.raf' && ending !== '.cr3') return tiffBasedPreview(path);
  const bytes = await readFile(path);
  const u8 = new Uint8Array(bytes.buffer, bytes.byteOffset, bytes.length);
  const cut = (p: EmbeddedJpeg): Buffer => Buffer.from(bytes.subarray(p.offset, p.offset + p.length));
  if (ending === '.raf') {
    const p = rafPreview(u8);
    if (!p) throw new Error(`no usable preview in ${path}`);
    return { jpeg: cut(p), orientation: null, sensorWidth: null, sensorHeight: null };
  }
  // CR3, an ISO base media file ('ftyp', brand 'crx '): its previews are plain JPEG streams in its boxes.
  if (!(bytes.length > 12 && bytes.toString('latin1', 4, 12) === 'ftypcrx ')) throw new Error(`no usable preview in ${path}: not a CR3 file`);
  const best = largestPreview({ previews: scanForJpegs(u8), sensorWidth: null, sensorHeight: null, orientation: 1 });
  if (!best) throw new Error(`no usable preview in ${path}`);
  return { jpeg: cut(best), orientation: null, sensorWidth: null, sensorHeight: null };
}

/** Bytes of a file read a page at a time as they are asked for (IFDs are small and scattered). */
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

/** A TIFF-based RAW file's largest preview, reading its IFDs and the preview's bytes, not the sensor data. */
async function tiffBasedPreview(path: string): Promise<RawPreview> {
  const fd = openSync(path, 'r');
  try {
    const layout = rawLayout(pagedSource(fd, fstatSync(fd).size));
    const best = largestPreview(layout);
    if (!best) throw new Error(`no usable preview in ${path}`);
    const jpeg = Buffer.alloc(best.length);
    readSync(fd, jpeg, 0, best.length, best.offset);
    return {
      jpeg,
      orientation: layout.orientation >= 1 && layout.orientation <= 8 ? layout.orientation : 1,
      sensorWidth: layout.sensorWidth,
      sensorHeight: layout.sensorHeight,
    };
  } finally {
    closeSync(fd);
  }
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
