// Frame making and homography comparison that the tests and the bench both use.
import sharp from 'sharp';
import type { FloatImage, GrayImage } from '../src/core/image/image.js';
import { linearToSrgb, srgbToLinear } from '../src/core/image/srgb.js';
import type { RandomSource } from '../src/core/numeric/random.js';

export interface Degradation {
  /** Exposure change in EV, applied in linear light (sRGB decode, scale, encode). */
  readonly ev?: number;
  /** Standard deviation of additive Gaussian noise in 8-bit levels. */
  readonly noise?: number;
  /** JPEG quality for a round trip through sharp's encoder, or none. */
  readonly jpegQuality?: number;
  /** Value for pixels with no source (NaN in the float image). */
  readonly fill?: number;
}

/** Turns a float rendering into an 8-bit frame the way a camera would: exposure, noise, clipping, JPEG. */
export async function toCameraFrame(img: FloatImage, rnd: RandomSource, d: Degradation = {}): Promise<GrayImage> {
  const gain = Math.pow(2, d.ev ?? 0);
  const out = new Uint8Array(img.width * img.height);
  for (let i = 0; i < out.length; i++) {
    let v = img.data[i];
    if (Number.isNaN(v)) v = d.fill ?? 128;
    if (gain !== 1) v = 255 * linearToSrgb(Math.min(1, srgbToLinear(v / 255) * gain));
    if (d.noise) v += rnd.normal() * d.noise;
    out[i] = v < 0 ? 0 : v > 255 ? 255 : Math.round(v);
  }
  const frame: GrayImage = { width: img.width, height: img.height, data: out };
  return d.jpegQuality ? jpegRoundTrip(frame, d.jpegQuality) : frame;
}

export async function jpegRoundTrip(img: GrayImage, quality: number): Promise<GrayImage> {
  const jpeg = await sharp(Buffer.from(img.data), { raw: { width: img.width, height: img.height, channels: 1 } }).jpeg({ quality }).toBuffer();
  const { data, info } = await sharp(jpeg).greyscale().raw().toBuffer({ resolveWithObject: true });
  return { width: info.width, height: info.height, data: new Uint8Array(data.buffer, data.byteOffset, data.length) };
}

/** Mean distance between where two homographies put the four corners of a w x h frame. */
export function meanCornerError(h1: ArrayLike<number>, h2: ArrayLike<number>, w: number, h: number): number {
  const corners = [[0, 0], [w - 1, 0], [w - 1, h - 1], [0, h - 1]];
  let s = 0;
  for (const [x, y] of corners) {
    const p = apply(h1, x, y);
    const q = apply(h2, x, y);
    s += Math.hypot(p[0] - q[0], p[1] - q[1]);
  }
  return s / 4;
}

function apply(h: ArrayLike<number>, x: number, y: number): [number, number] {
  const w = h[6] * x + h[7] * y + h[8];
  return [(h[0] * x + h[1] * y + h[2]) / w, (h[3] * x + h[4] * y + h[5]) / w];
}
