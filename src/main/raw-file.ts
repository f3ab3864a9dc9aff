import { readFile } from 'node:fs/promises';
import { extname } from 'node:path';
import type { Sharp } from 'sharp';
import { largestPreview, rawLayout } from '../core/raw-preview.js';

/**
 * Endings of the TIFF-based camera RAW formats whose embedded JPEG preview is read: DNG and the
 * makers' TIFF-like files. (.cr3, in an ISO media container, and .raf, in Fujifilm's own, are not
 * read yet: they are listed as not readable.)
 */
export const rawExtensions = new Set(['.dng', '.cr2', '.nef', '.nrw', '.arw', '.srf', '.sr2', '.orf', '.rw2', '.pef', '.srw', '.erf', '.3fr', '.iiq', '.mef', '.mos', '.kdc', '.dcr']);

/** Endings of RAW formats recognised as such but not read yet. */
export const unreadRawExtensions = new Set(['.cr3', '.raf', '.x3f']);

export const isRawFile = (path: string): boolean => rawExtensions.has(extname(path).toLowerCase()) || unreadRawExtensions.has(extname(path).toLowerCase());

export interface RawPreview {
  /** The embedded JPEG stream, as stored. */
  readonly jpeg: Buffer;
  /** TIFF Orientation of the RAW file (the preview itself usually carries none). */
  readonly orientation: number;
  /** The sensor's image size as stored (before orientation), or null when the file does not say. */
  readonly sensorWidth: number | null;
  readonly sensorHeight: number | null;
}

/** The largest embedded JPEG preview of a RAW file; throws "no usable preview" when it holds none. */
export async function readRawPreview(path: string): Promise<RawPreview> {
  const ending = extname(path).toLowerCase();
  if (unreadRawExtensions.has(ending)) throw new Error(`no usable preview: the ${ending} container is not read yet`);
  const bytes = await readFile(path);
  const layout = rawLayout(new Uint8Array(bytes.buffer, bytes.byteOffset, bytes.length));
  const best = largestPreview(layout);
  if (!best) throw new Error(`no usable preview in ${path}`);
  return {
    jpeg: Buffer.from(bytes.subarray(best.offset, best.offset + best.length)),
    orientation: layout.orientation >= 1 && layout.orientation <= 8 ? layout.orientation : 1,
    sensorWidth: layout.sensorWidth,
    sensorHeight: layout.sensorHeight,
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
