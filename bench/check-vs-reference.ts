// The whole check of 24 frames of 24 MP side by side in one run (performance issue):
// 1. the decode floor: sharp decoding every frame to the analysis size, one after another, one thread;
// 2. the check as a user runs it (`seamscout check --no-cache`, threads and all), in a child;
// 3. a reference pipeline from OpenCV's JavaScript build (ORB with 2000 features, brute-force
//    Hamming with Lowe's ratio test, findHomography RANSAC) on the same decoded images and pairs.
// Prints wall times, stages, the ratios check/floor and check/reference, and the accuracy of both
// against the generator's truth (mean corner error at full resolution, overlap error).
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { DemoTruth } from '../src/core/demo/demo-truth.js';
import { demoTruthFile } from '../src/core/demo/demo-truth.js';
import { invert, normalise } from '../src/core/geometry/homography.js';
import { overlapRegions } from '../src/core/geometry/overlap.js';
import type { Report } from '../src/core/sequence/report.js';
import { defaultMaxSide } from '../src/main/check.js';
import { meanCornerError } from '../tools/images.js';
import { loadOpenCV } from '../tools/opencv.js';
import { tempDir } from '../tools/paths.js';
import { cvDetect, cvFree, cvHomography, cvMatch } from './opencv-pipeline.js';
import { shortSweep } from './sequences.js';
import { checkInChild, decodeAllCores, decodeFloor, framesOf } from './whole-check.js';

const maxSide = Number(process.env.BENCH_SIZE ?? defaultMaxSide);
const folder = await shortSweep();
const truth = JSON.parse(readFileSync(join(folder, demoTruthFile), 'utf8')) as DemoTruth;
const files = framesOf(folder);
const { width: W, height: H } = truth.camera;

function truthOf(a: string, b: string): { homography: number[]; overlap: number } {
  const t = truth.pairs.find((q) => q.a === a && q.b === b);
  if (t) return t;
  const r = truth.pairs.find((q) => q.a === b && q.b === a)!;
  return { homography: Array.from(normalise(invert(r.homography)!)), overlap: r.overlap };
}

// 1. The decode floor.
const { seconds: floor, images: decoded } = await decodeFloor(folder, maxSide);

const allCores = await decodeAllCores(folder, maxSide);

// 2. The check, as the command line runs it.
const reportFile = join(tempDir(), 'report.json');
const { seconds: check, peakMiB: peak, status, firstPairSeconds } = checkInChild(folder, ['--size', String(maxSide), '--json', reportFile]);
const report = JSON.parse(readFileSync(reportFile, 'utf8')) as Report;
const pairs = report.pairs.filter((p) => p.kind === 'neighbour' || p.kind === 'bracket' || p.kind === 'closure');

// 3. The reference on the same decoded images and the same pairs.
const { cv } = await loadOpenCV();
const warm = cvDetect(cv, decoded.get(files[0])!);
cvFree(warm);
const stage = { detect: 0, match: 0, ransac: 0 };
const features = new Map<string, ReturnType<typeof cvDetect>>();
for (const f of files) {
  const t = performance.now();
  features.set(f, cvDetect(cv, decoded.get(f)!));
  stage.detect += performance.now() - t;
}
const s = decoded.get(files[0])!.width / W;
const toFull = (h: Float64Array): number[] => Array.from(normalise(Float64Array.of(h[0], h[1], h[2] / s, h[3], h[4], h[5] / s, h[6] * s, h[7] * s, h[8])));
const reference = new Map<string, number[] | null>();
for (const p of pairs) {
  let t = performance.now();
  const m = cvMatch(cv, features.get(p.a)!, features.get(p.b)!);
  stage.match += performance.now() - t;
  t = performance.now();
  const r = cvHomography(cv, m);
  stage.ransac += performance.now() - t;
  reference.set(`${p.a}>${p.b}`, r.h && r.inliers >= 20 ? toFull(r.h) : null);
}
for (const f of features.values()) cvFree(f);
const referenceSeconds = floor + (stage.detect + stage.match + stage.ransac) / 1000;

// Accuracy of both against the truth, on neighbour pairs (brackets: one pose, identity).
function accuracy(get: (a: string, b: string) => readonly number[] | null): { corner: number; overlap: number; missed: number } {
  let corner = 0, overlap = 0, n = 0, missed = 0;
  for (const p of pairs.filter((q) => q.kind === 'neighbour')) {
    const h = get(p.a, p.b);
    if (!h) { missed++; continue; }
    const t = truthOf(p.a, p.b);
    corner += meanCornerError(h, t.homography, W, H);
    overlap += Math.abs(overlapRegions(Float64Array.from(h), W, H, W, H).overlap - t.overlap);
    n++;
  }
  return { corner: corner / n, overlap: overlap / n, missed };
}
const ours = accuracy((a, b) => pairs.find((p) => p.a === a && p.b === b)!.homography);
const theirs = accuracy((a, b) => reference.get(`${a}>${b}`) ?? null);
const neighbours = pairs.filter((q) => q.kind === 'neighbour').length;

console.log(`whole-check benchmark, ${new Date().toISOString().slice(0, 10)}, node ${process.version}, ${files.length} frames of ${W}x${H}, analysis size ${decoded.get(files[0])!.width}x${decoded.get(files[0])!.height}`);
console.log(`  decode floor (one thread):          ${floor.toFixed(1)} s (${(1000 * floor / files.length).toFixed(0)} ms a frame)`);
console.log(`  decoding on every core:             ${allCores.toFixed(1)} s (${(allCores / floor).toFixed(2)} of the floor: the bound for any check here)`);
console.log(`  check (as the command runs it):     ${check.toFixed(1)} s, peak RSS ${peak.toFixed(0)} MiB, exit ${status}`);
console.log(`  first pair line (from the command's start): ${firstPairSeconds === null ? 'none printed' : `${firstPairSeconds.toFixed(1)} s (${((100 * firstPairSeconds) / check).toFixed(0)} % of the whole check)`}`);
console.log(`  reference (decode floor + OpenCV):  ${referenceSeconds.toFixed(1)} s: ORB ${(stage.detect / files.length).toFixed(0)} ms a frame, match ${(stage.match / pairs.length).toFixed(0)} ms and findHomography ${(stage.ransac / pairs.length).toFixed(1)} ms a pair (${pairs.length} pairs)`);
console.log(`  check / floor = ${(check / floor).toFixed(2)} (target 0.7 or less); check / reference = ${(check / referenceSeconds).toFixed(2)} (target under 1)`);
console.log(`  accuracy on ${neighbours} neighbour pairs, full-resolution px: ours mean corner error ${ours.corner.toFixed(2)} px, overlap error ${(100 * ours.overlap).toFixed(2)} points, unmatched ${ours.missed}; reference ${theirs.corner.toFixed(2)} px, ${(100 * theirs.overlap).toFixed(2)} points, unmatched ${theirs.missed}`);
