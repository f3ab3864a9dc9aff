import type { FloatImage } from '../image/image.js';
import type { ScratchPool } from '../image/scratch.js';

export interface HarrisParams {
  /** Harris & Stephens' k in R = det(M) - k trace(M)^2; 0.04..0.06 in the paper's practice. */
  readonly k: number;
  /** Half-size of the square window that accumulates the structure tensor (2: a 5x5 window). */
  readonly windowRadius: number;
}

export const defaultHarrisParams: HarrisParams = { k: 0.04, windowRadius: 2 };

/**
 * Harris corner response (Harris & Stephens, "A combined corner and edge detector", 1988) on a float
 * image: 3x3 Sobel derivatives, the structure tensor M summed over a (2r+1)^2 box window (the window
 * OpenCV's cornerHarris uses too, as `blockSize`), R = det(M) - k trace(M)^2. Pixels closer than
 * r + 1 to the border get 0.
 *
 * The window sums are running sums, horizontally along each row and vertically down each column,
 * so the cost does not depend on the window size; horizontally summed rows are kept in a ring of
 * 2r + 1 rows, small enough to stay in cache. The subtracted value is always the very float that was
 * added, so the running sums do not drift.
 */
export function harrisResponse(image: FloatImage, out: Float32Array, pool: ScratchPool, params: HarrisParams = defaultHarrisParams): void {
  const { width: w, height: h, data: src } = image;
  const r = params.windowRadius;
  const span = 2 * r + 1;
  const ringXX = pool.float64('harrisRingXX', span * w).fill(0);
  const ringYY = pool.float64('harrisRingYY', span * w).fill(0);
  const ringXY = pool.float64('harrisRingXY', span * w).fill(0);
  const colXX = pool.float64('harrisColXX', w).fill(0);
  const colYY = pool.float64('harrisColYY', w).fill(0);
  const colXY = pool.float64('harrisColXY', w).fill(0);
  const pxx = pool.float32('harrisRowXX', w).fill(0);
  const pyy = pool.float32('harrisRowYY', w).fill(0);
  const pxy = pool.float32('harrisRowXY', w).fill(0);
  out.fill(0, 0, w * h);
  if (w < 2 * r + 3 || h < 2 * r + 3) return;
  const k = params.k;
  const x0 = r + 1, x1 = w - r - 1;

  for (let y = 1; y < h - 1; y++) {
    const row = y * w;
    const up = row - w;
    const down = row + w;
    // Sobel as separable parts: per column the vertical smoothing (1 2 1) and difference (-1 0 1);
    // then gx is the difference of the smoothed columns either side and gy the smoothed
    // differences, three loads a pixel instead of eight.
    let sPrev = src[up] + 2 * src[row] + src[down], dPrev = src[down] - src[up];
    let sCur = src[up + 1] + 2 * src[row + 1] + src[down + 1], dCur = src[down + 1] - src[up + 1];
    for (let x = 1; x < w - 1; x++) {
      const sNext = src[up + x + 1] + 2 * src[row + x + 1] + src[down + x + 1];
      const dNext = src[down + x + 1] - src[up + x + 1];
      const gx = sNext - sPrev;
      const gy = dPrev + 2 * dCur + dNext;
      pxx[x] = gx * gx;
      pyy[x] = gy * gy;
      pxy[x] = gx * gy;
      sPrev = sCur;
      sCur = sNext;
      dPrev = dCur;
      dCur = dNext;
    }
    let hxx = 0, hyy = 0, hxy = 0;
    for (let x = x0 - r; x < x0 + r; x++) {
      hxx += pxx[x];
      hyy += pyy[x];
      hxy += pxy[x];
    }
    const ro = (y % span) * w;
    // Output row y - r is complete once row y has been added to the column sums.
    const yc = y - r;
    const emit = yc >= r + 1;
    const orow = yc * w;
    for (let x = x0; x < x1; x++) {
      hxx += pxx[x + r];
      hyy += pyy[x + r];
      hxy += pxy[x + r];
      const o = ro + x;
      const sxx = colXX[x] + hxx - ringXX[o];
      const syy = colYY[x] + hyy - ringYY[o];
      const sxy = colXY[x] + hxy - ringXY[o];
      colXX[x] = sxx;
      colYY[x] = syy;
      colXY[x] = sxy;
      ringXX[o] = hxx;
      ringYY[o] = hyy;
      ringXY[o] = hxy;
      hxx -= pxx[x - r];
      hyy -= pyy[x - r];
      hxy -= pxy[x - r];
      if (emit) {
        const tr = sxx + syy;
        out[orow + x] = sxx * syy - sxy * sxy - k * tr * tr;
      }
    }
  }
}
