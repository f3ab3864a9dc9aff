/**
 * The lens as the check measured it over the sequence, in a photographer's words: the focal length
 * as a 35 mm equivalent beside what EXIF says, and the radial distortion as the share by which it
 * moves the frame's corner toward or away from the centre (how distortion is commonly quoted, in
 * per cent; common practice).
 */
import type { Report } from './report.js';
import { millimetres } from './number-words.js';


/** Below this share at the corner (half a per cent) distortion is not worth a word. */
const negligibleCornerShare = 0.005;

/** How far the lens moves the frame's corner, as a share of its distance from the centre: negative for barrel, positive for pincushion. */
export function cornerDistortion(width: number, height: number, focalPx: number, d: { readonly k1: number; readonly k2: number }): number {
  const r2 = ((width / 2) ** 2 + (height / 2) ** 2) / focalPx ** 2;
  return r2 * (d.k1 + d.k2 * r2);
}

/** "focal length 28.7 mm (35 mm equivalent; EXIF says 28 mm), barrel distortion of 8.3 % at the corners (...)", or null without a lens measured. */
export function lensSentence(report: Report): string | null {
  const g = report.geometry;
  const frame = report.frames[0];
  if (!g || g.focal35mm === undefined || !frame) return null;
  const corner = g.distortion ? cornerDistortion(frame.width, frame.height, g.focalPx, g.distortion) : 0;
  const exif = g.exifFocal35mm ? `; EXIF says ${millimetres(g.exifFocal35mm)}` : '';
  const bend =
    Math.abs(corner) < negligibleCornerShare
      ? 'no distortion to speak of'
      : `${corner < 0 ? 'barrel' : 'pincushion'} distortion of ${(100 * Math.abs(corner)).toFixed(1)} % at the corners (taken out before the pairs were judged)`;
  return `focal length ${millimetres(g.focal35mm)} (35 mm equivalent${exif}), ${bend}`;
}
