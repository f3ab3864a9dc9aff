// Coverage of the horizon and of pitch by frames' fields of view: arithmetic on arcs, checked on
// cases worked by hand, and the field of view against the pinhole formula 2 atan(w / 2f).
import { describe, expect, it } from 'vitest';
import { circleCoverage, fieldOfViewDeg, intervalCoverageDeg } from '../../../src/core/geometry/coverage.js';

describe('coverage', () => {
  it('gives the field of view of a 36 mm side at 18 mm as 90 degrees', () => {
    expect(fieldOfViewDeg(36, 18)).toBeCloseTo(90, 9);
  });

  it('covers the full circle with twelve 54-degree frames 30 degrees apart, and says where it does not with eleven', () => {
    const full = circleCoverage(Array.from({ length: 12 }, (_, k) => 30 * k + 7), new Array(12).fill(54));
    expect(full.coveredDeg).toBeCloseTo(360, 9);
    expect(full.gaps).toEqual([]);
    const missing = circleCoverage(Array.from({ length: 11 }, (_, k) => 30 * k + 7), new Array(11).fill(54));
    // From 7 + 300 + 27 = 334 to 360 + 7 - 27 = 340: six degrees uncovered.
    expect(missing.coveredDeg).toBeCloseTo(354, 9);
    expect(missing.gaps).toHaveLength(1);
    expect(missing.gaps[0].fromDeg % 360).toBeCloseTo(334, 9);
    expect(missing.gaps[0].toDeg % 360).toBeCloseTo(340, 9);
  });

  it('adds up a partial sweep and its holes across the 0/360 seam', () => {
    const c = circleCoverage([350, 20, 100], [40, 40, 20]);
    // 330..370 and 0..40 merge into 330..40 (70 degrees); 90..110 (20); gaps 40..90 and 110..330.
    expect(c.coveredDeg).toBeCloseTo(90, 9);
    expect(c.gaps.map((g) => Math.round(g.toDeg - g.fromDeg)).sort((a, b) => a - b)).toEqual([50, 220]);
  });

  it('adds up pitch intervals, clipped at the poles', () => {
    expect(intervalCoverageDeg([0, 30], [40, 40])).toBeCloseTo(70, 9);
    expect(intervalCoverageDeg([0, 60], [40, 40])).toBeCloseTo(80, 9);
    expect(intervalCoverageDeg([80], [40])).toBeCloseTo(30, 9);
  });
});
