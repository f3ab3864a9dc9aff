// Reading RAW frames through their embedded previews, beside reading the same picture as a JPEG
// file (RAW issue: speed of preview extraction in the benchmark). Builds, once, DNG-shaped files
// (tools/tiff-writer.ts) around the 24 frames of the short sweep, each with 30 MB of stand-in
// sensor data before the preview as a RAW file has, and CR3 and RAF files
// (tools/raw-containers.ts) with their 30 MB after it, as those formats store it; decodes
// all four sets to the analysis size on one thread, side by side in one run.
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import sharp from 'sharp';
import { defaultMaxSide } from '../src/main/check.js';
import { decodeForAnalysis } from '../src/main/decode.js';
import { readRawPreview } from '../src/main/raw-file.js';
import { cr3Around, rafAround } from '../tools/raw-containers.js';
import { writeTiff } from '../tools/tiff-writer.js';
import { benchCache, shortSweep } from './sequences.js';
import { framesOf } from './whole-check.js';

const folder = await shortSweep();
const files = framesOf(folder);
const rawDir = join(benchCache, 'sweep-24x24mp-dng');
if (!existsSync(rawDir)) {
  mkdirSync(rawDir, { recursive: true });
  const sensor = new Uint8Array(30 * 1024 * 1024);
  for (const f of files) {
    const jpeg = new Uint8Array(readFileSync(join(folder, f)));
    const dng = writeTiff(true, [
      { name: 'ifd0', entries: [{ tag: 254, type: 4, values: [1] }, { tag: 256, type: 3, values: [16] }, { tag: 257, type: 3, values: [8] }, { tag: 330, type: 4, values: ['raw', 'preview'] }] },
      { name: 'raw', entries: [{ tag: 254, type: 4, values: [0] }, { tag: 256, type: 4, values: [6000] }, { tag: 257, type: 4, values: [4000] }, { tag: 259, type: 3, values: [7] }, { tag: 273, type: 4, values: ['sensor'] }, { tag: 279, type: 4, values: [sensor.length] }] },
      { name: 'preview', entries: [{ tag: 254, type: 4, values: [1] }, { tag: 259, type: 3, values: [7] }, { tag: 273, type: 4, values: ['jpeg'] }, { tag: 279, type: 4, values: [jpeg.length] }] },
    ], { sensor, jpeg });
    writeFileSync(join(rawDir, f.replace(/\.JPG$/, '.DNG')), dng);
  }
}

const containerDir = join(benchCache, 'sweep-24x24mp-cr3-raf');
if (!existsSync(containerDir)) {
  mkdirSync(containerDir, { recursive: true });
  const sensorBytes = 30 * 1024 * 1024;
  const tiffOf = (entries: Parameters<typeof writeTiff>[1][number]['entries']): Uint8Array => writeTiff(true, [{ name: 'ifd', entries }], {});
  for (const f of files) {
    const jpeg = new Uint8Array(readFileSync(join(folder, f)));
    const cr3 = cr3Around({ full: jpeg, fullSize: [6000, 4000], prvw: null, thmb: null, ifd0: tiffOf([{ tag: 274, type: 3, values: [1] }]), exifIfd: tiffOf([{ tag: 33434, type: 5, values: [1, 250] }]), sensorBytes });
    writeFileSync(join(containerDir, f.replace(/\.JPG$/, '.CR3')), cr3);
    writeFileSync(join(containerDir, f.replace(/\.JPG$/, '.RAF')), rafAround(jpeg, { cropped: [6000, 4000], sensorBytes }));
  }
}

sharp.concurrency(1);
const time = async (fn: () => Promise<unknown>): Promise<number> => {
  const t = performance.now();
  await fn();
  return performance.now() - t;
};
// Warm both paths once.
await decodeForAnalysis(join(folder, files[0]), defaultMaxSide);
await decodeForAnalysis(join(rawDir, files[0].replace(/\.JPG$/, '.DNG')), defaultMaxSide);
let jpegMs = 0, rawMs = 0, extractMs = 0;
const container = { cr3: { ms: 0, extract: 0 }, raf: { ms: 0, extract: 0 } };
for (const f of files) {
  const dng = join(rawDir, f.replace(/\.JPG$/, '.DNG'));
  jpegMs += await time(() => decodeForAnalysis(join(folder, f), defaultMaxSide));
  rawMs += await time(() => decodeForAnalysis(dng, defaultMaxSide));
  extractMs += await time(() => readRawPreview(dng));
  for (const kind of ['cr3', 'raf'] as const) {
    const path = join(containerDir, f.replace(/\.JPG$/, `.${kind.toUpperCase()}`));
    container[kind].ms += await time(() => decodeForAnalysis(path, defaultMaxSide));
    container[kind].extract += await time(() => readRawPreview(path));
  }
}
const n = files.length;
console.log(`RAW preview benchmark, ${new Date().toISOString().slice(0, 10)}, node ${process.version}, ${n} frames of 6000x4000 (preview ${(readFileSync(join(folder, files[0])).length / 1e6).toFixed(1)} MB inside a ${(30 + readFileSync(join(folder, files[0])).length / 2 ** 20).toFixed(0)} MB DNG)`);
console.log(`  JPEG file decoded to ${defaultMaxSide} px:         ${(jpegMs / n).toFixed(0)} ms a frame`);
console.log(`  DNG, preview found and decoded:     ${(rawMs / n).toFixed(0)} ms a frame (of which reading and finding the preview ${(extractMs / n).toFixed(0)} ms)`);
for (const kind of ['cr3', 'raf'] as const) console.log(`  ${kind.toUpperCase()}, preview found and decoded:     ${(container[kind].ms / n).toFixed(0)} ms a frame (of which reading and finding the preview ${(container[kind].extract / n).toFixed(0)} ms)`);
console.log(`  DNG / JPEG = ${(rawMs / jpegMs).toFixed(2)}, CR3 / JPEG = ${(container.cr3.ms / jpegMs).toFixed(2)}, RAF / JPEG = ${(container.raf.ms / jpegMs).toFixed(2)}`);
