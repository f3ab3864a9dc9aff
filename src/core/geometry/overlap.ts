import { invert } from './homography.js';
import type { Polygon } from '../numeric/polygon.js';
import { clipConvex, frameRectangle, polygonArea, projectPolygon } from '../numeric/polygon.js';

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
