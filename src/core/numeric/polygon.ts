/** A polygon as a flat list of vertices [x0, y0, x1, y1, ...]. */
export type Polygon = number[];

export function polygonArea(p: Polygon): number {
  let s = 0;
  const n = p.length / 2;
  for (let i = 0; i < n; i++) {
    const j = (i + 1) % n;
    s += p[2 * i] * p[2 * j + 1] - p[2 * j] * p[2 * i + 1];
  }
  return Math.abs(s) / 2;
}

/** The frame rectangle of a w x h image, pixel centres at integers: [-0.5, w - 0.5] x [-0.5, h - 0.5]. */
export function frameRectangle(width: number, height: number): Polygon {
  return [-0.5, -0.5, width - 0.5, -0.5, width - 0.5, height - 0.5, -0.5, height - 0.5];
}

/**
 * Keeps the part of `subject` where a x + b y + c >= 0 (one Sutherland-Hodgman step against a
 * half-plane).
 */
export function clipHalfPlane(subject: Polygon, a: number, b: number, c: number): Polygon {
  const out: Polygon = [];
  const n = subject.length / 2;
  for (let i = 0; i < n; i++) {
    const j = (i + 1) % n;
    const px = subject[2 * i], py = subject[2 * i + 1];
    const qx = subject[2 * j], qy = subject[2 * j + 1];
    const dp = a * px + b * py + c;
    const dq = a * qx + b * qy + c;
    if (dp >= 0) out.push(px, py);
    if (dp >= 0 !== dq >= 0) {
      const t = dp / (dp - dq);
      out.push(px + t * (qx - px), py + t * (qy - py));
    }
  }
  return out;
}

/** Signed area, positive for counter-clockwise in a y-up frame (clockwise on screen with y down). */
function signedArea(p: Polygon): number {
  let s = 0;
  const n = p.length / 2;
  for (let i = 0; i < n; i++) {
    const j = (i + 1) % n;
    s += p[2 * i] * p[2 * j + 1] - p[2 * j] * p[2 * i + 1];
  }
  return s / 2;
}

/** Intersection of a polygon with a convex polygon (Sutherland-Hodgman, 1974). */
export function clipConvex(subject: Polygon, clip: Polygon): Polygon {
  let out = subject;
  const n = clip.length / 2;
  const orient = signedArea(clip) >= 0 ? 1 : -1;
  for (let i = 0; i < n && out.length >= 6; i++) {
    const j = (i + 1) % n;
    const x1 = clip[2 * i], y1 = clip[2 * i + 1], x2 = clip[2 * j], y2 = clip[2 * j + 1];
    // Inside is to the left of edge (x1,y1)->(x2,y2) for a positively oriented clip polygon.
    const a = -(y2 - y1) * orient, b = (x2 - x1) * orient;
    out = clipHalfPlane(out, a, b, -(a * x1 + b * y1));
  }
  return out.length >= 6 ? out : [];
}

/**
 * The image of a convex polygon under a homography, restricted to the part in front of the camera
 * (w > 0): clipping to that half-plane first keeps the image convex and finite.
 */
export function projectPolygon(h: ArrayLike<number>, p: Polygon): Polygon {
  const scale = Math.abs(h[8]) + Math.abs(h[6]) * 1e4 + Math.abs(h[7]) * 1e4;
  const front = clipHalfPlane(p, h[6], h[7], h[8] - 1e-9 * scale);
  const out: Polygon = [];
  for (let i = 0; i < front.length; i += 2) {
    const x = front[i], y = front[i + 1];
    const w = h[6] * x + h[7] * y + h[8];
    out.push((h[0] * x + h[1] * y + h[2]) / w, (h[3] * x + h[4] * y + h[5]) / w);
  }
  return out.length >= 6 ? out : [];
}

/** True when (x, y) lies inside the convex polygon p (either orientation). */
export function insideConvex(p: Polygon, x: number, y: number): boolean {
  const n = p.length / 2;
  if (n < 3) return false;
  let sign = 0;
  for (let i = 0; i < n; i++) {
    const j = (i + 1) % n;
    const c = (p[2 * j] - p[2 * i]) * (y - p[2 * i + 1]) - (p[2 * j + 1] - p[2 * i + 1]) * (x - p[2 * i]);
    if (c !== 0) {
      if (sign === 0) sign = c > 0 ? 1 : -1;
      else if (c > 0 !== sign > 0) return false;
    }
  }
  return true;
}
