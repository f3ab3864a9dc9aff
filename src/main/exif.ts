import exifr from 'exifr';
import type { FrameSettings } from '../core/report.js';

export interface FrameExif {
  readonly settings: FrameSettings;
  /** Capture time as milliseconds on a local-time scale (comparable within one card), or null. */
  readonly captureMs: number | null;
  /** Local ISO 8601 with milliseconds, no zone, or null. */
  readonly captureTime: string | null;
  readonly orientation: number | null;
}

const tags = [
  'ExposureTime', 'FNumber', 'ISO', 'ISOSpeedRatings', 'PhotographicSensitivity', 'ExposureCompensation',
  'FocalLength', 'FocalLengthIn35mmFormat', 'WhiteBalance', 'Make', 'Model', 'DateTimeOriginal',
  'SubSecTimeOriginal', 'Orientation',
];

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

/** Reads the EXIF a check needs; a file without EXIF, or with absurd values, gives nulls, never an error. */
export async function readFrameExif(path: string): Promise<FrameExif> {
  let raw: Record<string, unknown>;
  try {
    raw = (await exifr.parse(path, { pick: tags, reviveValues: false, translateValues: false })) ?? {};
  } catch {
    raw = {};
  }
  const date = parseExifDate(raw.DateTimeOriginal, raw.SubSecTimeOriginal);
  const orientation = positive(raw.Orientation, 8);
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
  };
}
