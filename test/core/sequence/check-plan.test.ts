import { describe, expect, it } from 'vitest';
import {
  bracketMinEvDiff, bracketMinOverlap, closingTurnDeg, estimatedTurnDeg, keepClosure, kindInRows, mayHaveClosed, nearFullTurnDeg, otherReferencePairs,
  rowClosures, rowOfStations, sameViewMaxShiftFraction, sameViewOtherExposure, sequenceExifFocal, settleStation, showsAnotherView, splitStation,
  stationPairs, tryRowClosure, tryTurnClosure,
} from '../../../src/core/sequence/check-plan.js';

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

describe('station planning', () => {
  it('plans each bracket frame with its reference in member order, then the neighbour pair from the previous reference', () => {
    expect(stationPairs([3, 4, 5], 4, 1)).toEqual([
      { i: 4, j: 3, kind: 'bracket' },
      { i: 4, j: 5, kind: 'bracket' },
      { i: 1, j: 4, kind: 'neighbour' },
    ]);
    expect(stationPairs([0, 1, 2], 0, null)).toEqual([{ i: 0, j: 1, kind: 'bracket' }, { i: 0, j: 2, kind: 'bracket' }]);
    expect(stationPairs([7], 7, 6)).toEqual([{ i: 6, j: 7, kind: 'neighbour' }]);
  });

  it('settles a whole group as planned, offsets from the reference', () => {
    const g = { members: [3, 4, 5], reference: 3, offsets: [0, -2, 2] };
    expect(settleStation(g, () => true)).toEqual({ members: [3, 4, 5], reference: 3, offsets: [0, -2, 2] });
  });

  it('drops frames out of play and takes the member nearest 0 EV as reference when the planned one is out', () => {
    const g = { members: [3, 4, 5, 6], reference: 3, offsets: [0, -1.5, 1, 3] };
    const s = settleStation(g, (m) => m !== 3);
    expect(s.members).toEqual([4, 5, 6]);
    expect(s.reference).toBe(5);
    expect(s.offsets).toEqual([-2.5, 0, 2]);
    // A tie goes to the first in shooting order.
    expect(settleStation({ members: [0, 1, 2], reference: 0, offsets: [0, 1, -1] }, (m) => m !== 0).reference).toBe(1);
  });

  it('gives unknown offsets where the frame or the reference has none, and nothing for a group all out', () => {
    expect(settleStation({ members: [0, 1, 2], reference: 0, offsets: [0, null, 2] }, () => true).offsets).toEqual([0, null, 2]);
    expect(settleStation({ members: [0, 1], reference: 0, offsets: [null, 2] }, () => true).offsets).toEqual([null, null]);
    expect(settleStation({ members: [0, 1], reference: 0, offsets: [0, 2] }, () => false)).toEqual({ members: [], reference: 0, offsets: [] });
  });

  it('keeps a group whole when no member shows another view', () => {
    const settled = { members: [3, 4, 5], reference: 4, offsets: [-2, 0, 2] };
    expect(splitStation(settled, [], 'exif')).toEqual([{ members: [3, 4, 5], reference: 4, offsets: [-2, 0, 2], groupedBy: 'exif' }]);
  });

  it('sets apart a member that shows another view as a station of its own, in shooting order', () => {
    const settled = { members: [3, 4, 5], reference: 4, offsets: [-2, 0, null] };
    expect(splitStation(settled, [3, 5], 'exif')).toEqual([
      { members: [3], reference: 3, offsets: [0], groupedBy: 'single' },
      { members: [4], reference: 4, offsets: [0], groupedBy: 'single' },
      { members: [5], reference: 5, offsets: [null], groupedBy: 'single' },
    ]);
    expect(splitStation({ members: [3, 4, 5], reference: 3, offsets: [0, 1, 2] }, [5], 'content')).toEqual([
      { members: [3, 4], reference: 3, offsets: [0, 1], groupedBy: 'content' },
      { members: [5], reference: 5, offsets: [0], groupedBy: 'single' },
    ]);
  });
});

describe('rows', () => {
  it('tells each station its row, -1 for a station in none', () => {
    expect(Array.from(rowOfStations([{ stations: [0, 1, 2] }, { stations: [4, 3] }], 6))).toEqual([0, 0, 0, 1, 1, -1]);
  });

  it('gives a closure pair to a row of three stations or more that comes most of the way round, last station to first', () => {
    // Six stations 60 degrees apart, each seeing 70 degrees: the row covers the whole turn.
    const full = [0, 1, 2, 3, 4, 5];
    const poses = full.map((s) => ({ station: s, yawDeg: s * 60 }));
    const wide = full.map(() => 70);
    expect(rowClosures([{ stations: full }], poses, wide)).toEqual([{ last: 5, first: 0, coveredDeg: 360 }]);
    // The same stations seeing 40 degrees each cover 240 degrees: short of most of a turn.
    expect(rowClosures([{ stations: full }], poses, full.map(() => 40))).toEqual([]);
  });

  it('gives none to a row of two stations, and judges each row by its own stations', () => {
    const poses = [0, 1, 2, 3, 4].map((s) => ({ station: s, yawDeg: s < 2 ? s * 180 : (s - 2) * 120 }));
    const hfov = [200, 200, 130, 130, 130];
    // Stations 0 and 1 cover the turn but are two; stations 2-4 at 120 degrees, 130 wide, cover it too.
    expect(rowClosures([{ stations: [0, 1] }, { stations: [2, 3, 4] }], poses, hfov)).toEqual([{ last: 4, first: 2, coveredDeg: 360 }]);
    // Three stations 90 degrees apart and 90 wide cover 270 degrees, short of the near-full-turn limit.
    const narrow = [0, 1, 2].map((s) => ({ station: s, yawDeg: s * 90 }));
    expect(rowClosures([{ stations: [0, 1, 2] }], narrow, [90, 90, 90])).toEqual([]);
  });
});
