/** Compares file names the way people count: "IMG_9.jpg" before "IMG_10.jpg", case-insensitively. */
export function compareNatural(a: string, b: string): number {
  const pa = a.toLowerCase().match(/\d+|\D+/g) ?? [];
  const pb = b.toLowerCase().match(/\d+|\D+/g) ?? [];
  for (let i = 0; i < Math.min(pa.length, pb.length); i++) {
    const x = pa[i], y = pb[i];
    const nx = /^\d/.test(x), ny = /^\d/.test(y);
    if (nx && ny) {
      const d = Number(x) - Number(y);
      if (d !== 0) return d;
      if (x.length !== y.length) return x.length - y.length;
    } else if (x !== y) return x < y ? -1 : 1;
  }
  return pa.length - pb.length || (a < b ? -1 : a > b ? 1 : 0);
}

/**
 * Shooting order: by capture time (milliseconds, null when unknown), frames without a time after
 * those with one, ties and unknowns by natural file-name order.
 */
export function shootingOrder<T extends { file: string; captureMs: number | null }>(frames: readonly T[]): T[] {
  return [...frames].sort((p, q) => {
    if (p.captureMs !== null && q.captureMs !== null && p.captureMs !== q.captureMs) return p.captureMs - q.captureMs;
    if (p.captureMs === null && q.captureMs !== null) return 1;
    if (p.captureMs !== null && q.captureMs === null) return -1;
    return compareNatural(p.file, q.file);
  });
}
