/**
 * A frame as an ideal pinhole camera would have seen it: the lens's radial distortion (Brown's
 * model, lens.ts) taken out, on the same grid, at the same focal length, about the frame's centre.
 * Two such frames of a camera turning about its centre are related by one homography exactly, so
 * what still does not line up between them is parallax or movement, not the lens.
 */
import { sampleBilinear } from '../image/bilinear.js';
import type { FloatImage, GrayImage } from '../image/image.js';
import type { RadialDistortion } from './lens.js';
import { distortionFactor, undistortRadius } from './lens.js';

/**
 * `img` resampled (bilinear) onto its ideal grid: pixel (x, y) takes the value the lens put where
 * the ideal point lands once distorted. NaN where that lies off the frame (the corners of a
 * pincushion lens's ideal image) or where the model folds back.
 */
export function idealImage(img: GrayImage, focalPx: number, d: RadialDistortion): FloatImage {
  if (!(focalPx > 0)) throw new RangeError(`Expected a positive focal length for focalPx but received ${focalPx}`);
  const { width: w, height: h, data: s } = img;
  const cx = (w - 1) / 2, cy = (h - 1) / 2;
  const out = new Float32Array(w * h);
  // The model is monotonic up to where its derivative 1 + 3 k1 r^2 + 5 k2 r^4 first vanishes; past
  // that an ideal point has no single place on the frame.
  const rCorner = Math.hypot(cx, cy) / focalPx;
  let rFold = Infinity;
  for (let k = 1; k <= 64; k++) {
    const r2 = ((2 * rCorner * k) / 64) ** 2;
    if (!(1 + r2 * (3 * d.k1 + 5 * d.k2 * r2) > 0.05)) {
      rFold = (2 * rCorner * (k - 1)) / 64;
      break;
    }
  }
  for (let y = 0, o = 0; y < h; y++) {
    const yu = (y - cy) / focalPx;
    for (let x = 0; x < w; x++, o++) {
      const xu = (x - cx) / focalPx;
      const r2 = xu * xu + yu * yu;
      if (r2 > rFold * rFold) {
        out[o] = NaN;
        continue;
      }
      const g = distortionFactor(r2, d.k1, d.k2);
      const u = cx + focalPx * xu * g, v = cy + focalPx * yu * g;
      out[o] = sampleBilinear(s, w, h, u, v);
    }
  }
  return { width: w, height: h, data: out };
}

/**
 * Where the lens's point (x, y) of a width x height frame lies on the ideal grid, into out; false
 * where no ideal point maps there.
 */
export function idealPoint(x: number, y: number, width: number, height: number, focalPx: number, d: RadialDistortion, out: Float64Array): boolean {
  const cx = (width - 1) / 2, cy = (height - 1) / 2;
  const xd = (x - cx) / focalPx, yd = (y - cy) / focalPx;
  const rd = Math.hypot(xd, yd);
  const ru = undistortRadius(rd, d.k1, d.k2);
  if (!Number.isFinite(ru)) return false;
  const s = rd > 0 ? ru / rd : 1;
  out[0] = cx + focalPx * xd * s;
  out[1] = cy + focalPx * yd * s;
  return true;
}
