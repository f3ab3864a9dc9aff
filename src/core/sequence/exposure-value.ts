import type { FrameSettings } from './report.js';

/**
 * How much light a frame's settings let in, in EV relative to 1 s at f/1 and ISO 100 (higher is
 * brighter): log2(t) - log2(N^2) + log2(ISO / 100), the negative of the APEX exposure value
 * EV100 = log2(N^2 / t) - log2(ISO / 100) (APEX, ISO 2720; from memory). Null when a setting is missing.
 */
export function exposureOf(s: FrameSettings): number | null {
  if (s.exposureTime === null) return null;
  const n = s.fNumber ?? null;
  const iso = s.iso ?? null;
  let ev = Math.log2(s.exposureTime);
  if (n !== null) ev -= 2 * Math.log2(n);
  if (iso !== null) ev += Math.log2(iso / 100);
  return ev;
}
