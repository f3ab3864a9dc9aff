// Frames with the lens taken out (core/geometry/ideal-image.ts), against OpenCV's JavaScript build: its
// cv.undistort with the same camera matrix and distortion coefficients (k1, k2, 0, 0, 0; OpenCV's
// radial model is Brown's, x_d = x_u (1 + k1 r^2 + k2 r^4) on normalised coordinates) resamples
// a real photograph (photos/facade.jpg, see test/fixtures/external/SOURCES.md) onto the same ideal
// grid, bilinearly.
import { describe, expect, it } from 'vitest';
import sharp from 'sharp';
import { distortionFactor } from '../../../src/core/geometry/lens.js';
import { idealImage, idealPoint } from '../../../src/core/geometry/ideal-image.js';
import { externalFixture } from '../../helpers/images.js';
import { loadOpenCV } from '../../helpers/opencv.js';

const W = 720, H = 480;

async function facade(): Promise<Uint8Array> {
  const { data } = await sharp(externalFixture('photos/facade.jpg')).resize(W, H, { fit: 'fill' }).greyscale().raw().toBuffer({ resolveWithObject: true });
  return new Uint8Array(data.buffer, data.byteOffset, data.length);
}

describe('a frame with the lens taken out', () => {
  for (const d of [{ k1: -0.15, k2: 0 }, { k1: -0.08, k2: 0.01 }, { k1: 0.05, k2: 0 }]) {
    it(`matches OpenCV's undistort at k1 = ${d.k1}, k2 = ${d.k2}`, async () => {
      const { cv } = await loadOpenCV();
      const data = await facade();
      const f = (28 / 36) * W;
      const ours = idealImage({ width: W, height: H, data }, f, d);
      const src = cv.matFromArray(H, W, cv.CV_8UC1, Array.from(data));
      const k = cv.matFromArray(3, 3, cv.CV_64F, [f, 0, (W - 1) / 2, 0, f, (H - 1) / 2, 0, 0, 1]);
      const dist = cv.matFromArray(1, 5, cv.CV_64F, [d.k1, d.k2, 0, 0, 0]);
      const out = new cv.Mat();
      cv.undistort(src, out, k, dist, k);
      const theirs = Uint8Array.from(out.data);
      [src, k, dist, out].forEach((m) => m.delete());
      // Over the pixels we give a value (OpenCV fills the rest with 0), one edge pixel left out:
      // OpenCV rounds its bilinear weights to 1/32 px and its result to whole levels, so the two
      // differ a little on average and by a few levels on the sharpest edges (measured at 720 x 480:
      // 0.24 levels on average, 4.7 at worst).
      let sum = 0, count = 0, worst = 0, empty = 0;
      for (let y = 1; y < H - 1; y++)
        for (let x = 1; x < W - 1; x++) {
          const v = ours.data[y * W + x];
          if (v !== v) {
            empty++;
            continue;
          }
          const e = Math.abs(v - theirs[y * W + x]);
          sum += e;
          worst = Math.max(worst, e);
          count++;
        }
      console.log(`k1 ${d.k1}, k2 ${d.k2}: mean ${(sum / count).toFixed(3)} levels, worst ${worst.toFixed(1)}, ${empty} px without a value`);
      expect(sum / count).toBeLessThan(0.5);
      expect(worst).toBeLessThan(10);
      // Barrel distortion pulls the frame in: every ideal pixel has a value. Pincushion pushes its
      // corners out of the frame: those have none.
      if (d.k1 < 0) expect(empty).toBe(0);
      else expect(empty).toBeGreaterThan(0);
    });
  }

  it('puts a point back where the lens took it from', () => {
    const d = { k1: -0.12, k2: 0.02 }, f = 900, out = new Float64Array(2);
    for (const [xu, yu] of [[0, 0], [0.3, -0.2], [-0.55, 0.35], [0.6, 0.4]]) {
      const g = distortionFactor(xu * xu + yu * yu, d.k1, d.k2);
      expect(idealPoint((W - 1) / 2 + f * xu * g, (H - 1) / 2 + f * yu * g, W, H, f, d, out)).toBe(true);
      expect(out[0]).toBeCloseTo((W - 1) / 2 + f * xu, 6);
      expect(out[1]).toBeCloseTo((H - 1) / 2 + f * yu, 6);
    }
  });
});
