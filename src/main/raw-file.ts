import { closeSync } from 'node:fs';
import type { Sharp } from 'sharp';
import type { ByteRange } from '../core/raw/cr3-layout.js';
import { cr3Layout } from '../core/raw/cr3-layout.js';
import { rafLayout } from '../core/raw/raf-layout.js';
import type { ByteSource, EmbeddedJpeg } from '../core/raw/raw-preview.js';
import { jpegExtent, largestPreview, rawLayout } from '../core/raw/raw-preview.js';
import { FileProblem } from '../core/image/file-problem.js';
import type { InputPath } from './input-file.js';
import { extensionOf, openInputSync, pathText, readExactSync } from './input-file.js';

/**
 * Endings of the camera RAW formats whose embedded JPEG preview is read: DNG and the makers'
 * TIFF-like files, Canon's CR3 (an ISO base media file) and Fujifilm's RAF.
 */
export const rawExtensions = new Set(['.dng', '.cr2', '.nef', '.nrw', '.arw', '.srf', '.sr2', '.orf', '.rw2', '.pef', '.srw', '.erf', '.3fr', '.iiq', '.mef', '.mos', '.kdc', '.dcr', '.cr3', '.raf']);

/** Endings of RAW formats recognised as such but not read yet. */
export const unreadRawExtensions = new Set(['.x3f']);

export const isRawFile = (path: InputPath): boolean => rawExtensions.has(extensionOf(path)) || unreadRawExtensions.has(extensionOf(path));

/**
 * Most bytes of an embedded preview read (a full-size JPEG of a 100 MP sensor at its finest is
 * some 60 MB). Our own limit, so that what a container's boxes or IFDs claim never sizes an
 * allocation beyond it.
 */
export const maxPreviewBytes = 128 * 1024 * 1024;

/** Most bytes of a container's EXIF block read (an EXIF block in a JPEG is at most 64 KiB; CMT boxes are a few). Our own. */
export const maxExifBlockBytes = 1024 * 1024;

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

/** The largest embedded JPEG preview of a RAW file; throws a FileProblem (no-preview) when it holds none. */
export async function readRawPreview(path: InputPath): Promise<RawPreview> {
  const ending = extensionOf(path);
  if (unreadRawExtensions.has(ending)) throw new FileProblem('unread-container', `no usable preview: the ${ending} container is not read yet`, { ending });
  if (ending === '.cr3') return cr3Preview(path);
  if (ending === '.raf') return rafFilePreview(path);
  return withFile(path, (fd, src) => {
    const layout = rawLayout(src);
    const best = largestPreview(layout.previews);
    if (!best) throw new FileProblem('no-preview', `no usable preview in ${pathText(path)}`);
    return {
      jpeg: readPreview(fd, src.length, best),
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
export async function readRawExifBlocks(path: InputPath): Promise<Uint8Array[] | null> {
  const ending = extensionOf(path);
  if (ending !== '.cr3' && ending !== '.raf') return null;
  return withFile(path, (fd, src) => {
    if (ending === '.cr3') {
      const layout = cr3Layout(src);
      return layout ? [layout.ifd0, layout.exifIfd].filter((r): r is ByteRange => r !== null).map((r) => readRange(fd, src.length, r, maxExifBlockBytes)) : [];
    }
    const layout = rafLayout(src);
    // EXIF sits in the JPEG's first segment (APP1, at most 64 KiB).
    return layout && layout.jpeg.offset + 4 <= src.length ? [readRange(fd, src.length, { offset: layout.jpeg.offset, length: layout.jpeg.length }, 128 * 1024)] : [];
  });
}

/**
 * Runs `work` on an open file (a regular file only) and a paged view of its bytes, closing it
 * after. Every read is a plain read: a fault of the medium is an error (EIO), not a signal.
 */
async function withFile<T>(path: InputPath, work: (fd: number, src: ByteSource) => T): Promise<T> {
  const { fd, size } = openInputSync(path);
  try {
    return work(fd, pagedSource(fd, size));
  } finally {
    closeSync(fd);
  }
}

/**
 * A stretch of the file, at most `cap` bytes of it and never past the file's real end, whatever
 * the container said of its length.
 */
function readRange(fd: number, fileSize: number, r: ByteRange, cap: number): Buffer {
  const offset = Math.max(0, Math.min(r.offset, fileSize));
  return readExactSync(fd, offset, Math.max(0, Math.min(r.length, cap, fileSize - offset)));
}

/** An embedded JPEG whole; one longer than `maxPreviewBytes` is refused rather than cut. */
function readPreview(fd: number, fileSize: number, r: ByteRange): Buffer {
  if (r.length > maxPreviewBytes) throw new FileProblem('over-read-limit', `the embedded preview is ${r.length} bytes, over the ${maxPreviewBytes} bytes read at most`);
  return readRange(fd, fileSize, r, maxPreviewBytes);
}

/**
 * A CR3 file's largest preview from its boxes, upright by CMT1's orientation; where the boxes
 * name none (a layout not described yet), the JPEG streams found by scanning the whole file.
 */
async function cr3Preview(path: InputPath): Promise<RawPreview> {
  return withFile(path, (fd, src) => {
    const layout = cr3Layout(src);
    if (!layout) throw new FileProblem('no-preview', `no usable preview in ${pathText(path)}: not a CR3 file`);
    const best = largestPreview(layout.previews);
    if (best) return { jpeg: readPreview(fd, src.length, best), orientation: layout.orientation, sensorWidth: layout.width, sensorHeight: layout.height };
    const found = largestPreview(scanFileForJpegs(fd, src));
    if (!found) throw new FileProblem('no-preview', `no usable preview in ${pathText(path)}`);
    // A stream found so carries its own EXIF orientation, if any.
    return { jpeg: readPreview(fd, src.length, found), orientation: null, sensorWidth: null, sensorHeight: null };
  });
}

/**
 * Viewable JPEG streams found by their start-of-image marker (FF D8 FF) anywhere in a file, each
 * checked by parsing it to its end (streams nested in a found one are skipped): the file is read a
 * window at a time, so memory does not follow its size.
 */
function scanFileForJpegs(fd: number, src: ByteSource): EmbeddedJpeg[] {
  const windowBytes = 4 << 20;
  const soi = Buffer.from([0xff, 0xd8, 0xff]);
  const out: EmbeddedJpeg[] = [];
  for (let start = 0; start + 3 <= src.length; ) {
    const window = readExactSync(fd, start, Math.min(windowBytes, src.length - start));
    let resume = -1;
    for (let at = window.indexOf(soi); at >= 0; at = window.indexOf(soi, at + 1)) {
      const e = jpegExtent(src, start + at);
      if (e) {
        out.push({ offset: start + at, length: e.end - start - at, width: e.width, height: e.height });
        resume = e.end;
        break;
      }
    }
    if (resume >= 0) start = resume;
    else if (start + window.length >= src.length) break;
    // A marker across the window's edge is found in the next window.
    else start += window.length - 2;
  }
  return out;
}

/**
 * A RAF file's embedded JPEG, upright by its own EXIF orientation; the sensor's size from the
 * metadata block where it has the preview's shape (within 3 %), else the preview's.
 */
async function rafFilePreview(path: InputPath): Promise<RawPreview> {
  return withFile(path, (fd, src) => {
    const layout = rafLayout(src);
    if (!layout?.preview) throw new FileProblem('no-preview', `no usable preview in ${pathText(path)}`);
    const p = layout.preview, w = layout.sensorWidth, h = layout.sensorHeight;
    const sameShape = w !== null && h !== null && Math.abs((w / h) / (p.width / p.height) - 1) < 0.03;
    return { jpeg: readPreview(fd, src.length, p), orientation: null, sensorWidth: sameShape ? w : null, sensorHeight: sameShape ? h : null };
  });
}

/**
 * Bytes of a file read a page at a time as they are asked for (IFDs and boxes are small and
 * scattered), the most recently used 64 pages (4 MiB) kept, so that memory does not follow what
 * a crafted file makes a reader visit.
 */
function pagedSource(fd: number, size: number): ByteSource {
  const pageSize = 64 * 1024, keptPages = 64;
  const pages = new Map<number, Buffer>();
  let lastKey = -1, last: Buffer | null = null;
  return {
    length: size,
    byte(offset) {
      const k = Math.floor(offset / pageSize);
      if (k !== lastKey || !last) {
        let page = pages.get(k);
        if (page) pages.delete(k);
        else {
          if (offset < 0 || offset >= size) throw new RangeError(`Expected an offset within the file's ${size} bytes for offset but received ${offset}`);
          page = readExactSync(fd, k * pageSize, Math.min(pageSize, size - k * pageSize));
          if (pages.size >= keptPages) pages.delete(pages.keys().next().value!);
        }
        pages.set(k, page);
        lastKey = k;
        last = page;
      }
      return last[offset - k * pageSize];
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
