// A full turn with one narrow gap, checked whole. The scene is an upright box whose four walls are
// real photographs (leuvenA.jpg, graf1.png, leuvenB.jpg, graf3.png; test/fixtures/external/
// SOURCES.md), seen from its centre by a camera that only turns, so every pair's homography is
// exact by construction: K R_b R_a^T K^-1 (Hartley & Zisserman, sec. 8.4.2). Frames get seeded
// sensor noise, vignetting and JPEG q80, and EXIF as a camera writes it (35 mm equivalent focal
// length rounded to the millimetre). One sequence is rendered; it is checked as shot (the narrow
// pair must be registered) and with the narrow overlap fogged on one frame (no match is possible;
// its overlap must be reported as predicted from the turn).
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import Ajv2020 from 'ajv/dist/2020.js';
import sharp from 'sharp';
import { beforeAll, describe, expect, it } from 'vitest';
import type { FloatImage, GrayImage } from '../../src/core/image/image.js';
import { overlapRegions } from '../../src/core/geometry/overlap.js';
import { createRandom } from '../../src/core/numeric/random.js';
import type { Report } from '../../src/core/sequence/report.js';
import { defaultBudget } from '../../src/core/sequence/report.js';
import { judge } from '../../src/core/sequence/verdicts.js';
import { runCheck } from '../../src/main/check.js';
import { projectRoot, tempDir } from '../helpers/cli.js';
import { externalFixture, loadGray, toCameraFrame } from '../helpers/images.js';
import type { ViewCamera } from '../helpers/rotating-views.js';
import { exactHomography, renderPrismView, rotationOf, vignette, yawForOverlap } from '../helpers/rotating-views.js';

const cam: ViewCamera = { width: 1200, height: 800, focal: 600 / Math.tan((27.5 * Math.PI) / 180) };
const frames = 10;
/** The narrow pair: frames 4 and 5 (file names are 1-based). */
const gapAt = 4;
const name = (k: number): string => `TURN_${String(k + 1).padStart(3, '0')}.JPG`;

/** Covers the left `share` of a view with flat fog, fading into the picture over the next 5 % (before noise and JPEG). */
function fogLeft(img: FloatImage, share: number): FloatImage {
  const out = new Float32Array(img.data);
  const full = share * img.width, fade = 0.05 * img.width;
  for (let y = 0; y < img.height; y++)
    for (let x = 0; x < img.width; x++) {
      const t = Math.min(1, Math.max(0, (x - full) / fade));
      out[y * img.width + x] = (1 - t) * 200 + t * img.data[y * img.width + x];
    }
  return { ...img, data: out };
}

async function writeFrame(folder: string, k: number, frame: GrayImage): Promise<void> {
  const time = `2026:06:01 10:00:${String(2 * k).padStart(2, '0')}`;
  const jpeg = await sharp(Buffer.from(frame.data), { raw: { width: frame.width, height: frame.height, channels: 1 } })
    .withExif({
      IFD0: { Make: 'Test', Model: 'Rotating view', DateTime: time },
      IFD2: { ExposureTime: '1/125', FNumber: '8/1', ISOSpeedRatings: '100', FocalLength: '23/1', FocalLengthIn35mmFilm: String(Math.round((36 * cam.focal) / cam.width)), DateTimeOriginal: time },
    })
    .withMetadata({ orientation: 1 })
    .jpeg({ quality: 80 })
    .toBuffer();
  writeFileSync(join(folder, name(k)), jpeg);
}

describe('a full turn with one 8 % gap (10 frames of 1200 x 800, box of photographs)', () => {
  let shot: Report;
  let fogged: Report;
  /** The narrow pair's exact overlap. */
  let exact = 0;

  beforeAll(async () => {
    const walls = await Promise.all(['leuvenA.jpg', 'graf1.png', 'leuvenB.jpg', 'graf3.png'].map((f) => loadGray(externalFixture(f))));
    const gap = yawForOverlap(cam, 0.08);
    const step = (360 - gap) / (frames - 1);
    const rnd = createRandom(20261203);
    // A levelled head is never quite level: a little pitch and roll per frame.
    const rotations = Array.from({ length: frames }, (_, k) => rotationOf(k * step + (k > gapAt ? gap - step : 0), 1.5 * (rnd.next() - 0.5), rnd.next() - 0.5));
    exact = overlapRegions(exactHomography(cam, rotations[gapAt], rotations[gapAt + 1]), cam.width, cam.height, cam.width, cam.height).overlap;
    const root = tempDir();
    const asShot = join(root, 'as-shot'), withFog = join(root, 'fogged');
    mkdirSync(asShot);
    mkdirSync(withFog);
    for (let k = 0; k < frames; k++) {
      const view = vignette(renderPrismView(walls, cam, rotations[k]), 0.35);
      const frameRnd = createRandom(1000 + k);
      await writeFrame(asShot, k, await toCameraFrame(view, frameRnd, { noise: 4 }));
      // The same frame with the part it shares with its left neighbour lost in fog.
      const foggy = k === gapAt + 1 ? fogLeft(view, 0.2) : view;
      await writeFrame(withFog, k, await toCameraFrame(foggy, createRandom(1000 + k), { noise: 4 }));
    }
    shot = judge((await runCheck(asShot, { threads: 0 })).analysis, defaultBudget);
    fogged = judge((await runCheck(withFog, { threads: 0 })).analysis, defaultBudget);
  }, 240_000);

  const narrow = (r: Report): Report['pairs'][number] => r.pairs.find((p) => p.a === name(gapAt) && p.b === name(gapAt + 1))!;

  it('registers the narrow pair and reports its overlap as measured', () => {
    expect(exact).toBeGreaterThan(0.07);
    expect(exact).toBeLessThan(0.09);
    const p = narrow(shot);
    expect(p.homography, `${p.reasons.join(', ')}: ${p.advice.join('; ')}`).not.toBeNull();
    expect(Math.abs(p.overlap! - exact)).toBeLessThan(0.01);
    // Under the reshoot threshold of 20 % overlap (common practice: 30-50 %): the one right flag.
    expect(p.reasons).toContain('low-overlap');
    expect(p.reasons).not.toContain('no-match');
    expect(p.predictedOverlap ?? null).toBeNull();
    // The rest of the turn is registered and closes.
    for (const q of shot.pairs.filter((x) => x.kind !== 'bracket')) expect(q.homography, `${q.a} ${q.b}`).not.toBeNull();
    expect(shot.geometry?.closure?.closes).toBe(true);
  });

  it('reports the overlap predicted from the turn when the narrow pair cannot match', () => {
    const p = narrow(fogged);
    expect(p.homography).toBeNull();
    expect(p.predictedOverlap).not.toBeNull();
    // The prediction chains the other nine pairs round the turn (EXIF focal length rounded to the millimetre).
    expect(Math.abs(p.predictedOverlap! - exact)).toBeLessThan(0.02);
    expect(p.reasons).toEqual(['no-match']);
    expect(p.advice[0]).toContain(`overlap about ${Math.round(100 * p.predictedOverlap!)} %, predicted from the turn between them`);
    // One cause, one flag: no other pair fails because of it.
    for (const q of fogged.pairs.filter((x) => x !== p && x.kind !== 'bracket')) expect(q.reasons, `${q.a} ${q.b}`).not.toContain('no-match');
    expect(fogged.pairs.some((q) => q.reasons.includes('no-closure'))).toBe(false);
    // The new field is in the published schema (schema/report.schema.json, JSON Schema 2020-12 via ajv).
    const schema = JSON.parse(readFileSync(join(projectRoot, 'schema/report.schema.json'), 'utf8'));
    const validate = new Ajv2020.default({ allErrors: true, strict: false }).compile(schema);
    expect(validate(JSON.parse(JSON.stringify(fogged))), JSON.stringify(validate.errors)).toBe(true);
  });
});
