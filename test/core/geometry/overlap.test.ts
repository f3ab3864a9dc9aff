// Overlap by convex polygon clipping (Sutherland & Hodgman, "Reentrant polygon clipping", CACM
// 1974), checked against areas worked out by hand.
import { describe, expect, it } from 'vitest';
import { overlapRegions } from '../../../src/core/geometry/overlap.js';
import { clipConvex, polygonArea, projectPolygon } from '../../../src/core/numeric/polygon.js';

describe('overlap of two frames', () => {
  it('is 1 for the identity and the shifted share for a translation', () => {
    expect(overlapRegions([1, 0, 0, 0, 1, 0, 0, 0, 1], 400, 300, 400, 300).overlap).toBeCloseTo(1, 10);
    // b sees a moved 100 px left: 300 of 400 columns are shared.
    expect(overlapRegions([1, 0, -100, 0, 1, 0, 0, 0, 1], 400, 300, 400, 300).overlap).toBeCloseTo(0.75, 10);
    expect(overlapRegions([1, 0, -500, 0, 1, 0, 0, 0, 1], 400, 300, 400, 300).overlap).toBe(0);
  });

  it('takes the smaller share when the frames differ in scale', () => {
    // b is a at half size, inside b's frame: all of a is in b, a covers a quarter of b.
    const r = overlapRegions([0.5, 0, 0, 0, 0.5, 0, 0, 0, 1], 400, 300, 400, 300);
    expect(r.overlap).toBeCloseTo(0.25, 2);
  });

  it('clips a polygon against the half-plane in front of the camera before projecting', () => {
    // A strong perspective whose horizon (w = 0) crosses the frame at x = 200.
    const h = [1, 0, 0, 0, 1, 0, -0.005, 0, 1];
    const p = projectPolygon(h, [0, 0, 400, 0, 400, 300, 0, 300]);
    for (let i = 0; i < p.length; i++) expect(Number.isFinite(p[i])).toBe(true);
    for (let i = 0; i < p.length; i += 2) expect(p[i]).toBeGreaterThanOrEqual(0);
  });

  it('intersects convex polygons to the right area', () => {
    const square = [0, 0, 10, 0, 10, 10, 0, 10];
    // A diamond through the midpoints of the square's sides: half the square.
    expect(polygonArea(clipConvex(square, [5, 0, 10, 5, 5, 10, 0, 5]))).toBeCloseTo(50, 10);
    // The square shifted by (5, 5): a quarter of it.
    expect(polygonArea(clipConvex(square, [5, 5, 15, 5, 15, 15, 5, 15]))).toBeCloseTo(25, 10);
    expect(polygonArea(clipConvex(square, [20, 20, 30, 20, 30, 30]))).toBe(0);
  });
});
