// The reference pipeline for the benchmark, built from OpenCV's JavaScript build: ORB features,
// brute-force Hamming matching with Lowe's ratio test, findHomography with RANSAC.
import type { GrayImage } from '../src/core/image/image.js';
import type { OpenCV } from '../tools/opencv.js';

export interface CvFeatures {
  keypoints: OpenCV;
  descriptors: OpenCV;
  count: number;
}

export function cvDetect(cv: OpenCV, img: GrayImage, nfeatures = 2000): CvFeatures {
  const mat = new cv.Mat(img.height, img.width, cv.CV_8UC1);
  mat.data.set(img.data);
  const orb = new cv.ORB(nfeatures);
  const keypoints = new cv.KeyPointVector();
  const descriptors = new cv.Mat();
  const none = new cv.Mat();
  orb.detectAndCompute(mat, none, keypoints, descriptors);
  mat.delete();
  none.delete();
  orb.delete();
  return { keypoints, descriptors, count: keypoints.size() };
}

export function cvFree(f: CvFeatures): void {
  f.keypoints.delete();
  f.descriptors.delete();
}

export function cvMatch(cv: OpenCV, a: CvFeatures, b: CvFeatures, ratio = 0.8): { ax: number[]; ay: number[]; bx: number[]; by: number[] } {
  const matcher = new cv.BFMatcher(cv.NORM_HAMMING, false);
  const knn = new cv.DMatchVectorVector();
  matcher.knnMatch(a.descriptors, b.descriptors, knn, 2);
  const out = { ax: [] as number[], ay: [] as number[], bx: [] as number[], by: [] as number[] };
  for (let i = 0; i < knn.size(); i++) {
    const pair = knn.get(i);
    if (pair.size() >= 2) {
      const m = pair.get(0), n = pair.get(1);
      if (m.distance < ratio * n.distance) {
        const ka = a.keypoints.get(m.queryIdx).pt, kb = b.keypoints.get(m.trainIdx).pt;
        out.ax.push(ka.x); out.ay.push(ka.y); out.bx.push(kb.x); out.by.push(kb.y);
      }
    }
    pair.delete();
  }
  knn.delete();
  matcher.delete();
  return out;
}

export function cvHomography(cv: OpenCV, m: { ax: number[]; ay: number[]; bx: number[]; by: number[] }, threshold = 3): { h: Float64Array | null; inliers: number } {
  const n = m.ax.length;
  if (n < 4) return { h: null, inliers: 0 };
  const src = cv.matFromArray(n, 1, cv.CV_32FC2, m.ax.flatMap((x, i) => [x, m.ay[i]]));
  const dst = cv.matFromArray(n, 1, cv.CV_32FC2, m.bx.flatMap((x, i) => [x, m.by[i]]));
  const mask = new cv.Mat();
  const hm = cv.findHomography(src, dst, cv.RANSAC, threshold, mask);
  const h = hm.rows === 3 ? Float64Array.from(hm.data64F) : null;
  let inliers = 0;
  for (let i = 0; i < mask.rows; i++) if (mask.data[i]) inliers++;
  [src, dst, mask, hm].forEach((x) => x.delete());
  return { h, inliers };
}
