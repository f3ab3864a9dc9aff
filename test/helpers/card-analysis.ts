// A card of three sequences and two single shots, measured by hand (no check can split a card into
// sequences yet): sequence 1, four single frames with one neighbour pair of 15 % overlap; sequence 2,
// two stations of three bracket frames, all sound, after a pause; sequence 3, three frames at another
// focal length with one pair of 25 % overlap. Each sequence's own measurements are also given as the
// analysis of a folder holding that sequence alone, to compare with.
import type { Analysis, FrameMeasure, PairMeasure, SequenceAnalysis, StationMeasure } from '../../src/core/sequence/report.js';

const W = 3000, H = 2000;

const frame = (file: string, time: string, evBias = 0, focal = 24): FrameMeasure => ({
  file, width: W, height: H, captureTime: `2026-06-14T${time}.000`,
  settings: { exposureTime: (1 / 250) * 2 ** evBias, fNumber: 8, iso: 100, evBias, focalLength: focal, focalLength35: focal, whiteBalance: 'auto', make: 'Maker', model: 'Body' },
  sharpness: 2, keypoints: 1500,
});

/** b sees a moved left by W (1 - overlap) px. */
const pair = (a: string, b: string, overlap: number, kind: PairMeasure['kind'] = 'neighbour'): PairMeasure => ({
  a, b, kind, matches: 320, inliers: kind === 'bracket' ? 420 : 210, matchesInOverlap: 250, overlap,
  homography: kind === 'bracket' ? [1, 0, 1, 0, 1, 0, 0, 0, 1] : [1, 0, -W * (1 - overlap), 0, 1, 0, 0, 0, 1],
  evDiff: 0.05, rmsError: 0.7, shiftPx: kind === 'bracket' ? 1 : null,
});

const single = (files: string[]): StationMeasure[] => files.map((f, i) => ({ index: i, frames: [f], reference: f, evOffsets: [0], groupedBy: 'single' as const }));

const one: SequenceAnalysis = {
  index: 1,
  splitBy: [],
  frames: ['S1_01.jpg', 'S1_02.jpg', 'S1_03.jpg', 'S1_04.jpg'].map((f, i) => frame(f, `10:00:${String(10 * i).padStart(2, '0')}`)),
  stations: single(['S1_01.jpg', 'S1_02.jpg', 'S1_03.jpg', 'S1_04.jpg']),
  pairs: [pair('S1_01.jpg', 'S1_02.jpg', 0.42), pair('S1_02.jpg', 'S1_03.jpg', 0.15), pair('S1_03.jpg', 'S1_04.jpg', 0.4)],
  sweepDeg: null,
  geometry: null,
};

const bracketFiles = ['S2_01.jpg', 'S2_02.jpg', 'S2_03.jpg', 'S2_04.jpg', 'S2_05.jpg', 'S2_06.jpg'];
const two: SequenceAnalysis = {
  index: 2,
  splitBy: [{ by: 'pause', seconds: 560, rhythmSeconds: 10 }],
  frames: bracketFiles.map((f, i) => frame(f, `10:10:${String(2 * i).padStart(2, '0')}`, [0, -2, 2][i % 3])),
  stations: [
    { index: 0, frames: bracketFiles.slice(0, 3), reference: 'S2_01.jpg', evOffsets: [0, -2, 2], groupedBy: 'exif' },
    { index: 1, frames: bracketFiles.slice(3), reference: 'S2_04.jpg', evOffsets: [0, -2, 2], groupedBy: 'exif' },
  ],
  pairs: [
    pair('S2_01.jpg', 'S2_02.jpg', 0.99, 'bracket'), pair('S2_01.jpg', 'S2_03.jpg', 0.99, 'bracket'),
    pair('S2_04.jpg', 'S2_05.jpg', 0.99, 'bracket'), pair('S2_04.jpg', 'S2_06.jpg', 0.99, 'bracket'),
    pair('S2_01.jpg', 'S2_04.jpg', 0.45),
  ],
  sweepDeg: null,
  geometry: null,
};

const three: SequenceAnalysis = {
  index: 3,
  splitBy: [{ by: 'focal-length', fromMm: 24, toMm: 35 }, { by: 'content', after: 'S2_06.jpg', before: 'S3_01.jpg' }],
  frames: ['S3_01.jpg', 'S3_02.jpg', 'S3_03.jpg'].map((f, i) => frame(f, `10:11:${String(20 + 8 * i)}`, 0, 35)),
  stations: single(['S3_01.jpg', 'S3_02.jpg', 'S3_03.jpg']),
  pairs: [pair('S3_01.jpg', 'S3_02.jpg', 0.25), pair('S3_02.jpg', 'S3_03.jpg', 0.5)],
  sweepDeg: null,
  geometry: null,
};

export const cardSequencesMeasured: readonly SequenceAnalysis[] = [one, two, three];

/** The folder's analysis as the check would hand it over: all frames, stations counted across the card. */
export const cardAnalysis: Analysis = {
  folder: '/media/card/DCIM/100TEST',
  frames: [...one.frames, ...two.frames, ...three.frames],
  stations: [one, two, three].flatMap((q, k) => q.stations.map((s) => ({ ...s, index: s.index + [0, 4, 6][k] }))),
  pairs: [...one.pairs, ...two.pairs, ...three.pairs],
  skipped: [{ file: 'clip.mp4', code: 'not-an-image', reason: 'not an image' }],
  sweepDeg: null,
  geometry: null,
  sequences: [one, two, three],
  singleShots: [
    { file: 'S0_01.jpg', captureTime: '2026-06-14T09:41:05.000', reason: 'shares nothing with the frames before or after it' },
    { file: 'S4_01.jpg', captureTime: null, reason: 'shares nothing with the frames before or after it' },
  ],
};

/** A folder holding sequence `k` (its index) alone, as checking it on its own would measure it. */
export function aloneInFolder(index: number): Analysis {
  const q = cardSequencesMeasured.find((s) => s.index === index);
  if (!q) throw new Error(`no sequence ${index}`);
  return { folder: cardAnalysis.folder, frames: q.frames, stations: q.stations, pairs: q.pairs, skipped: [], sweepDeg: q.sweepDeg, geometry: q.geometry };
}
