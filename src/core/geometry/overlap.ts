import { invert } from './homography.js';
import type { Polygon } from './polygon.js';
import { clipConvex, frameRectangle, polygonArea, projectPolygon } from './polygon.js';

export interface OverlapRegions {
  /** The part of frame a that frame b also sees, in a's pixels. */
  readonly inA: Polygon;
  /** The part of frame b that frame a also sees, in b's pixels. */
  readonly inB: Polygon;
  /** min(area(inA) / area(a), area(inB) / area(b)), 0..1. */
  readonly overlap: number;
}

/**
 * Overlap of two frames related by h (a -> b): min(area(A inside H^-1 B) / area(A),
 * area(B inside H A) / area(B)), by convex polygon clipping of the frame rectangles.
 */
export function overlapRegions(h: ArrayLike<number>, wa: number, ha: number, wb: number, hb: number): OverlapRegions {
  const rectA = frameRectangle(wa, ha);
  const rectB = frameRectangle(wb, hb);
  const hInv = invert(h);
  const inB = clipConvex(projectPolygon(h, rectA), rectB);
  const inA = hInv ? clipConvex(projectPolygon(hInv, rectB), rectA) : [];
  const fa = polygonArea(inA) / (wa * ha);
  const fb = polygonArea(inB) / (wb * hb);
  return { inA, inB, overlap: Math.max(0, Math.min(1, fa, fb)) };
}

/** True when (x, y) lies inside the convex polygon p (either orientation). */
export function insideConvex(p: Polygon, x: number, y: number): boolean {
  const n = p.length / 2;
  if (n < 3) return false;
  let sign = 0;
  for (let i = 0; i < n; i++) {
    const j = (i + 1) % n;
    const c = (p[2 * j] - p[2 * i]) * (y - p[2 * i + 1]) - (p[2 * j + 1] - p[2 * i + 1]) * (x - p[2 * i]);
    if (c !== 0) {
      if (sign === 0) sign = c > 0 ? 1 : -1;
      else if (c > 0 !== sign > 0) return false;
    }
  }
  return true;
}
