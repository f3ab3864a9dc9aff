import { describe, expect, it } from 'vitest';
import {
  bracketMinEvDiff, bracketMinOverlap, closingTurnDeg, estimatedTurnDeg, keepClosure, kindInRows, mayHaveClosed, nearFullTurnDeg, otherReferencePairs,
  sameViewMaxShiftFraction, sameViewOtherExposure, sequenceExifFocal, showsAnotherView, tryRowClosure, tryTurnClosure,
} from '../src/core/check-plan.js';

/** A pure translation by (tx, ty) as a row-major 3x3 homography. */
const shift = (tx: number, ty: number): Float64Array => Float64Array.of(1, 0, tx, 0, 1, ty, 0, 0, 1);

describe('the content-grouping rule (frames without EXIF exposure data)', () => {
  const w = 1000, h = 600;
  const edge = sameViewMaxShiftFraction * w;

  it('groups two frames that barely moved and differ in exposure', () => {
    expect(sameViewOtherExposure(shift(edge * 0.5, 0), w, h, 1)).toBe(true);
    expect(sameViewOtherExposure(shift(0, 0), w, h, -(bracketMinEvDiff + 0.01))).toBe(true);
  });

  it('keeps apart frames that moved by the shift limit or more, whatever their exposure', () => {
    expect(sameViewOtherExposure(shift(edge, 0), w, h, 2)).toBe(false);
    expect(sameViewOtherExposure(shift(0, edge * 1.2), w, h, 2)).toBe(false);
  });

  it('keeps apart frames of one exposure, frames without an EV difference, and pairs without a model', () => {
    expect(sameViewOtherExposure(shift(0, 0), w, h, bracketMinEvDiff)).toBe(false);
    expect(sameViewOtherExposure(shift(0, 0), w, h, null)).toBe(false);
    expect(sameViewOtherExposure(null, w, h, 2)).toBe(false);
  });

  it('measures the shift at the corners: a small turn about the centre moves the corners past the limit', () => {
    // A rotation by 10 degrees about the frame centre leaves the centre in place but moves each corner by about 101 px (2 r sin 5 deg, r = 582 px).
    const a = (10 * Math.PI) / 180, cx = (w - 1) / 2, cy = (h - 1) / 2, c = Math.cos(a), s = Math.sin(a);
    const turn = Float64Array.of(c, -s, cx - c * cx + s * cy, s, c, cy - s * cx - c * cy, 0, 0, 1);
    expect(sameViewOtherExposure(turn, w, h, 2)).toBe(false);
  });
});

describe('a bracket frame that shows another view', () => {
  it('is one whose pair with the reference matched with less than the bracket overlap', () => {
    expect(showsAnotherView({ homography: shift(0, 0), overlap: bracketMinOverlap - 0.1 })).toBe(true);
    expect(showsAnotherView({ homography: shift(0, 0), overlap: bracketMinOverlap })).toBe(false);
  });

  it('is not told by a pair without a model or without an overlap (the content cannot tell)', () => {
    expect(showsAnotherView({ homography: null, overlap: 0.1 })).toBe(false);
    expect(showsAnotherView({ homography: shift(0, 0), overlap: null })).toBe(false);
  });
});

describe('closure policy', () => {
  it('tries the turn closure from three stations when the chain covers most of a turn or is unknown', () => {
    expect(tryTurnClosure(3, nearFullTurnDeg)).toBe(true);
    expect(tryTurnClosure(3, null)).toBe(true);
    expect(tryTurnClosure(3, nearFullTurnDeg - 1)).toBe(false);
    expect(tryTurnClosure(2, 359)).toBe(false);
  });

  it('keeps a closure pair that matched, or that failed where the turn should close', () => {
    expect(keepClosure(true, null)).toBe(true);
    expect(keepClosure(true, 10)).toBe(true);
    expect(keepClosure(false, closingTurnDeg)).toBe(true);
    expect(keepClosure(false, closingTurnDeg - 1)).toBe(false);
    expect(keepClosure(false, null)).toBe(false);
  });

  it('tries a row closure only for a row of three stations or more that comes most of the way round', () => {
    expect(tryRowClosure(3, nearFullTurnDeg)).toBe(true);
    expect(tryRowClosure(2, 360)).toBe(false);
    expect(tryRowClosure(8, nearFullTurnDeg - 1)).toBe(false);
  });

  it('tries the closure on a guided retry from the same near-full-turn limit', () => {
    expect(mayHaveClosed(nearFullTurnDeg)).toBe(true);
    expect(mayHaveClosed(nearFullTurnDeg - 0.5)).toBe(false);
  });
});

describe('row policy', () => {
  it('makes a neighbour or closure pair between two rows an other pair, and leaves the rest', () => {
    expect(kindInRows('neighbour', 0, 1)).toBe('other');
    expect(kindInRows('closure', 1, 0)).toBe('other');
    expect(kindInRows('neighbour', 1, 1)).toBe('neighbour');
    expect(kindInRows('closure', 0, 0)).toBe('closure');
    expect(kindInRows('bracket', 0, 1)).toBe('bracket');
    expect(kindInRows('other', 0, 0)).toBe('other');
  });
});

describe('the pair plan: further pairs of reference frames', () => {
  it('lists every pair of non-neighbouring stations in station order, leaving out planned pairs in either order', () => {
    // References of five stations (frame indices); the closure pair 12 -> 0 is planned already.
    const refs = [0, 3, 6, 9, 12];
    const planned = [{ i: 0, j: 3 }, { i: 3, j: 6 }, { i: 6, j: 9 }, { i: 9, j: 12 }, { i: 12, j: 0 }, { i: 6, j: 7 }];
    expect(otherReferencePairs(refs, planned)).toEqual([[0, 6], [0, 9], [3, 9], [3, 12], [6, 12]]);
  });

  it('has no candidates for two stations or fewer', () => {
    expect(otherReferencePairs([4, 8], [])).toEqual([]);
    expect(otherReferencePairs([], [])).toEqual([]);
  });
});

describe('the turn estimate for a chain with gaps', () => {
  it('adds the median measured turn for each failed pair and one frame width', () => {
    // Measured 30, 40, 35 (median 35), two pairs failed, a frame 50 deg wide: 105 + 70 + 50.
    expect(estimatedTurnDeg([30, 40, 35], 2, 50)).toBe(225);
  });

  it('adds nothing for failed pairs when no turn was measured', () => {
    expect(estimatedTurnDeg([], 3, 60)).toBe(60);
  });
});

describe('one EXIF focal length for the set', () => {
  it('takes the median 35 mm equivalent, in pixels of the long side over the 36 mm frame width', () => {
    expect(sequenceExifFocal([24, 35, 35], 6000, 4000)).toEqual({ exifFocal35mm: 35, exifFocalPx: (35 / 36) * 6000 });
    expect(sequenceExifFocal([50], 2000, 3000).exifFocalPx).toBeCloseTo((50 / 36) * 3000, 9);
  });

  it('gives none when any station lacks it', () => {
    expect(sequenceExifFocal([35, null, 35], 6000, 4000)).toEqual({ exifFocal35mm: null, exifFocalPx: null });
  });
});
