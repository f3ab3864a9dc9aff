// The frame sharpness measure on a real photograph (leuvenA, test/fixtures/external/SOURCES.md),
// blurred by OpenCV's GaussianBlur and a horizontal box filter (an outside implementation of blur).
import { beforeAll, describe, expect, it } from 'vitest';
import type { GrayImage } from '../../../src/core/image/image.js';
import { sharpness } from '../../../src/core/pair/sharpness.js';
import { externalFixture, loadGray } from '../../helpers/images.js';
import type { OpenCV } from '../../helpers/opencv.js';
import { loadOpenCV } from '../../helpers/opencv.js';

let photo: GrayImage;
let cv: OpenCV;
beforeAll(async () => {
  photo = await loadGray(externalFixture('leuvenA.jpg'));
  cv = (await loadOpenCV()).cv;
});

function filtered(img: GrayImage, apply: (src: OpenCV, dst: OpenCV) => void): GrayImage {
  const src = cv.matFromArray(img.height, img.width, cv.CV_8UC1, Array.from(img.data));
  const dst = new cv.Mat();
  apply(src, dst);
  const out = { width: img.width, height: img.height, data: Uint8Array.from(dst.data as Uint8Array) };
  src.delete();
  dst.delete();
  return out;
}

const gaussian = (sigma: number) => (src: OpenCV, dst: OpenCV): void => cv.GaussianBlur(src, dst, new cv.Size(0, 0), sigma, sigma, cv.BORDER_REFLECT);

describe('sharpness', () => {
  it('falls steadily as the frame is blurred more', () => {
    const values = [0, 0.7, 1.2, 2, 3].map((sigma) => (sigma === 0 ? sharpness(photo) : sharpness(filtered(photo, gaussian(sigma)))));
    console.log(`sharpness at Gaussian sigma 0, 0.7, 1.2, 2, 3 px: ${values.map((v) => v.toFixed(3)).join(', ')}`);
    for (let k = 1; k < values.length; k++) expect(values[k]).toBeLessThan(0.9 * values[k - 1]);
  });

  it('does not depend on the brightness of the frame', () => {
    const darker = { ...photo, data: photo.data.map((v) => Math.round(v * 0.6)) };
    expect(Math.abs(sharpness(darker) / sharpness(photo) - 1)).toBeLessThan(0.05);
  });

  it('catches blur in one direction only (a moving camera)', () => {
    const streaked = filtered(photo, (src, dst) => cv.blur(src, dst, new cv.Size(7, 1), new cv.Point(-1, -1), cv.BORDER_REFLECT));
    expect(sharpness(streaked)).toBeLessThan(0.7 * sharpness(photo));
  });

  it('leaves clipped pixels out: a blown-out sky does not change it', () => {
    const w = photo.width, h = photo.height;
    const blown = Uint8Array.from(photo.data);
    for (let y = 0; y < h / 4; y++) blown.fill(255, y * w, (y + 1) * w);
    const top = { ...photo, data: blown };
    // The same frame with its top quarter simply missing from the statistics: within a few per cent.
    const rest = { width: w, height: h - Math.ceil(h / 4) - 4, data: photo.data.subarray((Math.ceil(h / 4) + 4) * w) };
    expect(Math.abs(sharpness(top) / sharpness(rest) - 1)).toBeLessThan(0.1);
  });
});
