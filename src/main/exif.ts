import exifr from 'exifr';
import sharp from 'sharp';
import type { FrameSettings } from '../core/sequence/report.js';
import type { InputPath } from './input-file.js';
import { extensionOf, inputBudget, readInputHead, readInputRest } from './input-file.js';
import { isRawFile, readRawExifBlocks } from './raw-file.js';
import type { JpegDemand } from '../core/image/jpeg-demand.js';
import { jpegDemand, tooShortForItsSize } from '../core/image/jpeg-demand.js';
import { FileProblem } from '../core/image/file-problem.js';

/** The error for a JPEG stream too short for the size its header claims (core/image/jpeg-demand.ts). */
export function tooShortError(d: JpegDemand, streamBytes: number): FileProblem {
  return new FileProblem('cut-short', `damaged or cut short: ${streamBytes - d.scanStart} bytes of JPEG data for ${d.width} x ${d.height} pixels, which need ${d.minEntropyBytes} at least`);
}

export interface FrameExif {
  readonly settings: FrameSettings;
  /** Capture time as milliseconds on a local-time scale (comparable within one card), or null. */
  readonly captureMs: number | null;
  /** Local ISO 8601 with milliseconds, no zone, or null. */
  readonly captureTime: string | null;
  readonly orientation: number | null;
  /** ExposureMode (CIPA DC-008: 0 auto exposure, 1 manual, 2 auto bracket), or null. */
  readonly exposureMode: number | null;
  /** The lens as EXIF names it (LensModel, EXIF 2.3), or null: a change of lens starts a new sequence. */
  readonly lens: string | null;
}

/** The tags a check reads, by name and by number (EXIF 2.32, CIPA DC-008, section 4.6; TIFF 6.0). */
const tagIds: Record<string, number> = {
  ExposureTime: 0x829a, FNumber: 0x829d, ISO: 0x8827, ExposureCompensation: 0x9204, FocalLength: 0x920a,
  FocalLengthIn35mmFormat: 0xa405, WhiteBalance: 0xa403, Make: 0x010f, Model: 0x0110, DateTimeOriginal: 0x9003,
  SubSecTimeOriginal: 0x9291, Orientation: 0x0112, ExposureMode: 0xa402, LensModel: 0xa434,
};
const tags = [...Object.keys(tagIds), 'ISOSpeedRatings', 'PhotographicSensitivity'];

/**
 * The tags of EXIF blocks cut out of a RAW container (TIFF blocks, or a JPEG's head), read by
 * number: a block holding the EXIF IFD as its first IFD names its tags as IFD0's would.
 */
async function tagsOfBlocks(blocks: readonly Uint8Array[]): Promise<Record<string, unknown>> {
  const out: Record<string, unknown> = {};
  for (const block of blocks) {
    let got: Record<string, unknown>;
    try {
      got = (await exifr.parse(Buffer.from(block), { translateKeys: false, reviveValues: false, translateValues: false, mergeOutput: true })) ?? {};
    } catch {
      continue;
    }
    for (const [name, id] of Object.entries(tagIds)) if (got[id] !== undefined && out[name] === undefined) out[name] = got[id];
  }
  return out;
}

/** A positive finite number from whatever EXIF holds (numbers, numeric strings, one-element arrays), else null. */
function positive(v: unknown, max = Infinity): number | null {
  const x = Array.isArray(v) ? v[0] : v;
  const n = typeof x === 'string' && x.trim() !== '' ? Number(x) : x;
  return typeof n === 'number' && Number.isFinite(n) && n > 0 && n <= max ? n : null;
}

function finite(v: unknown, limit: number): number | null {
  const n = typeof v === 'string' && v.trim() !== '' ? Number(v) : v;
  return typeof n === 'number' && Number.isFinite(n) && Math.abs(n) <= limit ? n : null;
}

function text(v: unknown): string | null {
  if (typeof v === 'string') return v.trim() || null;
  if (typeof v === 'number' && Number.isFinite(v)) return String(v);
  return null;
}

/** Parses EXIF "YYYY:MM:DD HH:MM:SS" (plus sub-seconds) on a local-time scale; implausible dates give null. */
export function parseExifDate(value: unknown, subSec: unknown): { ms: number; iso: string } | null {
  if (typeof value !== 'string') return null;
  const m = /^(\d{4})[:-](\d{2})[:-](\d{2})[ T](\d{2}):(\d{2}):(\d{2})/.exec(value.trim());
  if (!m) return null;
  const [y, mo, d, h, mi, s] = m.slice(1).map(Number);
  if (y < 1990 || y > 2100 || mo < 1 || mo > 12 || d < 1 || d > 31 || h > 23 || mi > 59 || s > 60) return null;
  const sub = typeof subSec === 'string' || typeof subSec === 'number' ? String(subSec).trim() : '';
  const ms = /^\d+$/.test(sub) ? Math.round(Number(`0.${sub}`) * 1000) : 0;
  const t = Date.UTC(y, mo - 1, d, h, mi, s, ms);
  return { ms: t, iso: new Date(t).toISOString().replace('Z', '') };
}

/**
 * Bytes of a file's head that hold its EXIF and its size: the APP1 segment leads a JPEG (64 KiB at
 * most, ITU-T T.81 B.1.1.4 with CIPA DC-008 4.5.4) and its frame header follows within the first
 * 128 KiB unless other segments (ICC profiles, a second picture's index) are large, when up to
 * 1 MiB is read; IHDR leads a PNG; a TIFF-based RAW file keeps its IFD0 and EXIF IFD near its start
 * (1 MiB). A TIFF (whose IFDs libtiff writes after the pixels) and an ISO base media file (HEIC,
 * AVIF: the EXIF item may lie in the media data) are read whole.
 */
const headerBytes = 128 * 1024;
const longHeaderBytes = 1024 * 1024;
const readWholeForHeaders = new Set(['.tif', '.tiff', '.heic', '.heif', '.avif']);

/**
 * The head of a file as the header readers get it (never a path, so that no reader maps the file
 * or opens what is not a regular file), and its size; within this thread's input budget.
 */
export async function withHeaderBytes<T>(path: InputPath, work: (head: Buffer, size: number) => Promise<T>): Promise<T> {
  const ending = extensionOf(path);
  let head = await readInputHead(path, isRawFile(path) ? longHeaderBytes : headerBytes);
  if (head.bytes.length < head.size && head.bytes[0] === 0xff && head.bytes[1] === 0xd8 && !jpegDemand(head.bytes)) head = await readInputHead(path, longHeaderBytes);
  const { bytes, size } = head;
  if (!readWholeForHeaders.has(ending) || bytes.length === size) return work(bytes, size);
  return inputBudget.hold(size, async () => work(await readInputRest(path, bytes, size), size));
}

/**
 * EXIF and header size of a file read from one head of it (see `withHeaderBytes`), or the error
 * that kept its head from being read (a read fault, no permission, gone): such a file is reported
 * as it is, not decoded.
 */
export async function readFileHeaders(path: InputPath): Promise<{ exif: FrameExif; size: { width: number; height: number } | null; error: unknown }> {
  try {
    const [exif, size] = await withHeaderBytes(path, async (head, fileSize) => {
      // A JPEG whose whole file is shorter than the data its claimed size needs is refused here,
      // before its size can count among the card's (where it would set the good frames apart).
      const demand = isRawFile(path) ? null : jpegDemand(head);
      if (demand && tooShortForItsSize(demand, fileSize)) throw tooShortError(demand, fileSize);
      return Promise.all([readFrameExif(path, head), readHeaderSize(path, head)]);
    });
    return { exif, size, error: null };
  } catch (error) {
    return { exif: await readFrameExif(path, Buffer.alloc(0)), size: null, error };
  }
}

/**
 * Reads the EXIF a check needs (from `head` when given, else from the file's head); a file
 * without EXIF, or with absurd values, gives nulls, never an error.
 */
export async function readFrameExif(path: InputPath, head?: Buffer): Promise<FrameExif> {
  let raw: Record<string, unknown>;
  try {
    const blocks = await readRawExifBlocks(path);
    const bytes = blocks ? null : head ?? (await withHeaderBytes(path, async (b) => b));
    raw = blocks ? await tagsOfBlocks(blocks) : bytes && bytes.length > 0 ? (await exifr.parse(bytes, { pick: tags, reviveValues: false, translateValues: false })) ?? {} : {};
  } catch {
    raw = {};
  }
  const date = parseExifDate(raw.DateTimeOriginal, raw.SubSecTimeOriginal);
  const orientation = positive(raw.Orientation, 8);
  const mode = finite(raw.ExposureMode, 2);
  return {
    settings: {
      exposureTime: positive(raw.ExposureTime, 3600),
      fNumber: positive(raw.FNumber, 256),
      iso: positive(raw.ISO ?? raw.ISOSpeedRatings ?? raw.PhotographicSensitivity, 10_000_000),
      evBias: finite(raw.ExposureCompensation, 20),
      focalLength: positive(raw.FocalLength, 10_000),
      focalLength35: positive(raw.FocalLengthIn35mmFormat, 10_000),
      whiteBalance: text(raw.WhiteBalance),
      make: text(raw.Make),
      model: text(raw.Model),
    },
    captureMs: date?.ms ?? null,
    captureTime: date?.iso ?? null,
    orientation: orientation !== null && Number.isInteger(orientation) ? orientation : null,
    exposureMode: mode !== null && Number.isInteger(mode) && mode >= 0 ? mode : null,
    lens: text(raw.LensModel),
  };
}

/**
 * The upright pixel size an image's header states, read without decoding it; null for RAW files
 * (whose headers describe a thumbnail or the sensor, not the frame checked) and for anything sharp
 * cannot read. Only a hint for telling stray files apart: the decoded size stays the one measured.
 */
export async function readHeaderSize(path: InputPath, head?: Buffer): Promise<{ width: number; height: number } | null> {
  if (isRawFile(path)) return null;
  try {
    const bytes = head ?? (await withHeaderBytes(path, async (b) => b));
    if (bytes.length === 0) return null;
    const meta = await sharp(bytes, { failOn: 'none' }).metadata();
    if (!meta.width || !meta.height) return null;
    const swap = (meta.orientation ?? 1) >= 5;
    return { width: swap ? meta.height : meta.width, height: swap ? meta.width : meta.height };
  } catch {
    return null;
  }
}
