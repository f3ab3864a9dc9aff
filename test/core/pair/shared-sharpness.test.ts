// Sharpness of two frames on the content both see. Real photographs: leuvenA/leuvenB and graf1/graf3
// with the published homography H1to3p (test/fixtures/external/SOURCES.md). Blur is applied by
// OpenCV's JavaScript build (GaussianBlur, and line kernels through blur and filter2D): an outside
// implementation, so the measure is checked against blur it did not make itself.
import { readFileSync } from 'node:fs';
import { beforeAll, describe, expect, it } from 'vitest';
import { defaultFeatureParams, detectAndDescribe } from '../../../src/core/features/features.js';
import type { GrayImage } from '../../../src/core/image/image.js';
import { estimatePairGeometry } from '../../../src/core/pair/pair-geometry.js';
import { createRandom } from '../../../src/core/numeric/random.js';
import { createScratchPool } from '../../../src/core/image/scratch.js';
import type { SharedSharpness } from '../../../src/core/pair/shared-sharpness.js';
import { sharedSharpness, sharpnessDirections } from '../../../src/core/pair/shared-sharpness.js';
import { sharpness } from '../../../src/core/pair/sharpness.js';
import { externalFixture, jpegRoundTrip, loadGray } from '../../helpers/images.js';
import type { OpenCV } from '../../helpers/opencv.js';
import { loadOpenCV } from '../../helpers/opencv.js';

let cv: OpenCV;
const photos = new Map<string, GrayImage>();
beforeAll(async () => {
  cv = (await loadOpenCV()).cv;
  for (const name of ['leuvenA.jpg', 'leuvenB.jpg', 'graf1.png', 'graf3.png']) photos.set(name, await loadGray(externalFixture(name)));
});

function crop(img: GrayImage, x0: number, y0: number, w: number, h: number): GrayImage {
  const data = new Uint8Array(w * h);
  for (let y = 0; y < h; y++) data.set(img.data.subarray((y + y0) * img.width + x0, (y + y0) * img.width + x0 + w), y * w);
  return { width: w, height: h, data };
}

function filtered(img: GrayImage, apply: (src: OpenCV, dst: OpenCV) => void): GrayImage {
  const src = cv.matFromArray(img.height, img.width, cv.CV_8UC1, Array.from(img.data));
  const dst = new cv.Mat();
  apply(src, dst);
  const out = { width: dst.cols as number, height: dst.rows as number, data: Uint8Array.from(dst.data as Uint8Array) };
  src.delete();
  dst.delete();
  return out;
}

const gaussian = (sigma: number) => (src: OpenCV, dst: OpenCV): void => cv.GaussianBlur(src, dst, new cv.Size(0, 0), sigma, sigma, cv.BORDER_REFLECT);
const line = (w: number, h: number) => (src: OpenCV, dst: OpenCV): void => cv.blur(src, dst, new cv.Size(w, h), new cv.Point(-1, -1), cv.BORDER_REFLECT);
/** A 9-pixel line kernel along the falling diagonal (top left to bottom right). */
const diagonal = (src: OpenCV, dst: OpenCV): void => {
  const k = cv.matFromArray(9, 9, cv.CV_32F, Array.from({ length: 81 }, (_, i) => (i % 10 === 0 ? 1 / 9 : 0)));
  cv.filter2D(src, dst, -1, k, new cv.Point(-1, -1), 0, cv.BORDER_REFLECT);
  k.delete();
};

const shift = (dx: number, dy: number): number[] => [1, 0, dx, 0, 1, dy, 0, 0, 1];
const weakest = (s: SharedSharpness): string => sharpnessDirections[s.byDirection.indexOf(Math.min(...s.byDirection))];
const spread = (s: SharedSharpness): number => {
  const v = [...s.byDirection].sort((p, q) => p - q);
  return v[1] / v[0];
};

/** Two frames of one photograph, the second 40 % of the width further right: same pixels where they overlap. */
function pairOf(photo: GrayImage, degrade?: (img: GrayImage) => GrayImage, d = 4 * Math.floor(photo.width * 0.35 / 4)): { a: GrayImage; b: GrayImage; h: number[]; d: number } {
  const w = Math.floor(photo.width * 0.65);
  const source = degrade ? degrade(photo) : photo;
  return { a: crop(photo, 0, 0, w, photo.height), b: crop(source, d, 0, w, photo.height), h: shift(-d, 0), d };
}

describe('sharpness on shared content', () => {
  it('is exactly 1 in every direction where the frames hold the same pixels, and within 5 % when their 4 x 4 cells fall differently', () => {
    for (const name of ['leuvenA.jpg', 'graf1.png']) {
      const { a, b, h } = pairOf(photos.get(name)!);
      const s = sharedSharpness(a, b, h)!;
      expect(s.blocks).toBeGreaterThan(50);
      for (const v of s.byDirection) expect(v).toBeCloseTo(1, 10);
      expect(s.ratio).toBeCloseTo(1, 10);
      for (const d of [261, 262, 263]) {
        const p = pairOf(photos.get(name)!, undefined, d);
        for (const v of sharedSharpness(p.a, p.b, p.h)!.byDirection) expect(Math.abs(v - 1), `${name}, shifted ${d} px`).toBeLessThan(0.05);
      }
    }
  });

  it('falls as OpenCV blurs b more, evenly in every direction', () => {
    for (const name of ['leuvenA.jpg', 'graf1.png']) {
      const photo = photos.get(name)!;
      let last = 1;
      for (const sigma of [0.7, 1.2, 2]) {
        const { a, b, h } = pairOf(photo, (img) => filtered(img, gaussian(sigma)));
        const s = sharedSharpness(a, b, h)!;
        expect(s.ratio, `${name} sigma ${sigma}`).toBeLessThan(0.85 * last);
        last = s.ratio;
        // A Gaussian takes every direction alike: the verdict names no direction (blur-verdict.ts
        // calls it motion blur from a spread of 1.25).
        expect(spread(s), `${name} sigma ${sigma}`).toBeLessThan(1.25);
      }
      // Markedly less sharp at the default threshold (0.65) from sigma 1.2 on.
      expect(last).toBeLessThan(0.65);
    }
  });

  it('tells the direction of motion blur (OpenCV line kernels)', () => {
    for (const name of ['leuvenA.jpg', 'graf1.png']) {
      const photo = photos.get(name)!;
      const cases: [string, (src: OpenCV, dst: OpenCV) => void][] = [['horizontal', line(7, 1)], ['vertical', line(1, 7)], ['horizontal', line(9, 1)], ['falling-diagonal', diagonal]];
      for (const [direction, kernel] of cases) {
        const { a, b, h } = pairOf(photo, (img) => filtered(img, kernel));
        const s = sharedSharpness(a, b, h)!;
        expect(weakest(s), `${name}, ${direction}`).toBe(direction);
        expect(Math.min(...s.byDirection), `${name}, ${direction}`).toBeLessThan(0.65);
        expect(spread(s), `${name}, ${direction}`).toBeGreaterThan(1.25);
      }
    }
  });

  it('reads a frame half cloudy sky and half texture as sharp as its neighbour, though the whole-frame measure calls it soft', async () => {
    const photo = photos.get('leuvenA.jpg')!;
    // Beyond the overlap, b sees a cloudy sky: soft structure only (seeded noise under a Gaussian
    // of 5 px), then both frames go through JPEG q85.
    const { a, b, h, d } = pairOf(photo);
    const rnd = createRandom(11);
    const noise = cv.matFromArray(b.height, b.width, cv.CV_32F, Array.from({ length: b.width * b.height }, () => rnd.normal()));
    const clouds = new cv.Mat();
    cv.GaussianBlur(noise, clouds, new cv.Size(0, 0), 5, 5, cv.BORDER_REFLECT);
    const c = clouds.data32F as Float32Array;
    let amp = 0;
    for (const v of c) amp = Math.max(amp, Math.abs(v));
    const sky = Uint8Array.from(b.data);
    for (let y = 0; y < b.height; y++) for (let x = a.width - d; x < b.width; x++) sky[y * b.width + x] = Math.round(180 + (60 * c[y * b.width + x]) / amp);
    noise.delete();
    clouds.delete();
    const ja = await jpegRoundTrip(a, 85), jb = await jpegRoundTrip({ ...b, data: sky }, 85);
    // Over the whole frame, b reads markedly softer than a: the false alarm of the old rule.
    expect(sharpness(jb) / sharpness(ja)).toBeLessThan(0.65);
    const s = sharedSharpness(ja, jb, h)!;
    expect(Math.abs(s.ratio - 1)).toBeLessThan(0.1);
    expect(Math.min(...s.byDirection)).toBeGreaterThan(0.85);
  });

  it('leaves out sky both frames see, and clipped pixels', async () => {
    const photo = photos.get('leuvenA.jpg')!;
    const rnd = createRandom(7);
    // The upper 40 % of the scene is a hazy sky with a little sensor noise; the frames' JPEG grids differ.
    const scene = Uint8Array.from(photo.data);
    for (let y = 0; y < 0.4 * photo.height; y++) for (let x = 0; x < photo.width; x++) scene[y * photo.width + x] = Math.round(190 + (20 * x) / photo.width + rnd.normal());
    const d = 251;
    const a = await jpegRoundTrip(crop({ ...photo, data: scene }, 0, 0, 500, photo.height), 85);
    // b is 1.5 EV brighter (sRGB decode, scale, encode): its highlights clip at 255.
    const bright = crop({ ...photo, data: scene }, d, 0, 500, photo.height);
    const gain = 2 ** 1.5;
    const lin = (v: number): number => (v <= 10.31 ? v / 255 / 12.92 : ((v / 255 + 0.055) / 1.055) ** 2.4);
    const enc = (l: number): number => 255 * (l <= 0.0031308 ? 12.92 * l : 1.055 * l ** (1 / 2.4) - 0.055);
    const b = await jpegRoundTrip({ ...bright, data: bright.data.map((v) => Math.min(255, Math.round(enc(Math.min(1, lin(v) * gain))))) }, 85);
    let clipped = 0;
    for (const v of b.data) if (v >= 253) clipped++;
    expect(clipped / b.data.length).toBeGreaterThan(0.05);
    const s = sharedSharpness(a, b, shift(-d, 0))!;
    expect(s).not.toBeNull();
    expect(Math.abs(s.ratio - 1)).toBeLessThan(0.15);
    expect(Math.min(...s.byDirection)).toBeGreaterThan(0.8);
  });

  it('has no answer where the shared content is flat', () => {
    const rnd = createRandom(3);
    const flat = { width: 400, height: 300, data: Uint8Array.from({ length: 400 * 300 }, (_, i) => Math.round(150 + ((i % 400) / 40) + rnd.normal())) };
    expect(sharedSharpness(flat, flat, shift(-100, 0))).toBeNull();
  });

  it('does not favour either frame for where its pixels fall: two samplings half a pixel apart read alike', () => {
    // Both frames are area averages of the photograph at half size, one offset by one source pixel
    // (half a frame pixel): as two exposures land on a sensor, no interpolation between them.
    const photo = photos.get('leuvenA.jpg')!;
    const half = (ox: number, oy: number): GrayImage => filtered(crop(photo, ox, oy, 740, 540), (src, dst) => cv.resize(src, dst, new cv.Size(370, 270), 0, 0, cv.INTER_AREA));
    for (const [ox, oy] of [[1, 1], [1, 0], [0, 1]]) {
      const s = sharedSharpness(half(0, 0), half(ox, oy), shift(-ox / 2, -oy / 2))!;
      for (const v of s.byDirection) expect(Math.abs(v - 1), `offset ${ox}, ${oy}`).toBeLessThan(0.05);
    }
  });

  it('reads two real photographs of one camera as equally sharp through their homography', () => {
    // graf1 -> graf3: the published homography (Mikolajczyk et al. 2005), 40 degrees of viewpoint,
    // so the local scale varies across the overlap.
    const xml = readFileSync(externalFixture('H1to3p.xml'), 'utf8');
    const truth = xml.match(/<data>([\s\S]*?)<\/data>/)![1].trim().split(/\s+/).map(Number);
    const graf = sharedSharpness(photos.get('graf1.png')!, photos.get('graf3.png')!, truth)!;
    expect(Math.abs(graf.ratio - 1)).toBeLessThan(0.15);
    for (const v of graf.byDirection) expect(Math.abs(v - 1)).toBeLessThan(0.25);
    // leuvenA -> leuvenB: the same phone a step apart, homography from the engine.
    const scratch = createScratchPool();
    const la = photos.get('leuvenA.jpg')!, lb = photos.get('leuvenB.jpg')!;
    const g = estimatePairGeometry(detectAndDescribe(la, defaultFeatureParams, scratch), detectAndDescribe(lb, defaultFeatureParams, scratch));
    const leuven = sharedSharpness(la, lb, g.homography!)!;
    expect(Math.abs(leuven.ratio - 1)).toBeLessThan(0.1);
    // Blurring graf3 is seen through the same homography.
    const soft = sharedSharpness(photos.get('graf1.png')!, filtered(photos.get('graf3.png')!, gaussian(1.5)), truth)!;
    expect(soft.ratio).toBeLessThan(0.65 * graf.ratio);
  });

  it("turns b's directions with the pair's roll: a frame turned a quarter turn reads exactly alike, and its own horizontal smear shows as a's vertical", () => {
    const photo = photos.get('graf1.png')!;
    const a = crop(photo, 0, 0, 800, 640);
    const turned = (img: GrayImage): GrayImage => filtered(img, (src, dst) => cv.rotate(src, dst, cv.ROTATE_90_CLOCKWISE));
    // Turned clockwise, a's pixel (x, y) lands at (639 - y, x).
    const h = [0, -1, 639, 1, 0, 0, 0, 0, 1];
    const same = sharedSharpness(a, turned(a), h)!;
    for (const v of same.byDirection) expect(v).toBeCloseTo(1, 10);
    const smeared = sharedSharpness(a, filtered(turned(a), line(9, 1)), h)!;
    expect(weakest(smeared)).toBe('vertical');
  });

  it('rejects bad arguments', () => {
    const img = photos.get('graf1.png')!;
    expect(() => sharedSharpness(img, img, [1, 0, 0])).toThrow(/Expected 9 finite numbers for h but received/);
    expect(() => sharedSharpness(img, img, shift(0, 0), { blockCells: 1 })).toThrow(/Expected an integer of at least 2 for blockCells but received 1/);
  });
});
