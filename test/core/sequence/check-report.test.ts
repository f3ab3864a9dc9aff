import { describe, expect, it } from 'vitest';
import { frameMeasure, pairMeasure, skipsInOrder, stationMeasures, tiePointsAtFullResolution } from '../../../src/core/sequence/check-report.js';
import type { PairAnalysis } from '../../../src/core/pair/pair-analysis.js';

const matched: PairAnalysis = {
  matches: 400, inliers: 300, matchesInOverlap: 350, overlap: 0.4, homography: [1, 0, 10, 0, 1, 0, 0, 0, 1], rmsError: 0.5, evDiff: 0.1,
  tiePoints: new Float32Array(0), moved: [{ x: 10, y: 20, width: 30, height: 40 }], misfit: 0.2, parallax: false,
  sharpness: { byDirection: [0.9, 0.8, 0.7, 0.6], ratio: 0.75, blocks: 12 }, noModel: null,
};
const failed: PairAnalysis = {
  ...matched, inliers: 0, overlap: null, homography: null, rmsError: null, moved: null, misfit: null, parallax: null, sharpness: null, noModel: 'too few matches',
};

describe('pairMeasure', () => {
  it('scales analysis-pixel measures to full resolution and keeps the full-resolution model', () => {
    const h = Float64Array.of(1, 0, 40, 0, 1, 0, 0, 0, 1);
    const p = pairMeasure('a.jpg', 'b.jpg', 'neighbour', matched, { homography: h, scale: 4, shiftPx: null });
    expect(p).toMatchObject({ a: 'a.jpg', b: 'b.jpg', kind: 'neighbour', matches: 400, inliers: 300, overlap: 0.4, rmsError: 2, shiftPx: null, misfit: 0.2, parallax: false });
    expect(p.homography).toEqual([1, 0, 40, 0, 1, 0, 0, 0, 1]);
    expect(p.moved).toEqual([{ x: 40, y: 80, width: 120, height: 160 }]);
    expect('predictedOverlap' in p).toBe(false);
  });

  it('names the sharpness directions from the analysis order (horizontal, falling, vertical, rising)', () => {
    const p = pairMeasure('a', 'b', 'bracket', matched, { homography: null, scale: 1, shiftPx: 1.5 });
    expect(p.sharpnessByDirection).toEqual({ horizontal: 0.9, fallingDiagonal: 0.8, vertical: 0.7, risingDiagonal: 0.6 });
    expect(p.sharpnessRatio).toBe(0.75);
    expect(p.sharpnessBlocks).toBe(12);
    expect(p.shiftPx).toBe(1.5);
  });

  it('reports a predicted overlap only for a pair without a model', () => {
    expect(pairMeasure('a', 'b', 'neighbour', failed, { homography: null, scale: 2, shiftPx: null, predictedOverlap: 0.05 }).predictedOverlap).toBe(0.05);
    expect('predictedOverlap' in pairMeasure('a', 'b', 'neighbour', matched, { homography: null, scale: 2, shiftPx: null, predictedOverlap: 0.05 })).toBe(false);
    const none = pairMeasure('a', 'b', 'neighbour', failed, { homography: null, scale: 2, shiftPx: null });
    expect(none).toMatchObject({ homography: null, rmsError: null, moved: null, sharpnessRatio: null, sharpnessByDirection: null, sharpnessBlocks: null });
  });
});

describe('frameMeasure and stationMeasures', () => {
  const settings = { exposureTime: 0.01, fNumber: 8, iso: 100, evBias: 0, focalLength: 24, focalLength35: 35, whiteBalance: null, make: 'M', model: 'X' };

  it('reports a frame at full resolution with its EXIF', () => {
    const f = frameMeasure('a.jpg', { fullWidth: 6000, fullHeight: 4000, anWidth: 1500, anHeight: 1000, keypoints: 900, sharpness: 0.3, fingerprint: 'ab' }, { captureTime: null, settings });
    expect(f).toEqual({ file: 'a.jpg', width: 6000, height: 4000, captureTime: null, settings, sharpness: 0.3, keypoints: 900, fingerprint: 'ab' });
  });

  it('numbers the stations in order and names their frames', () => {
    const names = ['f0', 'f1', 'f2', 'f3'];
    const s = stationMeasures([{ members: [0, 1, 2], reference: 1, offsets: [-1, 0, 1], groupedBy: 'exif' }, { members: [3], reference: 3, offsets: [null], groupedBy: 'single' }], (k) => names[k]);
    expect(s).toEqual([
      { index: 0, frames: ['f0', 'f1', 'f2'], reference: 'f1', evOffsets: [-1, 0, 1], groupedBy: 'exif' },
      { index: 1, frames: ['f3'], reference: 'f3', evOffsets: [null], groupedBy: 'single' },
    ]);
  });
});

describe('skipsInOrder', () => {
  it('puts decoding skips in shooting order after the earlier ones, whatever order they came in', () => {
    const decode = [{ k: 5, skip: 'e' }, { k: 1, skip: 'b' }, { k: 3, skip: 'c' }];
    expect(skipsInOrder(['x', 'y'], decode)).toEqual(['x', 'y', 'b', 'c', 'e']);
    // The list given is left as it was.
    expect(decode.map((d) => d.k)).toEqual([5, 1, 3]);
  });
});

describe('tiePointsAtFullResolution', () => {
  it('maps each frame by its own scale with pixel centres at integers (x_full = (x_an + 0.5) * s - 0.5, resolution.ts)', () => {
    const a = { fullWidth: 6000, fullHeight: 4000, anWidth: 1500, anHeight: 1000, keypoints: 0, sharpness: 0, fingerprint: '' };
    const b = { ...a, fullWidth: 3000, fullHeight: 2000 };
    const full = tiePointsAtFullResolution(Float32Array.of(0, 0, 0, 0, 10, 20, 30, 40), a, b);
    // a: scale 4, offset 1.5; b: scale 2, offset 0.5.
    expect(Array.from(full)).toEqual([1.5, 1.5, 0.5, 0.5, 41.5, 81.5, 60.5, 80.5]);
  });
});
