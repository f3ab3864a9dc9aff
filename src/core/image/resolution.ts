/**
 * Maps between analysis pixels and full-resolution pixels of one frame, pixel centres at integers:
 * x_full = (x_an + 0.5) * sx - 0.5.
 */
export function analysisToFull(fullW: number, fullH: number, anW: number, anH: number): Float64Array {
  const sx = fullW / anW, sy = fullH / anH;
  return Float64Array.of(sx, 0, 0.5 * sx - 0.5, 0, sy, 0.5 * sy - 0.5, 0, 0, 1);
}

export function fullToAnalysis(fullW: number, fullH: number, anW: number, anH: number): Float64Array {
  const sx = anW / fullW, sy = anH / fullH;
  return Float64Array.of(sx, 0, 0.5 * sx - 0.5, 0, sy, 0.5 * sy - 0.5, 0, 0, 1);
}
