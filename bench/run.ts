// npm run bench: per-stage times of the engine on one frame of about 1500x1000 and one pair, with
// the same stages run by OpenCV's JavaScript build beside it, as ratios from this one run. Our
// detector runs with the check's settings (corners on the halved frame).
// Speed targets (issue 2, this 2-core machine): detection + description under 35 ms per frame,
// matching + RANSAC under 15 ms per pair, and faster than the OpenCV.js reference on each stage.
import { adaptiveNonMaximalSuppression } from '../src/core/features/anms.js';
import { defaultCandidateParams, findCandidates } from '../src/core/features/corners.js';
import { detectAndDescribe } from '../src/core/features/features.js';
import { harrisResponse } from '../src/core/features/harris.js';
import { fitHomography } from '../src/core/geometry/homography-estimator.js';
import { matchDescriptors } from '../src/core/features/match.js';
import { correspondencesOf, estimatePairGeometry } from '../src/core/pair/pair-geometry.js';
import { buildPyramid } from '../src/core/features/pyramid.js';
import { createScratchPool } from '../src/core/image/scratch.js';
import { refineTiePoints } from '../src/core/geometry/tie-point-refine.js';
import { checkFeatureParams as params } from '../src/core/pair/pair-analysis.js';
import { meanCornerError } from '../tools/images.js';
import { loadOpenCV } from '../tools/opencv.js';
import { benchPair } from './frames.js';
import { cvDetect, cvFree, cvHomography, cvMatch } from './opencv-pipeline.js';

const repeats = Number(process.env.BENCH_REPEATS ?? 15);

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[s.length >> 1];
}

function time<T>(fn: () => T): [T, number] {
  const t = performance.now();
  const r = fn();
  return [r, performance.now() - t];
}

const { a, b, truth, label } = await benchPair();
const { cv } = await loadOpenCV();
const pool = createScratchPool();

// Warm up both sides so that the JIT and the wasm module are settled before timing.
for (let i = 0; i < 3; i++) {
  estimatePairGeometry(detectAndDescribe(a, params, pool), detectAndDescribe(b, params, pool));
  const fa = cvDetect(cv, a), fb = cvDetect(cv, b);
  cvHomography(cv, cvMatch(cv, fa, fb));
  cvFree(fa);
  cvFree(fb);
}

const stages: Record<string, number[]> = {};
const record = (k: string, ms: number): void => {
  (stages[k] ??= []).push(ms);
};
let oursError = NaN, cvError = NaN, oursInliers = 0, cvInliers = 0;
for (let r = 0; r < repeats; r++) {
  // Ours, stage by stage on frame a (the same work detectAndDescribe does).
  const [levels, tPyr] = time(() => buildPyramid(a, params.pyramidLevels, params.pyramidStep, pool, params.halvings));
  record('ours: pyramid', tPyr);
  let tHarris = 0, tCand = 0, tAnms = 0;
  for (const l of levels) {
    const resp = pool.float32('benchResponse', l.width * l.height);
    tHarris += time(() => harrisResponse(l, resp, pool))[1];
    const [c, tc] = time(() => findCandidates(resp, l.width, l.height, defaultCandidateParams, pool, 7000));
    tCand += tc;
    tAnms += time(() => adaptiveNonMaximalSuppression(c, 700, l.width, l.height))[1];
  }
  record('ours: Harris response', tHarris);
  record('ours: maxima + threshold', tCand);
  record('ours: ANMS', tAnms);
  const [fa, tDetect] = time(() => detectAndDescribe(a, params, pool));
  record('ours: detect + describe (total)', tDetect);
  const fb = detectAndDescribe(b, params, pool);
  const [m, tMatch] = time(() => matchDescriptors(fa.descriptors, fb.descriptors));
  record('ours: match', tMatch);
  const c = correspondencesOf(fa, fb, m);
  const [fit, tFit] = time(() => fitHomography(c));
  record('ours: RANSAC + refit + LM', tFit);
  record('ours: match + RANSAC', tMatch + tFit);
  if (fit) {
    const idx: number[] = [];
    for (let i = 0; i < c.count; i++) if (fit.inliers[i]) idx.push(i);
    const [, tRefine] = time(() => refineTiePoints(a, b, fit.homography, Float64Array.from(idx, (i) => c.ax[i]), Float64Array.from(idx, (i) => c.ay[i])));
    record('ours: refine tie points on pixels', tRefine);
  }
  if (fit) {
    oursError = meanCornerError(fit.homography, truth, a.width, a.height);
    oursInliers = fit.inlierCount;
  }

  const [ca, tcd] = time(() => cvDetect(cv, a));
  record('OpenCV: ORB detect + compute', tcd);
  const cb = cvDetect(cv, b);
  const [cm, tcm] = time(() => cvMatch(cv, ca, cb));
  record('OpenCV: BF Hamming + ratio', tcm);
  const [ch, tch] = time(() => cvHomography(cv, cm));
  record('OpenCV: findHomography RANSAC', tch);
  record('OpenCV: match + RANSAC', tcm + tch);
  if (ch.h) {
    cvError = meanCornerError(ch.h, truth, a.width, a.height);
    cvInliers = ch.inliers;
  }
  cvFree(ca);
  cvFree(cb);
}

const med = (k: string): number => median(stages[k]);
console.log(`Seamscout engine benchmark, ${new Date().toISOString().slice(0, 10)}, node ${process.version}, ${repeats} repeats (median)`);
console.log(`frames: ${label}, ${a.width}x${a.height}`);
console.log('');
for (const k of Object.keys(stages)) console.log(`${k.padEnd(34)} ${med(k).toFixed(1).padStart(7)} ms`);
console.log('');
const ratio = (x: string, y: string): string => (med(x) / med(y)).toFixed(2);
console.log(`detect + describe: ours / OpenCV = ${ratio('ours: detect + describe (total)', 'OpenCV: ORB detect + compute')}  (target: under 35 ms and below 1)`);
console.log(`match + RANSAC:    ours / OpenCV = ${ratio('ours: match + RANSAC', 'OpenCV: match + RANSAC')}  (target: under 15 ms and below 1)`);
console.log(`accuracy against the known homography: ours ${oursError.toFixed(3)} px (${oursInliers} inliers), OpenCV ${cvError.toFixed(3)} px (${cvInliers} inliers)`);
