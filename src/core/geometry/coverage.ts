/**
 * How much of the view around the camera a set of frames covers, from where each station points
 * and the frames' fields of view.
 */

/** Field of view across a side of `sidePx` pixels at focal length `focalPx`, in degrees. */
export function fieldOfViewDeg(sidePx: number, focalPx: number): number {
  return (2 * Math.atan(sidePx / (2 * focalPx)) * 180) / Math.PI;
}

/** A stretch of the horizon not covered by any frame, in degrees of yaw (from < to, to may pass 360). */
export interface CoverageGap {
  readonly fromDeg: number;
  readonly toDeg: number;
}

/**
 * Degrees of the full circle covered by arcs of the given centres and widths (degrees), and the
 * uncovered stretches between them. A full circle is 360 with no gaps.
 */
export function circleCoverage(centresDeg: readonly number[], widthsDeg: readonly number[]): { coveredDeg: number; gaps: CoverageGap[] } {
  if (centresDeg.length === 0) return { coveredDeg: 0, gaps: [] };
  const base = centresDeg.map((c, k) => {
    const w = Math.min(360, Math.max(0, widthsDeg[k]));
    const start = (((c - w / 2) % 360) + 360) % 360;
    return [start, start + w] as const;
  });
  // One turn from the earliest start, with every arc also a turn earlier, so that arcs wrapping
  // past 360 cover the beginning of the window too.
  const origin = Math.min(...base.map(([s0]) => s0));
  const end = origin + 360;
  const all = [...base, ...base.map(([s0, e0]) => [s0 - 360, e0 - 360] as const)].sort((p, q) => p[0] - q[0]);
  const gaps: CoverageGap[] = [];
  let covered = 0, reach = origin;
  for (const [s0, e0] of all) {
    if (e0 <= reach) continue;
    const from = Math.max(s0, reach);
    if (from > reach && reach < end) gaps.push({ fromDeg: reach, toDeg: Math.min(from, end) });
    const to = Math.min(e0, end);
    if (to > Math.max(from, reach)) covered += to - Math.max(from, reach);
    reach = Math.max(reach, e0);
    if (reach >= end) break;
  }
  if (reach < end) gaps.push({ fromDeg: reach, toDeg: end });
  return { coveredDeg: Math.min(360, covered), gaps: gaps.filter((g) => g.toDeg - g.fromDeg > 1e-9) };
}

/** Degrees of a line covered by intervals of the given centres and widths (pitch: -90 to 90). */
export function intervalCoverageDeg(centresDeg: readonly number[], widthsDeg: readonly number[], lo = -90, hi = 90): number {
  const iv = centresDeg.map((c, k) => [Math.max(lo, c - widthsDeg[k] / 2), Math.min(hi, c + widthsDeg[k] / 2)] as const).filter(([a, b]) => b > a).sort((p, q) => p[0] - q[0]);
  let covered = 0, start = -Infinity, end = -Infinity;
  for (const [a, b] of iv) {
    if (a > end) {
      if (end > start) covered += end - start;
      start = a;
      end = b;
    } else end = Math.max(end, b);
  }
  if (end > start) covered += end - start;
  return covered;
}
