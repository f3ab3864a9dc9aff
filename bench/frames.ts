// The benchmark's frame pair: leuvenA (test/fixtures/external/SOURCES.md) enlarged to about
// 1500x1000 and seen a second time through a known homography (a small roll and shift), each with
// sensor-like noise and a JPEG round trip.
import sharp from 'sharp';
import { invert, multiply } from '../src/core/geometry/homography.js';
import type { GrayImage } from '../src/core/image/image.js';
import { createRandom } from '../src/core/numeric/random.js';
import { warpBilinear } from '../src/core/image/warp.js';
import { toCameraFrame } from '../tools/images.js';
import { externalFixture } from '../tools/paths.js';

export async function benchPair(): Promise<{ a: GrayImage; b: GrayImage; truth: Float64Array; label: string }> {
  const { data, info } = await sharp(externalFixture('leuvenA.jpg')).resize(2100, 1574, { kernel: 'lanczos3' }).greyscale().raw().toBuffer({ resolveWithObject: true });
  const src: GrayImage = { width: info.width, height: info.height, data: new Uint8Array(data.buffer, data.byteOffset, data.length) };
  const W = 1500, H = 1000;
  const ta = Float64Array.of(1, 0, 150, 0, 1, 250, 0, 0, 1);
  const ang = (4 * Math.PI) / 180;
  const tb = Float64Array.of(Math.cos(ang), -Math.sin(ang), 450, Math.sin(ang), Math.cos(ang), 260, 0, 0, 1);
  const rnd = createRandom(7);
  const a = await toCameraFrame(warpBilinear(src, ta, W, H), rnd, { noise: 1.5, jpegQuality: 90 });
  const b = await toCameraFrame(warpBilinear(src, tb, W, H), rnd, { noise: 1.5, jpegQuality: 90, ev: 0.3 });
  return { a, b, truth: multiply(invert(tb)!, ta), label: 'leuvenA enlarged 2.8x, second view rolled 4 deg and shifted 300 px, +0.3 EV' };
}
