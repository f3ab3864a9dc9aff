// Both frames of a pair side by side in one SVG, scaled to a common height, with the inlier tie
// points marked on each (joined by a line when lines are on) and the overlap outlined on each.
// Everything is placed in one coordinate system derived from the frames' full-resolution sizes in
// the report, so the drawing stays registered with the images at any displayed size.
import { invert, project } from '../core/geometry/homography.js';
import { overlapRegions } from '../core/geometry/overlap.js';
import type { Polygon } from '../core/numeric/polygon.js';
import { clipConvex, frameRectangle, polygonArea, projectPolygon } from '../core/numeric/polygon.js';
import { svg } from './dom.js';

export interface CanvasFrame {
  readonly file: string;
  readonly width: number;
  readonly height: number;
}

export interface PairLayout {
  readonly width: number;
  readonly height: number;
  /** Scale from full-resolution px of a and of b to canvas units, and where b starts. */
  readonly sa: number;
  readonly sb: number;
  readonly bx: number;
}

export function pairLayout(a: CanvasFrame, b: CanvasFrame, height = 1000, gap = 48): PairLayout {
  const sa = height / Math.max(1, a.height);
  const sb = height / Math.max(1, b.height);
  const bx = a.width * sa + gap;
  return { width: bx + b.width * sb, height, sa, sb, bx };
}

export interface PairCanvasOptions {
  /** An SVG image element for a frame at detail size (reused between renders so it does not reload). */
  readonly image: (file: string) => SVGImageElement;
  /** xa, ya, xb, yb per tie point in full-resolution px, or null while not loaded. */
  readonly tiePoints: readonly number[] | null;
  readonly lines: boolean;
}

// Pixel centres are at integers: a w x h frame spans [-0.5, w - 0.5].
const at = (v: number, s: number, offset = 0): number => offset + (v + 0.5) * s;

function polygonPoints(p: readonly number[], s: number, offset: number): string {
  const out: string[] = [];
  for (let i = 0; i + 1 < p.length; i += 2) out.push(`${at(p[i], s, offset).toFixed(1)},${at(p[i + 1], s).toFixed(1)}`);
  return out.join(' ');
}

export function renderPairCanvas(a: CanvasFrame, b: CanvasFrame, homography: readonly number[] | null, opts: PairCanvasOptions): SVGSVGElement {
  const L = pairLayout(a, b);
  const place = (f: CanvasFrame, x: number, s: number, side: 'a' | 'b'): SVGGElement => {
    const img = opts.image(f.file);
    img.setAttribute('x', String(x));
    img.setAttribute('y', '0');
    img.setAttribute('width', String(f.width * s));
    img.setAttribute('height', String(f.height * s));
    img.setAttribute('preserveAspectRatio', 'none');
    return svg('g', { 'data-side': side }, img, svg('rect', { class: 'frame-edge', x, y: 0, width: f.width * s, height: f.height * s }));
  };
  const root = svg(
    'svg',
    { class: 'pair-canvas', viewBox: `0 0 ${L.width.toFixed(1)} ${L.height}`, role: 'img', 'aria-label': `${a.file} and ${b.file} side by side with tie points and overlap` },
    place(a, 0, L.sa, 'a'),
    place(b, L.bx, L.sb, 'b'),
  );
  if (homography) {
    const r = overlapRegions(homography, a.width, a.height, b.width, b.height);
    if (r.inA.length >= 6) root.append(svg('polygon', { class: 'overlap-outline', 'data-overlap': 'a', points: polygonPoints(r.inA, L.sa, 0) }));
    if (r.inB.length >= 6) root.append(svg('polygon', { class: 'overlap-outline', 'data-overlap': 'b', points: polygonPoints(r.inB, L.sb, L.bx) }));
  }
  const t = opts.tiePoints;
  if (t) {
    const n = Math.floor(t.length / 4);
    const ties = svg('g', { class: `ties${opts.lines ? ' with-lines' : ''}`, 'data-ties': n });
    for (let k = 0; k < n; k++) {
      const xa = at(t[4 * k], L.sa), ya = at(t[4 * k + 1], L.sa);
      const xb = at(t[4 * k + 2], L.sb, L.bx), yb = at(t[4 * k + 3], L.sb);
      ties.append(svg(
        'g',
        { class: 'tie', 'data-tie': k },
        opts.lines ? svg('line', { class: 'tie-line', x1: xa.toFixed(1), y1: ya.toFixed(1), x2: xb.toFixed(1), y2: yb.toFixed(1) }) : null,
        svg('circle', { class: 'tie-dot', 'data-side': 'a', cx: xa.toFixed(1), cy: ya.toFixed(1), r: 6 }),
        svg('circle', { class: 'tie-dot', 'data-side': 'b', cx: xb.toFixed(1), cy: yb.toFixed(1), r: 6 }),
      ));
    }
    root.append(ties);
  }
  return root;
}

/**
 * Both frames placed in one view: a's picture, and b's carried onto a through the inverse of the
 * pair's homography, with the part of a that b also sees outlined. A small overlap is then a thin
 * sliver where the frames meet, as on the sphere around the camera, instead of two frames that
 * merely stand side by side. With the focal length known, the view is the sphere around the
 * camera seen from a's axis (yaw and pitch times the focal length, so a looks nearly as it is and
 * b is not stretched without bound as it turns away); otherwise it is a's own image plane. Either
 * way pictures are drawn as meshes of small triangles, each an affine piece of the exact map.
 */
export interface PlacedView {
  /** What the view shows, in view units (a's full-resolution px at its centre): x, y, width, height. */
  readonly box: readonly [number, number, number, number];
  /** a's frame, b's frame and the overlap as drawn (edges sampled, since they bend on the sphere). */
  readonly outlineA: Polygon;
  readonly outlineB: Polygon;
  readonly overlap: Polygon;
  /** The overlap in a's own pixels (a inside b's frame carried onto a) and its share of a: the report's overlap where a is the frame sharing the smaller part. */
  readonly overlapInA: Polygon;
  readonly overlapShare: number;
  /** Each frame's mesh: each triangle's corners in the frame's px and the SVG matrix (a b c d e f) that puts it in the view. */
  readonly piecesA: readonly Piece[];
  readonly piecesB: readonly Piece[];
  /** 'sphere' with a focal length, 'plane' (a's image plane) without. */
  readonly surface: 'sphere' | 'plane';
}

export interface Piece {
  readonly source: readonly number[];
  readonly matrix: readonly number[];
}

/** Mesh cells along each side of a frame: the affine pieces then stay within a pixel or two of the exact map for the turns between neighbours. */
const meshCells = 8;
/** Samples along each frame edge for the outlines. */
const edgeSamples = 24;

/** The matrix (a b c d e f) of the affine map taking triangle s to triangle t (x' = a x + c y + e, y' = b x + d y + f). */
export function affineOf(s: readonly number[], t: readonly number[]): number[] | null {
  const u1x = s[2] - s[0], u1y = s[3] - s[1], u2x = s[4] - s[0], u2y = s[5] - s[1];
  const v1x = t[2] - t[0], v1y = t[3] - t[1], v2x = t[4] - t[0], v2y = t[5] - t[1];
  const det = u1x * u2y - u2x * u1y;
  if (!(Math.abs(det) > 1e-12)) return null;
  const a = (v1x * u2y - v2x * u1y) / det, c = (v2x * u1x - v1x * u2x) / det;
  const b = (v1y * u2y - v2y * u1y) / det, d = (v2y * u1x - v1y * u2x) / det;
  return [a, b, c, d, t[0] - a * s[0] - c * s[1], t[1] - b * s[0] - d * s[1]];
}

/** Points along a closed polygon's edges, `n` per edge. */
function sampled(p: readonly number[], n: number): number[] {
  const out: number[] = [];
  const m = p.length / 2;
  for (let i = 0; i < m; i++) {
    const j = (i + 1) % m;
    for (let k = 0; k < n; k++) out.push(p[2 * i] + ((p[2 * j] - p[2 * i]) * k) / n, p[2 * i + 1] + ((p[2 * j + 1] - p[2 * i + 1]) * k) / n);
  }
  return out;
}

/**
 * The placed view of a pair. `focalPx` is the focal length in full-resolution px (the sequence's,
 * or EXIF's), or null.
 */
export function placedView(a: CanvasFrame, b: CanvasFrame, homography: readonly number[], focalPx: number | null = null): PlacedView | null {
  const inv = invert(homography);
  if (!inv) return null;
  const cx = (a.width - 1) / 2, cy = (a.height - 1) / 2;
  const f = focalPx !== null && Number.isFinite(focalPx) && focalPx > 0 ? focalPx : null;
  // A point of a's image plane, homogeneous (x, y, w), into the view. On the sphere: the ray
  // K^-1 (x, y, w) (its sign kept: with the homography oriented positive, it points where the
  // pixel looks), as yaw and pitch, scaled by f and centred on a's centre.
  const view = (x: number, y: number, w: number): [number, number] | null => {
    if (f === null) return w > 1e-9 ? [x / w, y / w] : null;
    const dx = x - cx * w, dy = y - cy * w, dz = f * w;
    return [cx + f * Math.atan2(dx, dz), cy + f * Math.atan2(dy, Math.hypot(dx, dz))];
  };
  const fromA = (x: number, y: number): [number, number] | null => view(x, y, 1);
  const fromB = (x: number, y: number): [number, number] | null => {
    // project divides by w; the view wants the homogeneous point, w's sign included.
    const [u, v, w] = project(inv, x, y);
    return view(u * w, v * w, w);
  };
  const mapped = (p: readonly number[], to: (x: number, y: number) => [number, number] | null): number[] => {
    const out: number[] = [];
    for (let k = 0; k + 1 < p.length; k += 2) {
      const q = to(p[k], p[k + 1]);
      if (q) out.push(q[0], q[1]);
    }
    return out;
  };
  const mesh = (fr: CanvasFrame, to: (x: number, y: number) => [number, number] | null): Piece[] => {
    const pieces: Piece[] = [];
    const gx = (i: number): number => -0.5 + (i * fr.width) / meshCells;
    const gy = (j: number): number => -0.5 + (j * fr.height) / meshCells;
    for (let j = 0; j < meshCells; j++) {
      for (let i = 0; i < meshCells; i++) {
        for (const tri of [[gx(i), gy(j), gx(i + 1), gy(j), gx(i + 1), gy(j + 1)], [gx(i), gy(j), gx(i + 1), gy(j + 1), gx(i), gy(j + 1)]]) {
          const t = mapped(tri, to);
          const matrix = t.length === 6 ? affineOf(tri, t) : null;
          if (matrix) pieces.push({ source: tri, matrix });
        }
      }
    }
    return pieces;
  };
  const frameA = frameRectangle(a.width, a.height);
  const overlapInA = clipConvex(projectPolygon(inv, frameRectangle(b.width, b.height)), frameA);
  const outlineA = mapped(sampled(frameA, edgeSamples), fromA);
  // On a's plane, b's outline is the part in front of a's camera (projectPolygon clips it there).
  const outlineB = f === null ? projectPolygon(inv, frameRectangle(b.width, b.height)) : mapped(sampled(frameRectangle(b.width, b.height), edgeSamples), fromB);
  const overlap = overlapInA.length >= 6 ? mapped(sampled(overlapInA, edgeSamples), fromA) : [];
  // The view holds both outlines, but on a's plane no more than two frames' worth beyond a on each
  // side (there b's outline runs off far when b looks almost at right angles to a).
  let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
  for (const p of [outlineA, outlineB]) {
    for (let k = 0; k + 1 < p.length; k += 2) {
      x0 = Math.min(x0, Math.max(-2 * a.width, p[k]));
      x1 = Math.max(x1, Math.min(3 * a.width, p[k]));
      y0 = Math.min(y0, Math.max(-2 * a.height, p[k + 1]));
      y1 = Math.max(y1, Math.min(3 * a.height, p[k + 1]));
    }
  }
  const m = 0.02 * Math.max(x1 - x0, y1 - y0);
  return {
    box: [x0 - m, y0 - m, x1 - x0 + 2 * m, y1 - y0 + 2 * m],
    outlineA,
    outlineB,
    overlap,
    overlapInA,
    overlapShare: polygonArea(overlapInA) / (a.width * a.height),
    piecesA: f === null ? [{ source: [-0.5, -0.5, a.width - 0.5, -0.5, -0.5, a.height - 0.5], matrix: [1, 0, 0, 1, 0, 0] }] : mesh(a, fromA),
    piecesB: mesh(b, fromB),
    surface: f === null ? 'plane' : 'sphere',
  };
}

const pointsOf = (p: readonly number[]): string => {
  const out: string[] = [];
  for (let i = 0; i + 1 < p.length; i += 2) out.push(`${p[i].toFixed(1)},${p[i + 1].toFixed(1)}`);
  return out.join(' ');
};

/** A triangle grown by `pad` px away from its centre, so that neighbouring pieces meet without a hairline between them. */
function grown(t: readonly number[], pad: number): number[] {
  const cx = (t[0] + t[2] + t[4]) / 3, cy = (t[1] + t[3] + t[5]) / 3;
  const out: number[] = [];
  for (let k = 0; k < 6; k += 2) {
    const dx = t[k] - cx, dy = t[k + 1] - cy, n = Math.hypot(dx, dy) || 1;
    out.push(t[k] + (pad * dx) / n, t[k + 1] + (pad * dy) / n);
  }
  return out;
}

export interface PlacedCanvasOptions {
  /** The address of each frame's picture at detail size. */
  readonly href: (file: string) => string | null;
  /** Focal length in full-resolution px, or null (then the view is a's image plane). */
  readonly focalPx: number | null;
}

/** The placed view as SVG, or null when the homography cannot be inverted. */
export function renderPlacedCanvas(a: CanvasFrame, b: CanvasFrame, homography: readonly number[], opts: PlacedCanvasOptions): SVGSVGElement | null {
  const v = placedView(a, b, homography, opts.focalPx);
  if (!v) return null;
  const [bx, by, bw, bh] = v.box;
  const hatch = Math.max(4, bw / 110);
  const defs = svg(
    'defs',
    {},
    svg('pattern', { id: 'placed-hatch', width: hatch, height: hatch, patternUnits: 'userSpaceOnUse', patternTransform: 'rotate(45)' }, svg('line', { class: 'placed-hatch-line', x1: 0, y1: 0, x2: 0, y2: hatch, 'stroke-width': (hatch / 3).toFixed(1) })),
  );
  const picture = (fr: CanvasFrame, side: 'a' | 'b', pieces: readonly Piece[]): SVGGElement => {
    const g = svg('g', { class: `placed-${side}`, 'data-side': side, 'data-pieces': pieces.length });
    const href = opts.href(fr.file);
    if (!href) return g;
    const id = `placed-${side}-picture`;
    defs.append(svg('image', { id, href, x: -0.5, y: -0.5, width: fr.width, height: fr.height, preserveAspectRatio: 'none' }));
    const pad = 0.004 * Math.max(fr.width, fr.height);
    pieces.forEach((piece, k) => {
      const clip = pieces.length > 1 ? `placed-${side}-piece-${k}` : null;
      if (clip) defs.append(svg('clipPath', { id: clip }, svg('polygon', { points: pointsOf(grown(piece.source, pad)) })));
      g.append(svg('use', { href: `#${id}`, 'clip-path': clip ? `url(#${clip})` : null, transform: `matrix(${piece.matrix.map((x) => +x.toPrecision(8)).join(' ')})` }));
    });
    return g;
  };
  const pictureB = picture(b, 'b', v.piecesB);
  const pictureA = picture(a, 'a', v.piecesA);
  return svg(
    'svg',
    {
      class: 'placed-canvas',
      viewBox: `${bx.toFixed(1)} ${by.toFixed(1)} ${bw.toFixed(1)} ${bh.toFixed(1)}`,
      role: 'img',
      'data-surface': v.surface,
      'aria-label': `${b.file} placed on ${a.file} through the pair's homography; the outlined part is the overlap, ${Math.round(100 * v.overlapShare)} % of ${a.file}`,
    },
    defs,
    svg('rect', { class: 'placed-ground', x: bx, y: by, width: bw, height: bh }),
    pictureB,
    pictureA,
    svg('polygon', { class: 'placed-edge-b', 'data-outline': 'b', points: pointsOf(v.outlineB) }),
    svg('polygon', { class: 'placed-edge-a', 'data-outline': 'a', points: pointsOf(v.outlineA) }),
    v.overlap.length >= 6 ? svg('polygon', { class: 'placed-overlap', 'data-placed-overlap': '', points: pointsOf(v.overlap), fill: 'url(#placed-hatch)' }) : null,
  );
}
